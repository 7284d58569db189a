package main

import (
	"context"
	"encoding/csv"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/read"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"github.com/stipple-maps/stipple/tiles/shard"
)

var inspectDoc = register(cmdDoc{Name: "inspect", Order: 30, Usage: "inspect FILE [--map MAP.toml] [flags]",
	Short: "describe a polygon file; with --map, what a render would make",
	About: "Reads a polygon file (GeoJSON, Shapefile or GeoPackage) and lists its features, geometry types, " +
		"coordinate system, bounds, fields with their types, non-empty counts and sums, and every geometry " +
		"repair. With --map it also prints the join report, the people and dots per category (the same dots " +
		"a render with that map file draws), the tiles per zoom, and estimates of disk use and run time.",
	Examples: []string{
		"stipple inspect tracts.shp",
		"stipple inspect tracts.shp --map map.toml",
	}})

func cmdInspect(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("inspect", flag.ContinueOnError)
	fs.SetOutput(stderr)
	mapPath := fs.String("map", "", "map file: also show the join report, the dots per category, the tiles, and the disk and time a render would take (default: none)")
	layerName := fs.String("layer", "", "GeoPackage layer (default: the map file's input.layer, else the only polygon layer)")
	rates := fs.String("rates", "", "with --map: "+ratesUsage)
	id := fs.String("id", "", "field that identifies each area (default: the map file's input.id, else the feature's own id)")
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
	r, err := readRates(*rates)
	if err != nil {
		return err
	}
	return plan(stdout, m, in, r)
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

func plan(w io.Writer, m *mapfile.Map, in *mapjob.Input, rates *shard.Rates) error {
	if in.Join != nil {
		fmt.Fprintln(w, strings.TrimRight(in.Join.String(), "\n"))
	}
	fmt.Fprintf(w, "map %s: %s\n", m.Path, render.DotNote(m.PeoplePerDot))
	var dots float64
	// The dots are the render's own allocation (mapjob.Load's in.Dots, by
	// the map's rounding rule and seed), so the numbers agree with render.
	for k, c := range m.Categories {
		var people float64
		var n int
		for i := range in.Counts {
			people += in.Counts[i][k]
			n += in.Dots[i][k]
		}
		dots += float64(n)
		fmt.Fprintf(w, "  %-24s %14s people  %12d dots (expected %.1f)\n", c.Label, render.FormatCount(people), n, people/m.PeoplePerDot)
	}
	fmt.Fprintf(w, "  dots: exactly the dots render allocates with this map file (rounding = %q, seed %d); render draws them all\n", m.Rounding, m.Seed)
	fmt.Fprintln(w, "  except those in areas it cannot draw (counted there as not drawn)")
	est, err := mapjob.Estimate(in, m, m.Tiles.HiDPI, rates)
	source := shard.MeasuredRates.Source
	if rates != nil {
		source = rates.Source
	}
	if err != nil {
		return err
	}
	fmt.Fprintln(w, "  expected tiles per zoom (the same estimate as stipple plan, from the areas' shapes and dots):")
	for _, z := range est.Zooms {
		fmt.Fprintf(w, "    z%-2d %10s  %8.1f MB\n", z.Zoom, render.FormatCount(math.Round(z.Tiles)), z.Bytes/1e6)
	}
	hidpi := ""
	if m.Tiles.HiDPI {
		hidpi = " (with @2x tiles)"
	}
	fmt.Fprintf(w, "  estimate: %.0f dots, about %s tiles%s, about %s, about %s of CPU (rates measured on %s)\n",
		dots, render.FormatCount(math.Round(est.Tiles)), hidpi, sizeText(est.Bytes), cpuText(est.CoreHours), source)
	return nil
}

// sizeText is a byte count for people: "6.7 MB", "1.2 GB".
func sizeText(b float64) string {
	if b >= 1e9 {
		return fmt.Sprintf("%.1f GB", b/1e9)
	}
	return fmt.Sprintf("%.1f MB", b/1e6)
}

// cpuText is CPU time for people: "40 s", "12 min", "2.5 h".
func cpuText(coreHours float64) string {
	s := coreHours * 3600
	switch {
	case s < 120:
		return fmt.Sprintf("%.0f s", math.Max(s, 1))
	case s < 7200:
		return fmt.Sprintf("%.0f min", s/60)
	}
	return fmt.Sprintf("%.1f h", coreHours)
}

var initDoc = register(cmdDoc{Name: "init", Order: 40, Usage: "init FILE [--out MAP.toml] [--table COUNTS.csv] [--layer NAME]",
	Short: "write a starter map file for a polygon file",
	About: "Reads a polygon file and writes a map file for it: the input path relative to the map file, a guess " +
		"at the id field, and the fields that hold whole counts of people as commented-out categories in a " +
		"colour-blind-safe palette (Okabe & Ito 2008). Fields that are not counts (decimals, or names of areas, " +
		"lengths, codes and ids) are listed in a separate commented block. Without --out it prints the file.",
	Examples: []string{
		"stipple init ../data/tracts.shp --out mymap/map.toml   # then: stipple render mymap/map.toml",
		"stipple init tracts.shp --table counts.csv           # counts in a CSV beside the shapes",
	}})

func cmdInit(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("init", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var out string
	fs.StringVar(&out, "out", "", "write the map `file` here; its folder is made if missing (default: print it)")
	fs.StringVar(&out, "o", "", "") // -o, as before: an alias without help
	layerName := fs.String("layer", "", "GeoPackage layer (default: the only polygon layer)")
	tablePath := fs.String("table", "", "a CSV `file` of counts to join onto the areas: its whole-number columns become the categories (default: none, the counts are in the polygon file)")
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
	var tab *csvColumns
	if *tablePath != "" {
		if tab, err = readCSVColumns(*tablePath); err != nil {
			return err
		}
	}
	// Paths inside a map file are relative to the map file: to where it
	// is written, or to the current folder when it is printed.
	rel := func(p string) string { return p }
	if out != "" {
		dir, err := filepath.Abs(filepath.Dir(out))
		if err != nil {
			return fmt.Errorf("init: %w", err)
		}
		rel = func(p string) string {
			a, err := filepath.Abs(p)
			if err != nil {
				return p
			}
			r, err := filepath.Rel(dir, a)
			if err != nil {
				return a
			}
			return filepath.ToSlash(r)
		}
	}
	s := starterMap(res, rel(pos[0]), *layerName, tab, rel)
	if out == "" {
		fmt.Fprint(stdout, s.text)
		return nil
	}
	if _, err := os.Stat(out); err == nil {
		return fmt.Errorf("init: %s exists; not overwriting it", out)
	}
	if err := os.MkdirAll(filepath.Dir(out), 0o755); err != nil {
		return fmt.Errorf("init: %w", err)
	}
	if err := os.WriteFile(out, []byte(s.text), 0o644); err != nil {
		return fmt.Errorf("init: %w", err)
	}
	switch {
	case s.categories == 0:
		fmt.Fprintf(stdout, "wrote %s: no field holds whole counts of people; join a table of counts (stipple init %s --table counts.csv) or add [[category]] tables, then: stipple render %s\n", out, pos[0], out)
	default:
		fmt.Fprintf(stdout, "wrote %s with %s from %s; check the title, credit and people_per_dot, then: stipple render %s\n",
			out, plural(s.categories, "category", "categories"), strings.Join(s.fields, ", "), out)
	}
	if len(s.skipped) > 0 {
		fmt.Fprintf(stdout, "not offered as counts (commented out in the file): %s\n", strings.Join(s.skipped, ", "))
	}
	return nil
}

// plural writes n with the singular or plural word.
func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}

// notCountName matches field names that measure or name areas rather than
// count people: ids and codes, land and water areas, lengths, shares,
// coordinates (common practice in census and GIS exports; e.g. a land
// area in km², ogr2ogr's shape_area/shape_length, OBJECTID).
var notCountName = regexp.MustCompile(`(?i)(^|[_\W])(id|fid|gid|oid|objectid|geoid|code|fips|key|area|aland|awater|aland_km2|km2|sqkm|sqmi|acres|hectares|length|leng|len|perimeter|perim|shape_area|shape_leng|lat|lon|lng|latitude|longitude|x|y|year|pct|percent|share|ratio|rate|density|mean|median|avg)([_\W]|\d|$)|km2$|sqkm$|sqmi$|_area$|^area|_len$|_length$`)

// csvColumns is what init needs of a count table: its columns and which
// of them hold whole numbers only.
type csvColumns struct {
	path   string
	header []string
	whole  []bool // the column's cells are all whole numbers ≥ 0
	unique []bool // the column's cells are all distinct and non-empty
}

func readCSVColumns(path string) (*csvColumns, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("init: %w", err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.FieldsPerRecord = -1
	rows, err := r.ReadAll()
	if err != nil {
		return nil, fmt.Errorf("init: %s: %w", path, err)
	}
	if len(rows) < 2 {
		return nil, fmt.Errorf("init: %s: want a header row and at least one row of counts", path)
	}
	c := &csvColumns{path: path, header: rows[0], whole: make([]bool, len(rows[0])), unique: make([]bool, len(rows[0]))}
	for j := range c.header {
		c.whole[j], c.unique[j] = true, true
		seen := map[string]bool{}
		for _, row := range rows[1:] {
			cell := ""
			if j < len(row) {
				cell = strings.TrimSpace(row[j])
			}
			if cell == "" || seen[cell] {
				c.unique[j] = false
			}
			seen[cell] = true
			if v, err := geo.Number(cell); err != nil || v < 0 || v != math.Trunc(v) {
				c.whole[j] = false
			}
		}
	}
	return c, nil
}

// starter is a starter map file and what init put in it.
type starter struct {
	text       string
	categories int
	fields     []string // the count fields, one category each
	skipped    []string // numeric fields that are not counts
}

// wholeCounts reports whether every value of a numeric field is a whole
// number from 0 up, as a count of people is.
func wholeCounts(l *geo.Layer, name string) bool {
	for _, f := range l.Features {
		v, ok := f.Props[name]
		if !ok || v == nil {
			continue
		}
		n, err := geo.Number(v)
		if err != nil || n < 0 || n != math.Trunc(n) {
			return false
		}
	}
	return true
}

// starterMap writes a map file for a polygon file (and a count table, if
// given): the fields that hold whole counts as categories with the Okabe &
// Ito (2008) colour-blind-safe colours, other numeric fields in a
// commented-out block, and a guess at the id field (the first text field
// whose values are all distinct). path is the polygon file as the map file
// names it; rel turns other paths into the map file's terms.
func starterMap(res *read.Result, path, layer string, tab *csvColumns, rel func(string) string) starter {
	l := res.Layer
	var s starter
	var counts []string
	idField := ""
	for _, name := range l.Fields {
		st := fieldStats(l, name)
		if st.kind == "integer" || st.kind == "real" {
			if notCountName.MatchString(name) || !wholeCounts(l, name) {
				s.skipped = append(s.skipped, name)
			} else {
				counts = append(counts, name)
			}
		}
		if idField == "" && st.kind == "text" && st.nonEmpty == len(l.Features) && distinct(l, name) {
			idField = name
		}
	}
	tableKey := ""
	if tab != nil {
		counts = nil // the table holds the counts; the file's numbers are not joined
		for j, h := range tab.header {
			switch {
			case tableKey == "" && (strings.EqualFold(h, idField) || (idField == "" && tab.unique[j])):
				tableKey = h
			case tab.whole[j] && !notCountName.MatchString(h):
				counts = append(counts, h)
			case tab.whole[j]:
				s.skipped = append(s.skipped, h)
			}
		}
		if tableKey == "" && len(tab.header) > 0 {
			tableKey = tab.header[0]
		}
	}
	var b strings.Builder
	base := filepath.Base(path)
	title := strings.TrimSuffix(base, filepath.Ext(base))
	fmt.Fprintf(&b, "# Map file written by stipple init for %s.\n# Paths are relative to this file. Check the title, credit and people_per_dot, then: stipple render THIS_FILE\n", base)
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
	if tab != nil {
		fmt.Fprintf(&b, "\n[input.table]\nfile = %q\nkey = %q\n", rel(tab.path), tableKey)
	}
	b.WriteString("\n[tiles]\nmin_zoom = 4\nmax_zoom = 12\nsize = 256\n")
	b.WriteString("\n# Categories: one per field of whole counts. A category may sum several fields.\n")
	b.WriteString("# Colours: Okabe & Ito (2008), \"Color Universal Design\", colour-blind safe.\n")
	if len(counts) == 0 {
		b.WriteString("# No field holds whole counts of people: join a CSV table of counts with [input.table]\n# (stipple init FILE --table counts.csv) and add [[category]] tables.\n")
	}
	for i, f := range counts {
		if i == len(starterPalette) {
			b.WriteString("\n# More fields than colours that stay apart: these are left out; merge groups or pick colours.\n")
		}
		if i >= len(starterPalette) {
			fmt.Fprintf(&b, "# [[category]]\n# key = %q\n# label = %q\n# color = \"#rrggbb\"\n# fields = [%q]\n", f, f, f)
			continue
		}
		fmt.Fprintf(&b, "\n[[category]]\nkey = %q\nlabel = %q\ncolor = %q\nfields = [%q]\n", f, f, starterPalette[i], f)
		s.categories++
		s.fields = append(s.fields, f)
	}
	if len(s.skipped) > 0 {
		b.WriteString("\n# Numeric fields that do not look like counts of people (decimals, or names of\n# areas, lengths, codes and ids); uncomment one only if it does count people.\n")
		for _, f := range s.skipped {
			fmt.Fprintf(&b, "# [[category]]\n# key = %q\n# label = %q\n# color = \"#rrggbb\"\n# fields = [%q]\n", f, f, f)
		}
	}
	s.text = b.String()
	return s
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
