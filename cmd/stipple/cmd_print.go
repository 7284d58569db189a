package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"github.com/stipple-maps/stipple/tiles/sink"
)

var printDoc = register(cmdDoc{Name: "print", Order: 70, Usage: "print MAP.toml [flags]",
	Short: "print the map on a page (PNG and PDF, equal-area projection)",
	About: "Draws the same dots as the tiles (the render's dot store is reused when it holds this map's dots) " +
		"on one page in an equal-area projection, with title, legend, counts, the dot note, the caution, a scale " +
		"bar and the credit, and writes a PNG that records its resolution and a PDF with vector text.",
	Examples: []string{
		"stipple print map.toml --page A3 --dpi 300",
		"stipple print map.toml --ids 01001,01003 --format pdf --out county-pair",
	}})

// printOptions are the flags of "stipple print".
type printOptions struct {
	size        string
	orientation string
	dpi         float64
	margin      string
	bbox        string
	ids         string
	projection  string
	dotMM       float64
	outlines    bool
	title       string
	subtitle    string
	out         string
	formats     string
	pdfDots     string
	seed        int64
	perDot      float64
	workers     int
	memory      string
}

func (o *printOptions) register(fs *flag.FlagSet) {
	fs.StringVar(&o.size, "page", "A4", "page size: "+strings.Join(page.Names(), ", ")+", or WxH with a unit (300x200mm, 11x17in)")
	fs.StringVar(&o.orientation, "orientation", "", "portrait or landscape (default: as the size is written; named sizes are portrait)")
	fs.Float64Var(&o.dpi, "dpi", 300, "raster resolution, dots per inch")
	fs.StringVar(&o.margin, "margin", "12mm", "blank border on every side (mm, cm, in or pt)")
	fs.StringVar(&o.bbox, "bbox", "", "extent as west,south,east,north degrees (default: the map's areas)")
	fs.StringVar(&o.ids, "ids", "", "print only the areas with these ids, comma-separated (default: every area)")
	fs.StringVar(&o.projection, "projection", "auto", "projection: "+strings.Join(page.ProjectionNames, ", "))
	fs.Float64Var(&o.dotMM, "dot-mm", 0.35, "dot diameter on paper, mm")
	fs.BoolVar(&o.outlines, "outlines", false, "draw the areas' boundaries")
	fs.StringVar(&o.title, "title", "", "title (default: the map file's)")
	fs.StringVar(&o.subtitle, "subtitle", "", "subtitle (default: the people and areas printed)")
	fs.StringVar(&o.out, "out", "", "output path without extension (default: OUT/print, OUT being the map's output folder)")
	fs.StringVar(&o.formats, "format", "png,pdf", "files to write: png, pdf or both")
	fs.StringVar(&o.pdfDots, "pdf-dots", "auto", fmt.Sprintf("dots in the PDF: raster, vector, or auto (vector up to %d dots)", page.VectorLimit))
	fs.Int64Var(&o.seed, "seed", -1, "random seed, a whole number from 0 up; keep it to match the tiles (default: the map file's seed)")
	fs.Float64Var(&o.perDot, "per-dot", 0, "people per dot, at least 0.01 (default: the map file's people_per_dot)")
	fs.IntVar(&o.workers, "workers", 0, "parallel workers for placing dots, at most 4 per core (default: one per core)")
	fs.StringVar(&o.memory, "memory", "", "memory budget when the dots must be placed again, e.g. 2GiB (default 2GiB)")
}

func cmdPrint(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("print", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var o printOptions
	o.register(fs)
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usageError{"print takes one map file"}
	}
	m, err := mapfile.Read(pos[0])
	if err != nil {
		return err
	}
	var wantPNG, wantPDF bool
	for _, f := range strings.Split(o.formats, ",") {
		switch strings.TrimSpace(strings.ToLower(f)) {
		case "png":
			wantPNG = true
		case "pdf":
			wantPDF = true
		default:
			return usageError{fmt.Sprintf("--format %q: want png, pdf or png,pdf", o.formats)}
		}
	}
	mode, err := page.ParseDotMode(o.pdfDots)
	if err != nil {
		return usageError{"--pdf-dots: " + err.Error()}
	}
	job, err := preparePrint(ctx, m, &o)
	if err != nil {
		return err
	}

	base := o.out
	if base == "" {
		base = filepath.Join(m.Out, "print")
	}
	if err := os.MkdirAll(filepath.Dir(base), 0o755); err != nil {
		return fmt.Errorf("output: %w", err)
	}
	p := job.Page
	spec := p.Spec()
	fmt.Fprintf(stdout, "%s page, %s; %s\n", spec.Size, page.Describe(spec.Projection), render.DotNote(m.PeoplePerDot))
	if job.Areas > 0 {
		fmt.Fprintf(stdout, "  %d dots from %d areas on the page", p.Len(), job.Areas)
	} else {
		fmt.Fprintf(stdout, "  %d dots inside the frame", p.Len())
	}
	if job.NotDrawn > 0 {
		fmt.Fprintf(stdout, "; not drawn: %s people (no room in their areas)", render.FormatCount(job.NotDrawn))
	}
	fmt.Fprintln(stdout)
	if wantPNG {
		path := base + ".png"
		w, h := spec.Size.Pixels(spec.DPI)
		n, err := writeFile(path, p.WritePNG)
		if err != nil {
			return err
		}
		fmt.Fprintf(stdout, "  wrote %s (%d × %d px at %v dpi, %.1f MB)\n", path, w, h, spec.DPI, float64(n)/1e6)
	}
	if wantPDF {
		path := base + ".pdf"
		res := mode.Resolve(p.Len())
		n, err := writeFile(path, func(w io.Writer) error { return p.WritePDF(w, mode) })
		if err != nil {
			return err
		}
		fmt.Fprintf(stdout, "  wrote %s (dots as %s, %.1f MB)\n", path, res, float64(n)/1e6)
	}
	return nil
}

// countingWriter counts the bytes written through it.
type countingWriter struct {
	w io.Writer
	n int64
}

func (c *countingWriter) Write(b []byte) (int, error) {
	n, err := c.w.Write(b)
	c.n += int64(n)
	return n, err
}

func writeFile(path string, write func(io.Writer) error) (int64, error) {
	f, err := os.Create(path)
	if err != nil {
		return 0, fmt.Errorf("output: %w", err)
	}
	cw := &countingWriter{w: f}
	if err := write(cw); err != nil {
		f.Close()
		return 0, fmt.Errorf("output: %s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return 0, fmt.Errorf("output: %w", err)
	}
	return cw.n, nil
}

// preparePrint reads the map, takes its dots from the render's store when
// it holds this map's dots (same sampling fingerprint), else places them
// under the same memory budget as a render, and lays out the page.
func preparePrint(ctx context.Context, m *mapfile.Map, o *printOptions) (*mapjob.PrintPage, error) {
	if o.seed >= 0 {
		m.Seed = uint64(o.seed)
	}
	if o.perDot < 0 {
		return nil, usageError{"--per-dot must be positive"}
	}
	if o.perDot > 0 {
		m.PeoplePerDot = o.perDot
		if err := m.CheckPerDot(); err != nil {
			return nil, usageError{"--per-dot " + err.Error()}
		}
	}
	size, err := page.ParseSize(o.size)
	if err != nil {
		return nil, usageError{"--page: " + err.Error()}
	}
	switch strings.ToLower(o.orientation) {
	case "":
	case "portrait":
		size = size.Portrait()
	case "landscape":
		size = size.Landscape()
	default:
		return nil, usageError{fmt.Sprintf("--orientation %q: want portrait or landscape", o.orientation)}
	}
	margin, err := page.ParseLength(o.margin)
	if err != nil {
		return nil, usageError{"--margin: " + err.Error()}
	}
	if o.bbox != "" && o.ids != "" {
		return nil, usageError{"give --bbox or --ids, not both"}
	}
	if _, err := page.Projection(o.projection, orb.Bound{Min: orb.Point{0, 0}, Max: orb.Point{1, 1}}); err != nil {
		return nil, usageError{"--projection: " + err.Error()}
	}
	var memory int64
	if o.memory != "" {
		if memory, err = mapfile.ParseSize(o.memory); err != nil {
			return nil, usageError{"--memory: " + err.Error()}
		}
	}
	opt := mapjob.PrintOptions{Size: size, DPI: o.dpi, Margin: margin, Projection: o.projection, DotMM: o.dotMM,
		Outlines: o.outlines, Title: o.title, Subtitle: o.subtitle}
	if o.bbox != "" {
		b, err := parseBBox(o.bbox)
		if err != nil {
			return nil, usageError{"--bbox: " + err.Error()}
		}
		opt.Frame = &b
	}
	if !sink.IsBucketURL(m.Out) {
		m.Out = m.Resolve(m.Out)
	}
	in, err := mapjob.Load(m, nil)
	if err != nil {
		return nil, err
	}
	if o.ids != "" {
		if opt.Areas, err = selectIDs(in.Layer, o.ids); err != nil {
			return nil, err
		}
	}
	pl, err := mapjob.PlaceForPrint(ctx, in, m, mapjob.Options{Workers: o.workers, Memory: memory})
	if err != nil {
		return nil, err
	}
	defer pl.Store.Close()
	return mapjob.Print(ctx, in, m, pl, opt)
}

// selectIDs returns the indexes of the features with the given ids.
func selectIDs(layer *geo.Layer, list string) ([]int, error) {
	index := make(map[string]int, len(layer.Features))
	for i, f := range layer.Features {
		index[f.ID] = i
	}
	var out []int
	seen := map[int]bool{}
	for _, id := range strings.Split(list, ",") {
		id = strings.TrimSpace(id)
		if id == "" {
			continue
		}
		i, ok := index[id]
		if !ok {
			return nil, fmt.Errorf("%s: --ids: no area has id %q", layer.Path, id)
		}
		if !seen[i] {
			seen[i] = true
			out = append(out, i)
		}
	}
	if len(out) == 0 {
		return nil, usageError{"--ids: no ids given"}
	}
	return out, nil
}

// parseBBox reads west,south,east,north degrees; west > east crosses 180°.
func parseBBox(s string) (orb.Bound, error) {
	parts := strings.Split(s, ",")
	if len(parts) != 4 {
		return orb.Bound{}, fmt.Errorf("%q: want west,south,east,north in degrees", s)
	}
	var v [4]float64
	for i, p := range parts {
		f, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
		if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
			return orb.Bound{}, fmt.Errorf("%q: %q is not a number", s, p)
		}
		v[i] = f
	}
	w, so, e, n := v[0], v[1], v[2], v[3]
	switch {
	case w < -180 || w > 180 || e < -180 || e > 180:
		return orb.Bound{}, fmt.Errorf("%q: longitudes must be within -180 to 180", s)
	case so < -90 || n > 90:
		return orb.Bound{}, fmt.Errorf("%q: latitudes must be within -90 to 90", s)
	case so >= n:
		return orb.Bound{}, fmt.Errorf("%q: south %v must be below north %v", s, so, n)
	case w == e:
		return orb.Bound{}, fmt.Errorf("%q: west and east are both %v; the box has no width", s, w)
	}
	// West above east is a box across the antimeridian (RFC 7946 §5.2):
	// 170,-50,-170,-30 is 20° wide.
	return orb.Bound{Min: orb.Point{w, so}, Max: orb.Point{e, n}}, nil
}
