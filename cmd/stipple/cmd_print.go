package main

import (
	"context"
	"flag"
	"fmt"
	"image"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

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
}

func (o *printOptions) register(fs *flag.FlagSet) {
	fs.StringVar(&o.size, "page", "A4", "page size: "+strings.Join(page.Names(), ", ")+", or WxH with a unit (300x200mm, 11x17in)")
	fs.StringVar(&o.orientation, "orientation", "", "portrait or landscape (default: as the size is written; named sizes are portrait)")
	fs.Float64Var(&o.dpi, "dpi", 300, "raster resolution, dots per inch")
	fs.StringVar(&o.margin, "margin", "12mm", "blank border on every side (mm, cm, in or pt)")
	fs.StringVar(&o.bbox, "bbox", "", "extent as west,south,east,north degrees (default: the map's areas)")
	fs.StringVar(&o.ids, "ids", "", "print only the areas with these ids, comma-separated")
	fs.StringVar(&o.projection, "projection", "auto", "projection: "+strings.Join(page.ProjectionNames, ", "))
	fs.Float64Var(&o.dotMM, "dot-mm", 0.35, "dot diameter on paper, mm")
	fs.BoolVar(&o.outlines, "outlines", false, "draw the areas' boundaries")
	fs.StringVar(&o.title, "title", "", "title (default: the map file's)")
	fs.StringVar(&o.subtitle, "subtitle", "", "subtitle (default: the people and areas printed)")
	fs.StringVar(&o.out, "out", "", "output path without extension (default: OUT/print, OUT being the map's output folder)")
	fs.StringVar(&o.formats, "format", "png,pdf", "files to write: png, pdf or both")
	fs.StringVar(&o.pdfDots, "pdf-dots", "auto", fmt.Sprintf("dots in the PDF: raster, vector, or auto (vector up to %d dots)", page.VectorLimit))
	fs.Int64Var(&o.seed, "seed", -1, "random seed (overrides seed; keep it to match the tiles)")
	fs.Float64Var(&o.perDot, "per-dot", 0, "people per dot (overrides people_per_dot)")
	fs.IntVar(&o.workers, "workers", 0, "parallel workers for placing dots (default: all cores)")
}

// printJob is a laid-out page and what went into it.
type printJob struct {
	page     *page.Page
	areas    int       // areas printed
	people   []float64 // per category, in the areas printed
	notDrawn float64   // people whose dots could not be placed
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
		base = filepath.Join(m.Resolve(m.Out), "print")
	}
	if err := os.MkdirAll(filepath.Dir(base), 0o755); err != nil {
		return fmt.Errorf("output: %w", err)
	}
	p := job.page
	spec := p.Spec()
	fmt.Fprintf(stdout, "%s page, %s; %s\n", spec.Size, page.Describe(spec.Projection), render.DotNote(m.PeoplePerDot))
	fmt.Fprintf(stdout, "  %d dots from %d areas on the page", p.Len(), job.areas)
	if job.notDrawn > 0 {
		fmt.Fprintf(stdout, "; not drawn: %s people (no room in their areas)", render.FormatCount(job.notDrawn))
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

// preparePrint reads the map, places the same seeded dots as the tile run
// (mapjob.Load and mapjob.Place), and lays out the page.
func preparePrint(ctx context.Context, m *mapfile.Map, o *printOptions) (*printJob, error) {
	if o.seed >= 0 {
		m.Seed = uint64(o.seed)
	}
	if o.perDot < 0 {
		return nil, usageError{"--per-dot must be positive"}
	}
	if o.perDot > 0 {
		m.PeoplePerDot = o.perDot
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
	layer, counts, err := mapjob.Load(m, nil)
	if err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	// The extent, and for --ids the only areas printed.
	var extent orb.Bound
	var only []int
	switch {
	case o.ids != "":
		only, err = selectIDs(layer, o.ids)
		if err != nil {
			return nil, err
		}
		extent = boundOf(layer, counts, only, false)
	case o.bbox != "":
		extent, err = parseBBox(o.bbox)
		if err != nil {
			return nil, usageError{"--bbox: " + err.Error()}
		}
	default:
		extent = boundOf(layer, counts, nil, true)
	}
	if extent.Min[0] > extent.Max[0] {
		return nil, fmt.Errorf("%s: nothing to print: no area of the extent has both geometry and people", m.Path)
	}
	pr, err := page.Projection(o.projection, extent)
	if err != nil {
		return nil, usageError{"--projection: " + err.Error()}
	}
	nc := len(m.Categories)
	colors := m.RGBA()
	spec := page.Spec{
		Size: size, DPI: o.dpi, Margin: margin,
		Title: m.Title, Subtitle: o.subtitle,
		Note: render.DotNote(m.PeoplePerDot), Caution: render.Caution, Credit: credit(m.Credit),
		Projection: pr, Extent: extent, DotMM: o.dotMM, Opacity: m.Dots.Opacity,
	}
	if o.title != "" {
		spec.Title = o.title
	}
	for k, c := range m.Categories {
		spec.Entries = append(spec.Entries, page.Entry{Label: c.Label, Color: colors[k]})
	}
	if o.bbox != "" {
		spec.Footnotes = append(spec.Footnotes, "People: all of each area the map shows in whole or in part; dots: those inside the frame.")
	}
	spec.Footnotes = append(spec.Footnotes, notDrawnNote(0))
	if spec.Subtitle == "" {
		spec.Subtitle = subtitle(0, 0)
	}
	workers := o.workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	// All areas' dots, exactly as the tile run places them; the page
	// shows those inside its frame (and, with --ids, inside the listed
	// areas).
	store, results, err := mapjob.Place(layer, counts, m, workers)
	if err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	var keep func(lon, lat float64) bool
	if only != nil {
		keep = mapjob.InsideAny(layer, only)
	}
	// Lay out to learn what the frame shows, count the people of the
	// areas it shows, then lay out again with the counts filled in. The
	// frame depends on the extent and on how many lines the text takes,
	// which the counts do not change in practice; should they, the areas
	// are chosen again for the new frame.
	var (
		lay      *page.Layout
		people   []float64
		notDrawn float64
		areas    int
		used     image.Rectangle
	)
	for attempt := 0; ; attempt++ {
		lay, err = page.NewLayout(spec)
		if err != nil {
			return nil, err
		}
		if attempt > 0 && lay.FramePixels() == used {
			break
		}
		if attempt == 3 {
			return nil, fmt.Errorf("page: the layout does not settle for %s", spec.Size)
		}
		used = lay.FramePixels()
		sel := only
		if sel == nil {
			for i, f := range layer.Features {
				if len(f.Geometry) > 0 && lay.Shows(f.Geometry.Bound()) {
					sel = append(sel, i)
				}
			}
		}
		people = make([]float64, nc)
		notDrawn = 0
		var outlines []orb.MultiPolygon
		for _, i := range sel {
			for k := range people {
				people[k] += counts[i][k]
			}
			for _, n := range results[i].Lost {
				notDrawn += float64(n) * m.PeoplePerDot
			}
			if o.outlines {
				outlines = append(outlines, layer.Features[i].Geometry)
			}
		}
		areas = len(sel)
		total := 0.0
		for k := range spec.Entries {
			spec.Entries[k].People = people[k]
			total += people[k]
		}
		if o.subtitle == "" {
			spec.Subtitle = subtitle(total, areas)
		}
		spec.Footnotes[len(spec.Footnotes)-1] = notDrawnNote(notDrawn)
		if o.outlines {
			spec.Outlines = outlines
			if spec.Outlines == nil {
				spec.Outlines = []orb.MultiPolygon{}
			}
		}
	}
	p, err := lay.Place(storeDots(store, keep))
	if err != nil {
		return nil, err
	}
	return &printJob{page: p, areas: areas, people: people, notDrawn: notDrawn}, nil
}

// credit is the page's source line, worded as the legend words it.
func credit(c string) string {
	if c == "" {
		return ""
	}
	return "Source: " + c
}

func subtitle(people float64, areas int) string {
	return fmt.Sprintf("%s people in %s areas", render.FormatCount(people), render.FormatCount(float64(areas)))
}

func notDrawnNote(people float64) string {
	if people == 0 {
		return "Not drawn: 0 people; every dot found room in its area."
	}
	return fmt.Sprintf("Not drawn: %s people, in areas too small or too thin to hold their dots.", render.FormatCount(people))
}

// storeDots yields the store's dots at their cells' centres in
// longitude/latitude: the inverse of Web Mercator (IOGP GN7-2, method
// 1024: φ = π/2 − 2 atan(e^(−N/R)), λ = E/R) at the centre of each
// 2^-29 world cell, which is within 4 cm of where the dot was placed.
// keep, when not nil, picks the dots to show.
func storeDots(s *dotstore.Store, keep func(lon, lat float64) bool) page.DotSource {
	return func(yield func(lon, lat float64, cat int) bool) {
		for _, k := range s.Range(0, math.MaxUint64) {
			x, y, cat := dotstore.Split(k)
			lon, lat := dotstore.CellLonLat(x, y)
			if keep != nil && !keep(lon, lat) {
				continue
			}
			if !yield(lon, lat, cat) {
				return
			}
		}
	}
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

// boundOf is the union of the features' bounds (all features when idx is
// nil); peopleOnly skips areas without people, as the tile run does.
func boundOf(layer *geo.Layer, counts [][]float64, idx []int, peopleOnly bool) orb.Bound {
	b := orb.Bound{Min: orb.Point{math.Inf(1), math.Inf(1)}, Max: orb.Point{math.Inf(-1), math.Inf(-1)}}
	add := func(i int) {
		f := layer.Features[i]
		if len(f.Geometry) == 0 {
			return
		}
		if peopleOnly {
			has := false
			for _, c := range counts[i] {
				has = has || c > 0
			}
			if !has {
				return
			}
		}
		b = b.Union(f.Geometry.Bound())
	}
	if idx == nil {
		for i := range layer.Features {
			add(i)
		}
	} else {
		for _, i := range idx {
			add(i)
		}
	}
	return b
}

// parseBBox reads west,south,east,north degrees.
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
	case w >= e:
		return orb.Bound{}, fmt.Errorf("%q: west %v must be less than east %v (boxes across the antimeridian are not supported)", s, w, e)
	}
	return orb.Bound{Min: orb.Point{w, so}, Max: orb.Point{e, n}}, nil
}
