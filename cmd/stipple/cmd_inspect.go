package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/read"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// Planning rates for inspect's estimates, measured on the 2-core reference
// machine (BENCHMARKS.md); a real run prints its own.
const (
	planDotsPerSecond  = 2.0e6
	planTilesPerSecond = 400.0
	planBytesPerTile   = 12000.0
)

func cmdInspect(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("inspect", flag.ContinueOnError)
	fs.SetOutput(stderr)
	mapPath := fs.String("map", "", "map file: also show dots, tiles, disk and time it would take, and the join report")
	layerName := fs.String("layer", "", "GeoPackage layer")
	id := fs.String("id", "", "id field")
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usageError{"inspect takes one file"}
	}
	var m *mapfile.Map
	if *mapPath != "" {
		if m, err = mapfile.Read(*mapPath); err != nil {
			return err
		}
		if *id == "" {
			*id = m.Input.ID
		}
		if *layerName == "" {
			*layerName = m.Input.Layer
		}
	}
	res, err := read.File(pos[0], read.Options{IDField: *id, Layer: *layerName})
	if err != nil {
		return err
	}
	describe(stdout, res)
	if m == nil {
		return nil
	}
	m.Input.File, _ = filepath.Abs(pos[0])
	in, err := mapjob.Load(m, nil)
	if err != nil {
		return err
	}
	plan(stdout, m, in)
	return nil
}

func describe(w io.Writer, res *read.Result) {
	l := res.Layer
	crs := res.CRS.String()
	if res.CRS.Name == "" {
		crs = "none declared (lon/lat assumed)"
	}
	var polys, multis, empty, rings, holes, verts int
	b := orb.Bound{Min: orb.Point{math.Inf(1), math.Inf(1)}, Max: orb.Point{math.Inf(-1), math.Inf(-1)}}
	for _, f := range l.Features {
		switch len(f.Geometry) {
		case 0:
			empty++
		case 1:
			polys++
		default:
			multis++
		}
		for _, p := range f.Geometry {
			rings += len(p)
			holes += len(p) - 1
			for _, r := range p {
				verts += len(r)
			}
		}
		if len(f.Geometry) > 0 {
			b = b.Union(f.Geometry.Bound())
		}
	}
	fmt.Fprintf(w, "file:        %s (%s)\n", l.Path, res.Format)
	if l.Name != "" {
		fmt.Fprintf(w, "layer:       %s\n", l.Name)
	}
	fmt.Fprintf(w, "CRS:         %s\n", crs)
	fmt.Fprintf(w, "features:    %d (Polygon %d, MultiPolygon %d, empty %d)\n", len(l.Features), polys, multis, empty)
	fmt.Fprintf(w, "rings:       %d (%d holes), %d vertices\n", rings, holes, verts)
	if len(l.Features) > empty {
		fmt.Fprintf(w, "bounds:      %.6f, %.6f, %.6f, %.6f (west, south, east, north)\n", b.Min[0], b.Min[1], b.Max[0], b.Max[1])
	}
	fmt.Fprintln(w, "fields:")
	for _, name := range l.Fields {
		st := fieldStats(l, name)
		fmt.Fprintf(w, "  %-20s %-8s %7d non-empty", name, st.kind, st.nonEmpty)
		if st.numeric > 0 {
			fmt.Fprintf(w, "  sum %s", render.FormatCount(st.sum))
		}
		if st.example != "" {
			fmt.Fprintf(w, "  e.g. %q", st.example)
		}
		fmt.Fprintln(w)
	}
	if n := len(res.Notes); n > 0 {
		fmt.Fprintf(w, "geometry notes: %d\n", n)
		for _, note := range res.Notes {
			fmt.Fprintf(w, "  %s\n", note)
		}
	} else {
		fmt.Fprintln(w, "geometry notes: none")
	}
}

type stats struct {
	kind              string
	nonEmpty, numeric int
	sum               float64
	example           string
}

// fieldStats describes one attribute: its kind (integer, real, text, bool,
// mixed), how many features have a value, and the sum of its numbers.
func fieldStats(l *geo.Layer, name string) stats {
	var s stats
	kinds := map[string]bool{}
	for _, f := range l.Features {
		v, ok := f.Props[name]
		if !ok || v == nil {
			continue
		}
		if str, isStr := v.(string); isStr && strings.TrimSpace(str) == "" {
			continue
		}
		s.nonEmpty++
		switch x := v.(type) {
		case int64, int:
			kinds["integer"] = true
		case float64:
			kinds["real"] = true
		case bool:
			kinds["bool"] = true
		case string:
			kinds["text"] = true
			if s.example == "" {
				s.example = x
			}
		}
		if n, err := geo.Number(v); err == nil {
			if _, isStr := v.(string); !isStr {
				s.numeric++
				s.sum += n
			}
		}
	}
	switch len(kinds) {
	case 0:
		s.kind = "empty"
	case 1:
		for k := range kinds {
			s.kind = k
		}
	default:
		if kinds["integer"] && kinds["real"] && len(kinds) == 2 {
			s.kind = "real"
		} else {
			s.kind = "mixed"
		}
	}
	return s
}

func plan(w io.Writer, m *mapfile.Map, in *mapjob.Input) {
	if in.Join != nil {
		fmt.Fprintln(w, strings.TrimRight(in.Join.String(), "\n"))
	}
	fmt.Fprintf(w, "map %s: %s\n", m.Path, render.DotNote(m.PeoplePerDot))
	var dots float64
	b := orb.Bound{Min: orb.Point{math.Inf(1), math.Inf(1)}, Max: orb.Point{math.Inf(-1), math.Inf(-1)}}
	var bounds []orb.Bound
	for k, c := range m.Categories {
		var people float64
		for i := range in.Counts {
			people += in.Counts[i][k]
		}
		dots += people / m.PeoplePerDot
		fmt.Fprintf(w, "  %-24s %14s people  %12.0f dots\n", c.Label, render.FormatCount(people), people/m.PeoplePerDot)
	}
	for i, f := range in.Layer.Features {
		has := slices.ContainsFunc(in.Counts[i], func(v float64) bool { return v > 0 })
		if has && len(f.Geometry) > 0 {
			fb := f.Geometry.Bound()
			b = b.Union(fb)
			bounds = append(bounds, fb)
		}
	}
	var tilesTotal float64
	fmt.Fprintln(w, "  tiles per zoom (upper bound: tiles touched by areas with people):")
	for z := m.Tiles.MinZoom; z <= m.Tiles.MaxZoom; z++ {
		n := tilesTouched(bounds, z)
		tilesTotal += float64(n)
		fmt.Fprintf(w, "    z%-2d %10d\n", z, n)
	}
	secs := dots/planDotsPerSecond + tilesTotal/planTilesPerSecond
	fmt.Fprintf(w, "  estimate: %.0f dots, at most %.0f tiles, about %.0f MB, about %.0f s on 2 cores\n",
		dots, tilesTotal, tilesTotal*planBytesPerTile/1e6, math.Max(1, secs))
}

// tilesTouched counts distinct tiles at zoom z that the bounds touch; for
// very many tiles it sums per-bound counts instead (an upper bound).
func tilesTouched(bounds []orb.Bound, z int) int {
	seen := map[[2]uint32]bool{}
	total := 0
	for _, b := range bounds {
		nw := tiles.At(b.Min[0], b.Max[1], tiles.Zoom(z))
		se := tiles.At(b.Max[0], b.Min[1], tiles.Zoom(z))
		n := int(se.X-nw.X+1) * int(se.Y-nw.Y+1)
		if len(seen) > 2_000_000 || n > 100_000 {
			total += n
			continue
		}
		for y := nw.Y; y <= se.Y; y++ {
			for x := nw.X; x <= se.X; x++ {
				seen[[2]uint32{x, y}] = true
			}
		}
	}
	return total + len(seen)
}

func cmdInit(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("init", flag.ContinueOnError)
	fs.SetOutput(stderr)
	out := fs.String("o", "", "write the map file here (default: print it)")
	layerName := fs.String("layer", "", "GeoPackage layer")
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usageError{"init takes one file"}
	}
	res, err := read.File(pos[0], read.Options{Layer: *layerName})
	if err != nil {
		return err
	}
	text := starterMap(res, pos[0], *layerName)
	if *out == "" {
		fmt.Fprint(stdout, text)
		return nil
	}
	if _, err := os.Stat(*out); err == nil {
		return fmt.Errorf("init: %s exists; not overwriting it", *out)
	}
	if err := os.WriteFile(*out, []byte(text), 0o644); err != nil {
		return fmt.Errorf("init: %w", err)
	}
	fmt.Fprintf(stdout, "wrote %s: uncomment the categories you want, then: stipple render %s\n", *out, *out)
	return nil
}

// starterMap writes a map file for a polygon file: its numeric fields as
// commented-out categories with the Okabe & Ito (2008) colour-blind-safe
// colours, and a guess at the id field (the first text field whose values
// are all distinct).
func starterMap(res *read.Result, path, layer string) string {
	l := res.Layer
	var numeric []string
	idField := ""
	for _, name := range l.Fields {
		st := fieldStats(l, name)
		if st.kind == "integer" || st.kind == "real" {
			numeric = append(numeric, name)
		}
		if idField == "" && st.kind == "text" && st.nonEmpty == len(l.Features) && distinct(l, name) {
			idField = name
		}
	}
	var b strings.Builder
	title := strings.TrimSuffix(filepath.Base(path), filepath.Ext(path))
	fmt.Fprintf(&b, "# Map file written by stipple init for %s.\n# Edit it, then: stipple render THIS_FILE\n", filepath.Base(path))
	fmt.Fprintf(&b, "title = %q\ncredit = \"Source: (name the table, its publisher and year)\"\n", title)
	b.WriteString("people_per_dot = 10\nseed = 1\nout = \"" + title + "-map\"\n\n[input]\n")
	fmt.Fprintf(&b, "file = %q\n", path)
	if idField != "" {
		fmt.Fprintf(&b, "id = %q\n", idField)
	} else {
		b.WriteString("# id = \"FIELD\"   # a field that is unique per area; none found, so the feature order is used\n")
	}
	if layer != "" {
		fmt.Fprintf(&b, "layer = %q\n", layer)
	}
	b.WriteString("\n[tiles]\nmin_zoom = 4\nmax_zoom = 12\nsize = 256\n")
	b.WriteString("\n# Categories: uncomment the ones to map. A category may sum several fields.\n")
	b.WriteString("# Colours: Okabe & Ito (2008), \"Color Universal Design\", colour-blind safe.\n")
	if len(numeric) == 0 {
		b.WriteString("# No numeric fields were found: join a CSV table with [input.table].\n")
	}
	for i, f := range numeric {
		fmt.Fprintf(&b, "\n# [[category]]\n# key = %q\n# label = %q\n# color = %q\n# fields = [%q]\n",
			f, f, starterPalette[i%len(starterPalette)], f)
	}
	return b.String()
}

func distinct(l *geo.Layer, name string) bool {
	seen := make(map[string]bool, len(l.Features))
	for _, f := range l.Features {
		s := geo.Text(f.Props[name])
		if seen[s] {
			return false
		}
		seen[s] = true
	}
	return true
}

// starterPalette is the default palette (render.DefaultPalette): every
// colour at 3:1 or more against the default map ground.
var starterPalette = render.DefaultPalette
