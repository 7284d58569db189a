package mapjob

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"time"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// Version is stipple's version, written into every map's metadata.
var Version = "0.1.0-dev"

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
	// budgets); past that it spills sorted runs to the state folder and
	// merges them.
	Memory int64
	// HiDPI also writes {z}/{x}/{y}@2x.png tiles of twice the pixels.
	HiDPI bool
	// Work is a local folder for the run's state (the dot store, the tile
	// manifest) when the output is a bucket; "" picks one in the system's
	// temporary folder. A local output keeps its state in OUT/.stipple.
	Work string
	// Force writes into a folder that holds files stipple did not write.
	Force bool
	// ProgressEvery is the interval of progress lines when Log is not a
	// terminal; 0 means 10 s, a negative value turns them off.
	ProgressEvery time.Duration
}

// workers is the number of workers o asks for.
func (o Options) workers() int {
	if o.Workers <= 0 {
		return runtime.NumCPU()
	}
	return o.Workers
}

// budget is the memory budget o asks for.
func (o Options) budget() int64 {
	if o.Memory <= 0 {
		return DefaultMemory
	}
	return o.Memory
}

// storeBudget is the part of a run's budget that the dot store's buffers
// get: all but a reserve for the areas, the samplers and the runtime.
func storeBudget(budget int64) int64 { return budget - min(memoryReserve, budget/4) }

// Summary is what a run did.
type Summary struct {
	Tally
	// RowsWithoutArea is the people in table rows that matched no area:
	// in the input, but not on the map.
	RowsWithoutArea float64
	Tiles           tiles.Stats
	Elapsed         time.Duration
	Metadata        *tiles.Metadata
	OutputDir       string
	// StoreReused is set when the dots came from the state folder's store,
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

// StateDir is the local folder that keeps a map's state between runs:
// OUT/.stipple for a local output, else work (or, when work is "", a
// folder in the system's temporary folder named for the output).
func StateDir(out, work string) string {
	if !sink.IsBucketURL(out) {
		return filepath.Join(out, tiles.StateDir)
	}
	if strings.HasPrefix(out, "file://") {
		if d, err := sink.Open(context.Background(), out); err == nil {
			if dir, ok := d.(*sink.Dir); ok {
				return filepath.Join(dir.Root(), tiles.StateDir)
			}
		}
	}
	if work != "" {
		return filepath.Join(work, tiles.StateDir)
	}
	return filepath.Join(os.TempDir(), "stipple-"+strconv.FormatUint(hashString(out), 16), tiles.StateDir)
}

// Run renders the map m into its output (a folder, file:// URL or bucket).
//
// The dots are placed once into a store in the state folder (StateDir:
// dots.bin, with dots.json holding the sampling fingerprint). A rerun whose
// fingerprint matches draws from the store without sampling, so changing
// colours, dot sizes or zooms is quick. Tiles carry their own fingerprint
// (LookFingerprint): a rerun after an interruption keeps the finished tiles
// and writes the rest, and the result is byte for byte that of an
// uninterrupted run.
//
// A map with [[layer]] entries is rendered by RunLayers, not Run.
func Run(ctx context.Context, m *mapfile.Map, opt Options) (*Summary, error) {
	start := time.Now()
	if len(m.Layers) > 0 {
		return nil, fmt.Errorf("%s: the map has [[layer]] entries: each renders into its own subfolder (mapjob.RunLayers, as stipple render does)", m.Path)
	}
	logf := func(format string, a ...any) {
		if opt.Log != nil {
			fmt.Fprintf(opt.Log, format+"\n", a...)
		}
	}
	budget := opt.budget()
	// The collector is told the budget so garbage cannot pile up beside
	// the store's buffers.
	defer debug.SetMemoryLimit(debug.SetMemoryLimit(max(budget, 512<<20)))
	in := opt.Input
	if in == nil {
		var err error
		if in, err = Load(m, opt.Layer); err != nil {
			return nil, err
		}
	}
	logf("read %d areas from %s", len(in.Layer.Features), in.Layer.Path)
	out, err := sink.Open(ctx, m.Out)
	if err != nil {
		return nil, err
	}
	defer out.Close()
	state := StateDir(m.Out, opt.Work)
	_, local := out.(*sink.Dir)
	release, err := Claim(filepath.Dir(state), opt.Force || !local)
	if err != nil {
		return nil, err
	}
	defer release()
	prog := newProgress(opt.Log, opt.ProgressEvery)
	defer prog.stop()

	prog.startPlace(int64(in.TotalDots()))
	pl, err := Place(ctx, in, m, PlaceOptions{Workers: opt.Workers, Memory: storeBudget(budget), Dir: state, Placed: &prog.placed})
	prog.endPhase()
	if err != nil {
		return nil, err
	}
	defer pl.Store.Close()
	if pl.Reused {
		logf("reusing the dot store in %s (same areas, counts, masks, categories, seed and people per dot)", state)
	} else {
		// The sort buffers are garbage now; hand them back before the
		// mapped store's pages come in.
		debug.FreeOSMemory()
		logf("placed %d dots (%s) in %s%s", pl.Store.Len(), render.DotNote(m.PeoplePerDot), time.Since(start).Round(time.Millisecond), spillNote(pl.Runs))
	}
	sum := &Summary{Tally: TallyAreas(in, m, pl.Outcomes, nil), StoreReused: pl.Reused, StoreRuns: pl.Runs, OutputDir: m.Out}
	if in.Join != nil {
		sum.RowsWithoutArea = in.Join.PeopleInUnmatchedTotal
	}
	sum.PlaceTime = time.Since(start)
	if pl.Store.Len() == 0 {
		return nil, fmt.Errorf("%s: no dots to draw: the categories' fields hold no people at %s", m.Path, render.DotNote(m.PeoplePerDot))
	}

	hidpi := opt.HiDPI || m.Tiles.HiDPI
	lookFP := LookFingerprint(in, m, hidpi)
	unpublished := false
	if !tiles.Resumable(filepath.Dir(state), lookFP) {
		// Old tiles are about to be replaced: take the old map's entry
		// points down first, so the folder never offers the old map over
		// a mix of old and new tiles.
		if err := Unpublish(ctx, out); err != nil {
			return nil, err
		}
		unpublished = true
	}
	tileStart := time.Now()
	prog.startTiles()
	st, err := tiles.Write(ctx, pl.Store, tiles.Options{
		Dir: filepath.Dir(state), Out: out, MinZoom: m.Tiles.MinZoom, MaxZoom: m.Tiles.MaxZoom, TileSize: m.Tiles.Size,
		Colors: m.RGBA(), Look: Look(m), Workers: opt.Workers, HiDPI: hidpi,
		Fingerprint: lookFP,
		Progress:    prog.tile,
	})
	prog.endPhase()
	if err != nil {
		if unpublished {
			return nil, fmt.Errorf("%w (%s holds no published map until a rerun finishes)", err, out)
		}
		return nil, err
	}
	sum.Tiles = st
	sum.TileTime = time.Since(tileStart)
	kept := ""
	if st.Kept > 0 {
		kept = fmt.Sprintf(", %d kept from an interrupted run", st.Kept)
	}
	logf("wrote %d tiles (%.1f MB) in %s%s", st.Tiles+st.Tiles2x, float64(st.Bytes)/1e6, sum.TileTime.Round(time.Millisecond), kept)

	sum.Metadata = Metadata(m, sum)
	if err := PutMeasures(ctx, out, in, m, nil, sum.Metadata); err != nil {
		return nil, err
	}
	if err := PutReferences(ctx, out, in, m); err != nil {
		return nil, err
	}
	if err := PutFurniture(ctx, out, sum.Metadata, m.RGBA()); err != nil {
		return nil, err
	}
	sum.Elapsed = time.Since(start)
	sum.PeakRSS = peakRSS()
	logf("done: %d dots, %d tiles, %.1f MB in %s; peak memory %.0f MB", pl.Store.Len(), st.Tiles+st.Tiles2x,
		float64(st.Bytes)/1e6, sum.Elapsed.Round(time.Millisecond), float64(sum.PeakRSS)/(1<<20))
	return sum, nil
}

// EntryPoints are the files a reader or a script opens first: a folder
// offers a map only while they are there, and they are written last.
var EntryPoints = []string{tiles.ViewerPage, tiles.EmbedPage, tiles.MetadataFile}

// Unpublish removes a map's entry points from out.
func Unpublish(ctx context.Context, out sink.Sink) error {
	for _, p := range EntryPoints {
		if err := out.Delete(ctx, p); err != nil {
			return err
		}
	}
	return nil
}

// TotalDots is the number of dots the input's areas get.
func (in *Input) TotalDots() int {
	n := 0
	for _, d := range in.Dots {
		for _, v := range d {
			n += v
		}
	}
	return n
}

func spillNote(runs int) string {
	if runs == 0 {
		return ""
	}
	return fmt.Sprintf(" (%d sorted runs spilled to disk and merged)", runs)
}

// hashString is FNV-1a of s, for folder names.
func hashString(s string) uint64 {
	h := uint64(14695981039346656037)
	for i := 0; i < len(s); i++ {
		h ^= uint64(s[i])
		h *= 1099511628211
	}
	return h
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
