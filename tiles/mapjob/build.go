package mapjob

import (
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"hash"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"slices"
	"sync"
	"sync/atomic"
	"time"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/sample"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// Version is stipple's version, written into every map's metadata.
var Version = "0.1.0-dev"

// sampleFormat names the dot store layout and the sampling rules behind it;
// change it when sample places dots differently, so old stores are redone.
const sampleFormat = "stipple-dots/2" // 2: dots seeded by category key

// tileFormat names how tiles are drawn; change it when pixels change, so
// a rerun redraws instead of keeping old tiles.
const tileFormat = "stipple-tiles/2"

// DefaultMemory is the default memory budget of a run: with it, 126 million
// dots fit in memory (16 bytes each while sorting); more spill to disk.
const DefaultMemory = 2 << 30

// memoryReserve is the part of the budget kept for everything but the dot
// store's buffers (areas, samplers, runtime; while tiles are written, the
// mapped store's window and the tile buffers).
const memoryReserve = 128 << 20

// Options are run settings that are not part of the map itself.
type Options struct {
	// Workers is the number of goroutines for sampling and tiles; 0 = all cores.
	Workers int
	// Log receives progress lines and the summary; nil discards them. On a
	// terminal, progress is one line redrawn in place.
	Log io.Writer
	// Layer, when set, is used instead of reading m.Input.File.
	Layer *geo.Layer
	// Input, when set, is used instead of loading the map's inputs (the
	// CLI loads first to print the reading and join reports).
	Input *Input
	// Memory is the run's memory budget in bytes; 0 means DefaultMemory.
	// The dot store gets all but 128 MiB of it (a quarter of small
	// budgets); past that it spills sorted runs to the output folder's
	// .stipple folder and merges them.
	Memory int64
	// HiDPI also writes {z}/{x}/{y}@2x.png tiles of twice the pixels.
	HiDPI bool
	// ProgressEvery is the interval of progress lines when Log is not a
	// terminal; 0 means 10 s, a negative value turns them off.
	ProgressEvery time.Duration
}

// Summary is what a run did.
type Summary struct {
	Features int
	People   []float64 // per category
	Dots     []int     // drawn, per category
	NotDrawn float64   // people with no dot (lost dots × people per dot)
	// RowsWithoutArea is the people in table rows that matched no area:
	// in the input, but not on the map.
	RowsWithoutArea float64
	Problems        []string // one line per feature with lost dots
	// Notes are one line per feature whose dots were all drawn but not
	// plainly: along the outline of an area with no area, by the even-odd
	// rule in crossing rings, or ignoring masks that left no room.
	Notes     []string
	Tiles     tiles.Stats
	Elapsed   time.Duration
	Bounds    orb.Bound
	Metadata  *tiles.Metadata
	OutputDir string
	// StoreReused is set when the dots came from the output folder's store,
	// whose sampling fingerprint matched, instead of being placed anew.
	StoreReused bool
	// StoreRuns is the number of sorted runs spilled to disk (0: in memory).
	StoreRuns int
	// PlaceTime and TileTime split Elapsed: sampling the dots (with sorting
	// and storing them), and writing the tiles.
	PlaceTime, TileTime time.Duration
	// PeakRSS is the process's peak resident memory in bytes (getrusage
	// maxrss; 0 where not available).
	PeakRSS int64
}

// storeInfo is written beside the dot store (dots.json): the sampling
// fingerprint and the sampling results that the summary and metadata need,
// so a restyled rerun need not sample again.
type storeInfo struct {
	Format      string     `json:"format"`
	Fingerprint string     `json:"fingerprint"`
	Dots        int        `json:"dots"`
	Features    int        `json:"features"`
	People      []float64  `json:"people"`
	Drawn       []int      `json:"dots_drawn"`
	NotDrawn    float64    `json:"not_drawn_people"`
	Problems    []string   `json:"problems"`
	Notes       []string   `json:"notes"`
	Bounds      [4]float64 `json:"bounds"`
	StoreBytes  int64      `json:"store_bytes"`
	Placed      string     `json:"placed_by"`
	Categories  []string   `json:"category_keys"`
	PeoplePer   float64    `json:"people_per_dot"`
	Seed        uint64     `json:"seed"`
	InputPath   string     `json:"input"`
	SpilledRuns int        `json:"spilled_runs"`
}

const (
	storeFile = "dots.bin"
	infoFile  = "dots.json"
)

// Run renders the map m into its output folder.
//
// The dots are placed once into a store in the output folder
// (.stipple/dots.bin, with dots.json holding the sampling fingerprint: a
// hash of the areas' geometry and counts, the id field, seed, people per dot
// and the categories' fields). A rerun whose fingerprint matches draws from
// the store without sampling, so changing colours, dot sizes or zooms is
// quick. Tiles carry their own fingerprint (dots, look, colours, sizes): a
// rerun after an interruption keeps the finished tiles and writes the rest,
// and the result is byte for byte that of an uninterrupted run.
func Run(ctx context.Context, m *mapfile.Map, opt Options) (*Summary, error) {
	start := time.Now()
	logf := func(format string, a ...any) {
		if opt.Log != nil {
			fmt.Fprintf(opt.Log, format+"\n", a...)
		}
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	budget := opt.Memory
	if budget <= 0 {
		budget = DefaultMemory
	}
	// The budget is for the whole process: the store's buffers get all but
	// a reserve for the areas, the samplers and the runtime, and the
	// collector is told the budget so garbage cannot pile up beside them.
	storeBudget := budget - min(memoryReserve, budget/4)
	defer debug.SetMemoryLimit(debug.SetMemoryLimit(max(budget, 512<<20)))

	in := opt.Input
	if in == nil {
		var err error
		if in, err = LoadInput(m, opt.Layer); err != nil {
			return nil, err
		}
	}
	layer, counts := in.Layer, in.Counts
	var err error
	logf("read %d areas from %s", len(layer.Features), layer.Path)
	nc := len(m.Categories)
	out := m.Out
	state := filepath.Join(out, tiles.StateDir)
	if err := os.MkdirAll(state, 0o755); err != nil {
		return nil, fmt.Errorf("output: %w", err)
	}
	// Leftovers of a killed run: half-written files and unmerged runs.
	for _, pat := range []string{"*.tmp", "run-*.bin"} {
		old, _ := filepath.Glob(filepath.Join(state, pat))
		for _, f := range old {
			os.Remove(f)
		}
	}
	fp := samplingFingerprint(layer, counts, m)
	prog := newProgress(opt.Log, opt.ProgressEvery)
	defer prog.stop()

	sum := &Summary{Features: len(layer.Features), People: make([]float64, nc), Dots: make([]int, nc)}
	if in.Join != nil {
		sum.RowsWithoutArea = in.Join.PeopleInUnmatchedTotal
	}
	storePath := filepath.Join(state, storeFile)
	store, info := reuseStore(state, fp, nc)
	if store != nil {
		sum.StoreReused = true
		logf("reusing the dot store in %s (same areas, counts, seed and people per dot)", state)
	} else {
		os.Remove(filepath.Join(state, infoFile)) // the old store is gone once we start
		expected := 0.0
		for i := range counts {
			for k := range counts[i] {
				expected += counts[i][k] / m.PeoplePerDot
			}
		}
		prog.startPlace(int64(expected))
		var results []sample.Result
		var runs int
		store, results, runs, err = PlaceStore(ctx, layer, counts, m, PlaceOptions{
			Workers: workers, Memory: storeBudget, SpillDir: state, StorePath: storePath, Placed: &prog.placed, Dots: in.Dots, Masks: in.Masks,
		})
		prog.endPhase()
		if err != nil {
			return nil, err
		}
		// The sort buffers are garbage now; hand them back before the
		// mapped store's pages come in.
		debug.FreeOSMemory()
		info = summarizePlacement(layer, counts, m, results, store, fp)
		info.SpilledRuns = runs
		if fi, err := os.Stat(storePath); err == nil {
			info.StoreBytes = fi.Size()
		}
		data, _ := json.MarshalIndent(info, "", "  ")
		if err := tiles.WriteFileAtomic(filepath.Join(state, infoFile), append(data, '\n')); err != nil {
			return nil, err
		}
		sum.StoreRuns = runs
		logf("placed %d dots (%s) in %s%s", store.Len(), render.DotNote(m.PeoplePerDot), time.Since(start).Round(time.Millisecond), spillNote(runs))
	}
	defer store.Close()
	sum.People, sum.Dots, sum.NotDrawn, sum.Problems = info.People, info.Drawn, info.NotDrawn, info.Problems
	sum.Notes = info.Notes
	sum.Bounds = orb.Bound{Min: orb.Point{info.Bounds[0], info.Bounds[1]}, Max: orb.Point{info.Bounds[2], info.Bounds[3]}}
	sum.PlaceTime = time.Since(start)
	if store.Len() == 0 {
		return nil, fmt.Errorf("%s: no dots to draw: the categories' fields hold no people at %s", m.Path, render.DotNote(m.PeoplePerDot))
	}

	colors := m.RGBA()
	look := Look(m)
	tileStart := time.Now()
	prog.startTiles()
	st, err := tiles.Write(ctx, store, tiles.Options{
		Dir: out, MinZoom: m.Tiles.MinZoom, MaxZoom: m.Tiles.MaxZoom, TileSize: m.Tiles.Size,
		Colors: colors, Look: look, Workers: workers, HiDPI: opt.HiDPI,
		Fingerprint: tileFingerprint(fp, m, colors, look, opt.HiDPI),
		Progress:    prog.tile,
	})
	prog.endPhase()
	if err != nil {
		return nil, err
	}
	sum.Tiles = st
	sum.TileTime = time.Since(tileStart)
	kept := ""
	if st.Kept > 0 {
		kept = fmt.Sprintf(", %d kept from an interrupted run", st.Kept)
	}
	logf("wrote %d tiles (%.1f MB) in %s%s", st.Tiles+st.Tiles2x, float64(st.Bytes)/1e6, sum.TileTime.Round(time.Millisecond), kept)

	meta := Metadata(m, sum)
	leg := LegendOf(meta, colors)
	for _, s := range []struct {
		name  string
		scale float64
	}{{"legend.png", 1}, {"legend@2x.png", 2}} {
		if err := writePNG(filepath.Join(out, s.name), render.DrawLegend(leg, 300, s.scale)); err != nil {
			return nil, err
		}
		meta.Legend = append(meta.Legend, s.name)
	}
	if err := tiles.WriteMetadata(out, meta); err != nil {
		return nil, err
	}
	if err := tiles.WriteViewer(out, meta); err != nil {
		return nil, err
	}
	sum.Metadata = meta
	sum.OutputDir = out
	sum.Elapsed = time.Since(start)
	sum.PeakRSS = peakRSS()
	logf("done: %d dots, %d tiles, %.1f MB in %s; peak memory %.0f MB", store.Len(), st.Tiles+st.Tiles2x,
		float64(st.Bytes)/1e6, sum.Elapsed.Round(time.Millisecond), float64(sum.PeakRSS)/(1<<20))
	return sum, nil
}

func spillNote(runs int) string {
	if runs == 0 {
		return ""
	}
	return fmt.Sprintf(" (%d sorted runs spilled to disk and merged)", runs)
}

// reuseStore opens the stored dots when their fingerprint is fp.
func reuseStore(state, fp string, ncat int) (*dotstore.Store, *storeInfo) {
	data, err := os.ReadFile(filepath.Join(state, infoFile))
	if err != nil {
		return nil, nil
	}
	var info storeInfo
	if json.Unmarshal(data, &info) != nil || info.Format != sampleFormat || info.Fingerprint != fp ||
		len(info.People) != ncat || len(info.Drawn) != ncat {
		return nil, nil
	}
	s, err := dotstore.Open(filepath.Join(state, storeFile))
	if err != nil || s.Len() != info.Dots {
		if s != nil {
			s.Close()
		}
		return nil, nil
	}
	return s, &info
}

func summarizePlacement(layer *geo.Layer, counts [][]float64, m *mapfile.Map, results []sample.Result, store *dotstore.Store, fp string) *storeInfo {
	nc := len(m.Categories)
	info := &storeInfo{Format: sampleFormat, Fingerprint: fp, Dots: store.Len(), Features: len(layer.Features),
		People: make([]float64, nc), Drawn: make([]int, nc), Problems: []string{},
		Placed: Version, PeoplePer: m.PeoplePerDot, Seed: m.Seed, InputPath: layer.Path}
	for _, c := range m.Categories {
		info.Categories = append(info.Categories, c.Key)
	}
	b := orb.Bound{Min: orb.Point{math.Inf(1), math.Inf(1)}, Max: orb.Point{math.Inf(-1), math.Inf(-1)}}
	for i, f := range layer.Features {
		hasPeople := false
		for k := 0; k < nc; k++ {
			info.People[k] += counts[i][k]
			hasPeople = hasPeople || counts[i][k] > 0
		}
		if hasPeople && len(f.Geometry) > 0 {
			b = b.Union(f.Geometry.Bound())
		}
	}
	for i, r := range results {
		lost := 0
		for k := range r.Dots {
			info.Drawn[k] += r.Dots[k]
			lost += r.Lost[k]
		}
		f := layer.Features[i]
		if lost > 0 {
			info.NotDrawn += float64(lost) * m.PeoplePerDot
			info.Problems = append(info.Problems, fmt.Sprintf("feature %d (id %q): %d dots not drawn: %s", f.Index, f.ID, lost, r.Problem))
		} else if r.Problem != "" {
			info.Notes = append(info.Notes, fmt.Sprintf("feature %d (id %q): %s", f.Index, f.ID, r.Problem))
		}
	}
	info.Bounds = [4]float64{b.Min[0], b.Min[1], b.Max[0], b.Max[1]}
	return info
}

// samplingFingerprint hashes everything the placed dots depend on.
func samplingFingerprint(layer *geo.Layer, counts [][]float64, m *mapfile.Map) string {
	h := sha256.New()
	fmt.Fprintf(h, "%s\nid=%q\nseed=%d\nperdot=%x\nrounding=%q\nmask=%q\n", sampleFormat, m.Input.ID, m.Seed, math.Float64bits(m.PeoplePerDot), m.Rounding, m.Input.Mask)
	for _, c := range m.Categories {
		fmt.Fprintf(h, "fields=%q\n", c.Fields)
	}
	// Masks change where dots may go: their files' bytes count too.
	for _, mp := range m.Input.Mask {
		data, err := os.ReadFile(m.Resolve(mp))
		fmt.Fprintf(h, "maskfile=%q %x %v\n", mp, sha256.Sum256(data), err)
	}
	HashAreas(h, layer, counts)
	return hex.EncodeToString(h.Sum(nil))
}

// tileFingerprint hashes everything the tiles depend on besides the zoom.
func tileFingerprint(dots string, m *mapfile.Map, colors []color.NRGBA, look func(int) render.Dot, hidpi bool) string {
	h := sha256.New()
	fmt.Fprintf(h, "%s\ndots=%s\nsize=%d\nhidpi=%v\n", tileFormat, dots, m.Tiles.Size, hidpi)
	for _, c := range colors {
		fmt.Fprintf(h, "color=%v\n", c)
	}
	for z := 0; z <= 24; z++ {
		d := look(z)
		fmt.Fprintf(h, "z%d %x %x\n", z, math.Float64bits(d.Diameter), math.Float64bits(d.Opacity))
	}
	return hex.EncodeToString(h.Sum(nil))
}

// Look is the map's dot schedule. At the deepest zoom a dot has the map's
// diameter; each zoom out halves its area (√2 in diameter), so low zooms
// read as density and high zooms as single dots. Below dots.min_diameter a
// dot stops shrinking and fades instead: its opacity falls so that its ink
// (area × opacity) keeps halving per zoom. Without that, the ink per area
// would grow fourfold per zoom out and a national map would be solid colour
// long before zoom 0. Tiles of 512 pixels are high-density tiles: the same
// look at twice the pixels.
func Look(m *mapfile.Map) func(z int) render.Dot {
	scale := float64(m.Tiles.Size) / 256
	return func(z int) render.Dot {
		d := m.Dots.Diameter * math.Pow(math.Sqrt2, float64(z-m.Tiles.MaxZoom))
		o := m.Dots.Opacity
		if min := m.Dots.MinDiameter; d < min {
			o *= (d / min) * (d / min)
			d = min
		}
		return render.Dot{Diameter: d * scale, Opacity: o}
	}
}

// PlaceOptions set how PlaceStore works.
type PlaceOptions struct {
	// Workers sample features in parallel; 0 means all cores.
	Workers int
	// Memory is the store's budget in bytes (see dotstore.BuilderOptions);
	// 0 means no limit.
	Memory int64
	// SpillDir holds sorted runs past the budget.
	SpillDir string
	// StorePath, when set, receives the store file.
	StorePath string
	// Placed, when set, counts dots as they are placed (for progress).
	Placed *atomic.Int64
	// Dots[i][k], when set, is the number of dots of feature i, category k
	// (Input.Dots); nil allocates them for the layer by the map's rounding.
	Dots [][]int
	// Masks, when set, are the map's masks (Input.Masks); nil reads the
	// map's mask files.
	Masks *sample.Mask
	// Keep, when set, picks the dots to store by key: dots for which it
	// returns false are placed (and counted in the results) but not added
	// to the store. A feature's dots do not depend on which others are
	// placed, so the store holds exactly the kept dots of a full placement.
	Keep func(key uint64) bool
}

// Place samples every feature's dots into a sorted in-memory store;
// results[i] says what happened to feature i's people. The store is the
// same for any number of workers.
func Place(layer *geo.Layer, counts [][]float64, m *mapfile.Map, workers int) (*dotstore.Store, []sample.Result, error) {
	s, results, _, err := PlaceStore(context.Background(), layer, counts, m, PlaceOptions{Workers: workers})
	return s, results, err
}

// PlaceStore samples every feature's dots into a sorted store within a
// memory budget and reports how many sorted runs it spilled. Features go to
// the workers largest first, so no worker is left with a big one at the end;
// the store is the same for any number of workers and any budget.
func PlaceStore(ctx context.Context, layer *geo.Layer, counts [][]float64, m *mapfile.Map, opt PlaceOptions) (*dotstore.Store, []sample.Result, int, error) {
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	expected := 0.0
	order := make([]int, len(layer.Features))
	size := make([]float64, len(layer.Features))
	for i := range layer.Features {
		order[i] = i
		for _, c := range counts[i] {
			size[i] += c
		}
		expected += size[i] / m.PeoplePerDot
	}
	slices.SortStableFunc(order, func(a, b int) int {
		switch {
		case size[a] > size[b]:
			return -1
		case size[a] < size[b]:
			return 1
		}
		return 0
	})
	b := dotstore.NewBuilder(dotstore.BuilderOptions{Memory: opt.Memory, SpillDir: opt.SpillDir, Workers: workers, Expected: int(math.Min(expected, 1<<40))})
	results := make([]sample.Result, len(layer.Features))
	sopt := sample.Options{PeoplePerDot: m.PeoplePerDot, Seed: m.Seed, Masks: opt.Masks, Streams: Streams(m)}
	if sopt.Masks == nil && len(m.Input.Mask) > 0 {
		masks, _, err := LoadMasks(m)
		if err != nil {
			return nil, nil, 0, err
		}
		sopt.Masks = masks
	}
	dots := opt.Dots
	if dots == nil {
		ids := make([]string, len(layer.Features))
		for i, f := range layer.Features {
			ids[i] = f.ID
		}
		dots = sample.AllocateStreams(ids, counts, m.PeoplePerDot, m.Seed, m.Rounding == "exact", sopt.Streams)
	}
	var wg sync.WaitGroup
	var failed atomic.Pointer[error]
	fail := func(err error) { failed.CompareAndSwap(nil, &err) }
	next := make(chan int, 64)
	const block = 1 << 15
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			buf := make([]uint64, 0, block)
			flush := func() {
				if len(buf) == 0 {
					return
				}
				if err := b.Add(buf); err != nil {
					fail(err)
				}
				if opt.Placed != nil {
					opt.Placed.Add(int64(len(buf)))
				}
				buf = buf[:0]
			}
			for i := range next {
				if failed.Load() != nil || ctx.Err() != nil {
					continue
				}
				results[i] = sample.FeatureN(&layer.Features[i], dots[i], sopt, func(cat int, p orb.Point) {
					x, y := dotstore.World(p[0], p[1])
					k := dotstore.Key(x, y, cat)
					if opt.Keep != nil && !opt.Keep(k) {
						return
					}
					buf = append(buf, k)
					if len(buf) == block {
						flush()
					}
				})
			}
			flush()
		}()
	}
	for _, i := range order {
		next <- i
	}
	close(next)
	wg.Wait()
	if p := failed.Load(); p != nil {
		return nil, nil, 0, *p
	}
	if err := ctx.Err(); err != nil {
		return nil, nil, 0, err
	}
	runs := b.Runs()
	s, err := b.Finish(opt.StorePath)
	if err != nil {
		return nil, nil, 0, err
	}
	return s, results, runs, nil
}

// HashAreas writes every area's index, id, counts and vertices into h, for
// fingerprints of what the placed dots depend on.
func HashAreas(h hash.Hash, layer *geo.Layer, counts [][]float64) {
	var b [8]byte
	f64 := func(w hash.Hash, v float64) { binary.LittleEndian.PutUint64(b[:], math.Float64bits(v)); w.Write(b[:]) }
	for i, f := range layer.Features {
		fmt.Fprintf(h, "f%d %q %d\n", f.Index, f.ID, len(f.Geometry))
		for _, c := range counts[i] {
			f64(h, c)
		}
		for _, poly := range f.Geometry {
			fmt.Fprintf(h, "p%d", len(poly))
			for _, ring := range poly {
				fmt.Fprintf(h, "r%d", len(ring))
				for _, p := range ring {
					f64(h, p[0])
					f64(h, p[1])
				}
			}
		}
	}
}
