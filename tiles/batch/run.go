package batch

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strings"
	"sync"
	"time"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// extentFormat names the layout of an extent's record; change it when an
// extent's outputs change, so reruns redo them.
const extentFormat = "stipple-batch-extent/1"

// Options are run settings that are not part of the batch file.
type Options struct {
	// Workers render tiles and finish extents in parallel; 0 = all cores.
	Workers int
	// Memory is the budget for the dot store and the print pages drawn at
	// once, in bytes; 0 means mapjob.DefaultMemory.
	Memory int64
	// Log receives progress lines; nil discards them.
	Log io.Writer
	// Force redoes every extent, complete or not.
	Force bool
	// ProgressEvery is the interval of progress lines while a zoom's tiles
	// are drawn; 0 means 10 s, negative turns them off.
	ProgressEvery time.Duration
}

// Status is how an extent ended.
type Status string

// The three ends of an extent.
const (
	Done    Status = "done"    // drawn by this run
	Skipped Status = "skipped" // complete from an earlier run with the same fingerprint
	Failed  Status = "failed"  // see Result.Error
)

// Result is one extent's row of the summary.
type Result struct {
	Slug   string `json:"slug"`
	Title  string `json:"title"`
	Status Status `json:"status"`
	// Error is the reason an extent failed, "" otherwise.
	Error string `json:"error,omitempty"`
	// Dir is the extent's folder relative to the batch folder.
	Dir string `json:"dir"`
	// Rule says how the extent's areas were chosen.
	Rule     string  `json:"rule,omitempty"`
	Features int     `json:"areas"`
	PerDot   float64 `json:"people_per_dot"`
	// People and Dots per category, by category key.
	People   map[string]float64 `json:"people"`
	Dots     map[string]int     `json:"dots"`
	NotDrawn float64            `json:"not_drawn_people"`
	Tiles    int64              `json:"tiles"`
	Tiles2x  int64              `json:"tiles_2x"`
	Bytes    int64              `json:"bytes"`
	// Seconds is the extent's own work (linking tiles, legend, metadata,
	// viewer, thumbnail, print page) plus its share of the tiles drawn for
	// it (a tile several extents use is shared out between them); the
	// sampling is not shared out. A skipped extent keeps the figure of the
	// run that drew it.
	Seconds float64  `json:"seconds"`
	Print   []string `json:"print,omitempty"`
	MinZoom int      `json:"min_zoom"`
	MaxZoom int      `json:"max_zoom"`
	// Bounds is [west, south, east, north] of the extent.
	Bounds [4]float64 `json:"bounds"`
	// H and M are the extent's Theil index and mutual information index
	// (tiles.Measures); nil when undefined.
	H *float64 `json:"theil_h"`
	M *float64 `json:"mutual_information_m"`
	// MostDiverse names the extent's areas of highest entropy diversity,
	// most diverse first (tiles.Measures).
	MostDiverse []string `json:"most_diverse_areas,omitempty"`
}

// Report is what a batch run did.
type Report struct {
	Out     string
	Results []Result // in batch-file order
	// Samplings placed anew and reused from an earlier run.
	Placed, Reused int
	PlaceTime      time.Duration
	TileTime       time.Duration
	TilesDrawn     int // tiles rendered into the cache by this run
	Elapsed        time.Duration
	// Mixing splits the extents' segregation into the parts between and
	// within them (nil when an extent failed).
	Mixing *Mixing
}

// Failed returns the results that failed.
func (r *Report) Failed() []Result {
	var out []Result
	for _, x := range r.Results {
		if x.Status == Failed {
			out = append(out, x)
		}
	}
	return out
}

// record is kept in OUT/SLUG/.stipple/extent.json: the fingerprint, every
// file the extent wrote with its size, and its summary row.
type record struct {
	Format      string           `json:"format"`
	Fingerprint string           `json:"fingerprint"`
	Files       map[string]int64 `json:"files"`
	Result      Result           `json:"result"`
}

// job is one extent on its way through a run.
type job struct {
	e      *Extent
	fp     string
	res    Result
	picked *Picked
	share  time.Duration
}

// Run renders every extent of f into f.Out. Failing extents are reported in
// the Report, not as an error; the error is for what stops the whole batch
// (unreadable input, unwritable output, cancellation).
//
// The input is read (mapjob.Load) on every run, for its fingerprint: an
// extent is kept from an earlier run only when the areas, counts, masks
// and sampling settings it was drawn from are still the same.
func Run(ctx context.Context, f *File, opt Options) (*Report, error) {
	start := time.Now()
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	memory := opt.Memory
	if memory <= 0 {
		memory = mapjob.DefaultMemory
	}
	defer debug.SetMemoryLimit(debug.SetMemoryLimit(memory + 512<<20))
	log := newProgress(opt.Log, opt.ProgressEvery)
	defer log.stop()
	rep := &Report{Out: f.Out}
	if err := os.MkdirAll(filepath.Join(f.Out, tiles.StateDir), 0o755); err != nil {
		return nil, fmt.Errorf("batch: output: %w", err)
	}
	m := f.Map
	cats := categoryKeys(m)
	// One input per people-per-dot value: the dots each area gets, and so
	// the fingerprint, depend on it.
	inputs := map[float64]*mapjob.Input{}
	for _, e := range f.Extents {
		if _, ok := inputs[e.PeoplePerDot]; ok {
			continue
		}
		mg := *m
		mg.PeoplePerDot = e.PeoplePerDot
		in, err := mapjob.Load(&mg, nil)
		if err != nil {
			return nil, err
		}
		if len(inputs) == 0 {
			log.printf("batch: read %d areas from %s", len(in.Layer.Features), in.Layer.Path)
		}
		inputs[e.PeoplePerDot] = in
	}
	jobs := make([]*job, len(f.Extents))
	var todo []*job
	for i, e := range f.Extents {
		j := &job{e: e, fp: extentFingerprint(f, e, inputs[e.PeoplePerDot])}
		j.res = Result{Slug: e.Slug, Title: e.Title, Dir: e.Slug, PerDot: e.PeoplePerDot, MinZoom: e.MinZoom, MaxZoom: e.MaxZoom}
		jobs[i] = j
		if !opt.Force {
			if r, ok := complete(filepath.Join(f.Out, e.Slug), j.fp); ok {
				j.res = r
				j.res.Status = Skipped
				continue
			}
		}
		todo = append(todo, j)
	}
	log.printf("batch: %s in %s; %d complete from an earlier run, %d to draw", plural(len(jobs), "extent", "extents"), f.Path, len(jobs)-len(todo), len(todo))

	if len(todo) > 0 {
		if err := runJobs(ctx, f, todo, inputs, rep, workers, memory, log, cats); err != nil {
			return nil, err
		}
	}
	for _, j := range jobs {
		rep.Results = append(rep.Results, j.res)
	}
	for _, in := range inputs {
		// Counts do not depend on the dot value: any input serves.
		rep.Mixing = mixingOf(f, in, rep.Results)
		break
	}
	if err := WriteIndex(f.Out, f, rep); err != nil {
		return nil, err
	}
	rep.Elapsed = time.Since(start)
	var done, skipped, failed int
	for _, r := range rep.Results {
		switch r.Status {
		case Done:
			done++
		case Skipped:
			skipped++
		case Failed:
			failed++
		}
	}
	if rep.Mixing != nil {
		log.printf("batch: mixing: %s", rep.Mixing.Identity())
	}
	log.printf("batch: %d drawn, %d kept, %d failed in %s; index: %s", done, skipped, failed,
		rep.Elapsed.Round(time.Millisecond), filepath.Join(f.Out, IndexPage))
	return rep, nil
}

func runJobs(ctx context.Context, f *File, todo []*job, inputs map[float64]*mapjob.Input, rep *Report, workers int, memory int64, log *progress, cats []string) error {
	m := f.Map
	// Pick each extent's areas; a failure ends that extent only.
	groups := map[float64][]*job{}
	var perDots []float64
	for _, j := range todo {
		p, err := Pick(j.e, inputs[j.e.PeoplePerDot].Layer)
		if err != nil {
			j.fail(fmt.Errorf("extent %q (%s:%d): %w", j.e.Slug, f.Path, j.e.Line, err), log)
			continue
		}
		j.picked = p
		j.res.Rule = p.Rule
		j.res.Features = len(p.Features)
		j.res.Bounds = [4]float64{p.Bound.Min[0], p.Bound.Min[1], p.Bound.Max[0], p.Bound.Max[1]}
		if _, ok := groups[j.e.PeoplePerDot]; !ok {
			perDots = append(perDots, j.e.PeoplePerDot)
		}
		groups[j.e.PeoplePerDot] = append(groups[j.e.PeoplePerDot], j)
	}
	picked := 0
	for _, g := range groups {
		picked += len(g)
	}
	log.setTotal(picked)
	colors := m.RGBA()
	look := mapjob.Look(m)
	for _, pd := range perDots {
		mg := *m
		mg.PeoplePerDot = pd
		in := inputs[pd]
		var areas []int
		if f.Sample == "near" {
			areas = nearAreas(f, pd, in.Layer)
		}
		expected := int64(in.TotalDots())
		if areas != nil {
			expected = 0
			for _, i := range areas {
				for _, d := range in.Dots[i] {
					expected += int64(d)
				}
			}
		}
		log.startPlace(expected)
		s, err := place(ctx, storeDir(f.Out, pd), in, &mg, areas, f.HiDPI, workers, memory, &log.placed)
		log.endPhase()
		if err != nil {
			return err
		}
		if s.Reused {
			rep.Reused++
			log.printf("batch: reusing %d dots (%s) from an earlier run (same areas, counts, masks, categories, seed and people per dot)", s.Store.Len(), render.DotNote(pd))
		} else {
			rep.Placed++
			log.printf("batch: placed %d dots (%s) in %s", s.Store.Len(), render.DotNote(pd), s.elapsed.Round(time.Millisecond))
		}
		rep.PlaceTime += s.elapsed
		err = drawGroup(ctx, f, groups[pd], in, s, &mg, colors, look, rep, workers, memory, log, cats)
		s.Store.Close()
		if err != nil {
			return err
		}
	}
	return nil
}

// drawGroup renders the tiles of one sampling's extents into the cache and
// then finishes the extents in parallel.
func drawGroup(ctx context.Context, f *File, group []*job, in *mapjob.Input, s *sampling, m *mapfile.Map,
	colors []color.NRGBA, look func(int) render.Dot, rep *Report, workers int, memory int64, log *progress, cats []string) error {
	cache, err := openCache(storeDir(f.Out, m.PeoplePerDot), s.tileFP, m.Tiles.Size, f.HiDPI, colors, look)
	if err != nil {
		return err
	}
	// Tiles each extent needs, per zoom, and how many extents use each.
	covers := make([]map[int][][2]int, len(group))
	need := map[int][][2]int{}
	users := map[int]map[[2]int]int{}
	minZ, maxZ := 99, -1
	for i, j := range group {
		covers[i] = map[int][][2]int{}
		b := withMargin(j.picked.Bound, j.e.Margin)
		for z := j.e.MinZoom; z <= j.e.MaxZoom; z++ {
			c := Cover(b, z)
			covers[i][z] = c
			need[z] = append(need[z], c...)
			if users[z] == nil {
				users[z] = map[[2]int]int{}
			}
			for _, t := range c {
				users[z][t]++
			}
		}
		minZ, maxZ = min(minZ, j.e.MinZoom), max(maxZ, j.e.MaxZoom)
	}
	keys := s.Store.Keys()
	perTile := map[int]time.Duration{}
	fresh := map[int]map[[2]int]bool{}
	tileStart := time.Now()
	for z := minZ; z <= maxZ; z++ {
		if len(need[z]) == 0 {
			continue
		}
		if err := ctx.Err(); err != nil {
			return err
		}
		before := map[[2]int]bool{}
		for t := range cache.done[z] {
			before[t] = true
		}
		st, err := cache.ensure(ctx, keys, z, need[z], workers, log.tiles(z))
		if err != nil {
			return err
		}
		log.endTiles()
		if st.Rendered > 0 {
			rep.TilesDrawn += st.Rendered
			perTile[z] = st.Elapsed / time.Duration(st.Rendered)
			fresh[z] = map[[2]int]bool{}
			for t := range cache.done[z] {
				if !before[t] {
					fresh[z][t] = true
				}
			}
			log.printf("batch: zoom %d: %s drawn (%d with ink) in %s", z, plural(st.Rendered, "tile", "tiles"), st.Inked, st.Elapsed.Round(time.Millisecond))
		}
	}
	rep.TileTime += time.Since(tileStart)
	for i, j := range group {
		for z, c := range covers[i] {
			for _, t := range c {
				if fresh[z][t] {
					j.share += perTile[z] / time.Duration(users[z][t])
				}
			}
		}
	}
	// Print pages hold a raster and a coverage canvas each: let as many
	// run at once as the budget holds.
	printSlots := make(chan struct{}, max(1, min(workers, int(memory/printBytes(f, m)))))
	next := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < min(workers, len(group)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				j := group[i]
				if ctx.Err() != nil {
					j.fail(ctx.Err(), nil)
					continue
				}
				err := finish(ctx, f, j, covers[i], in, s, m, cache, colors, look, printSlots, cats)
				n := log.extentDone()
				if err != nil {
					j.fail(fmt.Errorf("extent %q (%s:%d): %w", j.e.Slug, f.Path, j.e.Line, err), nil)
					log.printf("%s %s: FAILED: %s", n, j.e.Slug, j.res.Error)
					continue
				}
				log.printf("%s %s: %s, %.1f MB, %s people in %s, %.2f s", n, j.e.Slug,
					plural(j.res.Tiles+j.res.Tiles2x, "tile", "tiles"), float64(j.res.Bytes)/1e6, render.FormatCount(sumPeople(j.res.People)), plural(j.res.Features, "area", "areas"), j.res.Seconds)
			}
		}()
	}
	for i := range group {
		next <- i
	}
	close(next)
	wg.Wait()
	return ctx.Err()
}

func sumPeople(p map[string]float64) float64 {
	t := 0.0
	for _, v := range p {
		t += v
	}
	return t
}

func (j *job) fail(err error, log *progress) {
	j.res.Status = Failed
	j.res.Error = oneLine(err.Error())
	if log != nil {
		log.printf("%s: FAILED: %s", j.e.Slug, j.res.Error)
	}
}

func oneLine(s string) string { return strings.ReplaceAll(s, "\n", " ") }

// withMargin grows b by share of its width and height on every side.
func withMargin(b orb.Bound, share float64) orb.Bound {
	width := mapjob.ExtentOfBound(b).Width()
	dx := width * share
	dy := (b.Max[1] - b.Min[1]) * share
	if width+2*dx >= 360 {
		return orb.Bound{Min: orb.Point{-180, b.Min[1] - dy}, Max: orb.Point{180, b.Max[1] + dy}}
	}
	wrap := func(lon float64) float64 { return math.Remainder(lon, 360) }
	w, e := b.Min[0]-dx, b.Max[0]+dx
	if b.Min[0] <= b.Max[0] && w >= -180 && e <= 180 {
		return orb.Bound{Min: orb.Point{w, b.Min[1] - dy}, Max: orb.Point{e, b.Max[1] + dy}}
	}
	return orb.Bound{Min: orb.Point{wrap(w), b.Min[1] - dy}, Max: orb.Point{wrap(e), b.Max[1] + dy}}
}

// unwrapped splits a bound whose west exceeds its east (across the
// antimeridian) into the two ordinary bounds either side of 180°.
func unwrapped(b orb.Bound) []orb.Bound {
	if b.Min[0] <= b.Max[0] {
		return []orb.Bound{b}
	}
	return []orb.Bound{
		{Min: orb.Point{b.Min[0], b.Min[1]}, Max: orb.Point{180, b.Max[1]}},
		{Min: orb.Point{-180, b.Min[1]}, Max: orb.Point{b.Max[0], b.Max[1]}},
	}
}

// complete reports whether the extent folder holds a finished extent made
// with fingerprint fp: its record matches and every file it lists is there
// with its size.
func complete(dir, fp string) (Result, bool) {
	data, err := os.ReadFile(filepath.Join(dir, tiles.StateDir, "extent.json"))
	if err != nil {
		return Result{}, false
	}
	var r record
	if json.Unmarshal(data, &r) != nil || r.Format != extentFormat || r.Fingerprint != fp || len(r.Files) == 0 {
		return Result{}, false
	}
	for name, size := range r.Files {
		if !filepath.IsLocal(name) {
			return Result{}, false
		}
		fi, err := os.Stat(filepath.Join(dir, name))
		if err != nil || fi.Size() != size {
			return Result{}, false
		}
	}
	return r.Result, true
}

// extentFingerprint hashes everything an extent's outputs depend on: its
// definition, the map's look (mapjob.LookFingerprint, which holds the
// input's sampling fingerprint: areas, counts, mask contents, categories,
// seed and people per dot), the legend's words and the stipple version.
func extentFingerprint(f *File, e *Extent, in *mapjob.Input) string {
	m := *f.Map
	m.PeoplePerDot = e.PeoplePerDot
	h := sha256.New()
	def, _ := json.Marshal(e)
	fmt.Fprintf(h, "%s\n%s\nextent=%s\n", extentFormat, mapjob.Version, def)
	fmt.Fprintf(h, "look=%s\n", mapjob.LookFingerprint(in, &m, f.HiDPI))
	fmt.Fprintf(h, "credit=%q caution=%q\n", m.Credit, mapjob.PrintCaution)
	for _, c := range m.Categories {
		fmt.Fprintf(h, "cat %q %q\n", c.Key, c.Label)
	}
	if f.Sample == "near" {
		// The store holds the areas near every extent of this dot value,
		// and low-zoom tiles show them all: the others' areas and margins
		// (not their titles or zooms) are part of this extent's definition.
		fmt.Fprintf(h, "sample=near\n")
		for _, o := range f.Extents {
			if o.PeoplePerDot == e.PeoplePerDot {
				d, _ := json.Marshal([]any{o.Select, o.BBox, o.IDs, o.Field, o.Values, o.Margin})
				fmt.Fprintf(h, "%s\n", d)
			}
		}
	}
	return hex.EncodeToString(h.Sum(nil))
}

// nearAreas lists, ascending, the areas that sample = "near" places for
// the extents at perDot people per dot: the areas they pick and those whose
// bounds meet an extent's box plus margin. An extent that picks nothing
// adds nothing (it fails on its own). Every extent of the value counts, not
// only those redrawn, so the list is the same on every run.
func nearAreas(f *File, perDot float64, layer *geo.Layer) []int {
	var boxes []orb.Bound
	picked := map[int]bool{}
	for _, e := range f.Extents {
		if e.PeoplePerDot != perDot {
			continue
		}
		p, err := Pick(e, layer)
		if err != nil {
			continue
		}
		boxes = append(boxes, withMargin(p.Bound, e.Margin))
		for _, i := range p.Features {
			picked[i] = true
		}
	}
	areas := []int{}
	for i, ft := range layer.Features {
		if picked[i] {
			areas = append(areas, i)
			continue
		}
		if len(ft.Geometry) == 0 {
			continue
		}
		fb := ft.Geometry.Bound()
	boxes:
		for _, b := range boxes {
			for _, part := range unwrapped(b) {
				if fb.Intersects(part) {
					areas = append(areas, i)
					break boxes
				}
			}
		}
	}
	return areas
}

func categoryKeys(m *mapfile.Map) []string {
	out := make([]string, len(m.Categories))
	for i, c := range m.Categories {
		out[i] = c.Key
	}
	return out
}

// printBytes estimates one print page's memory: the RGBA raster and the
// coverage canvas (4 bytes per category per pixel) at the largest page of
// the batch.
func printBytes(f *File, m *mapfile.Map) int64 {
	var most int64 = 1
	for _, e := range f.Extents {
		if e.Print == nil {
			continue
		}
		size, err := parsePage(*e.Print)
		if err != nil {
			continue
		}
		w, h := size.Pixels(e.Print.DPI)
		most = max(most, int64(w)*int64(h)*int64(8+4*len(m.Categories)))
	}
	return most
}

var errEmpty = errors.New("no tile of the extent has ink: no dots fall in its box and margin at its zooms")
