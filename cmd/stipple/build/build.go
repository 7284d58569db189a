package build

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sync"
	"time"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/cmd/stipple/mapfile"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/sample"
	"github.com/stipple-maps/stipple/sample/dotstore"
	"github.com/stipple-maps/stipple/tiles"
)

// Version is stipple's version, written into every map's metadata.
var Version = "0.1.0-dev"

// Options are run settings that are not part of the map itself.
type Options struct {
	// Workers is the number of goroutines for sampling and tiles; 0 = all cores.
	Workers int
	// Log receives progress lines and the summary; nil discards them.
	Log io.Writer
	// Layer, when set, is used instead of reading m.Input.File.
	Layer *geo.Layer
	// Input, when set, is used instead of loading the map's inputs (the
	// CLI loads first to print the reading and join reports).
	Input *Input
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
	Tiles           tiles.Stats
	Elapsed         time.Duration
	Bounds          orb.Bound
	Metadata        *tiles.Metadata
	OutputDir       string
}

// Run renders the map m into its output folder.
func Run(ctx context.Context, m *mapfile.Map, opt Options) (*Summary, error) {
	start := time.Now()
	logf := func(format string, a ...any) {
		if opt.Log != nil {
			fmt.Fprintf(opt.Log, format+"\n", a...)
		}
	}
	in := opt.Input
	if in == nil {
		var err error
		if in, err = LoadInput(m, opt.Layer); err != nil {
			return nil, err
		}
	}
	layer, counts := in.Layer, in.Counts
	var rowsWithoutArea float64
	if in.Join != nil {
		rowsWithoutArea = in.Join.PeopleInUnmatchedTotal
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	nc := len(m.Categories)
	sum := &Summary{RowsWithoutArea: rowsWithoutArea, Features: len(layer.Features), People: make([]float64, nc), Dots: make([]int, nc), Bounds: orb.Bound{Min: orb.Point{math.Inf(1), math.Inf(1)}, Max: orb.Point{math.Inf(-1), math.Inf(-1)}}}
	for i, f := range layer.Features {
		hasPeople := false
		for k := range m.Categories {
			sum.People[k] += counts[i][k]
			hasPeople = hasPeople || counts[i][k] > 0
		}
		if hasPeople && len(f.Geometry) > 0 {
			sum.Bounds = sum.Bounds.Union(f.Geometry.Bound())
		}
	}
	logf("read %d areas from %s", len(layer.Features), layer.Path)

	store, results := Place(layer, counts, m, workers)
	for i, r := range results {
		lost := 0
		for k := range r.Dots {
			sum.Dots[k] += r.Dots[k]
			lost += r.Lost[k]
		}
		if lost > 0 {
			f := layer.Features[i]
			sum.NotDrawn += float64(lost) * m.PeoplePerDot
			sum.Problems = append(sum.Problems, fmt.Sprintf("feature %d (id %q): %d dots not drawn: %s", f.Index, f.ID, lost, r.Problem))
		}
	}
	logf("placed %d dots (%s)", store.Len(), render.DotNote(m.PeoplePerDot))
	if store.Len() == 0 {
		return nil, fmt.Errorf("%s: no dots to draw: the categories' fields hold no people at %s", m.Path, render.DotNote(m.PeoplePerDot))
	}

	out := m.Out
	if err := os.MkdirAll(out, 0o755); err != nil {
		return nil, fmt.Errorf("output: %w", err)
	}
	colors := m.RGBA()
	st, err := tiles.Write(ctx, store, tiles.Options{
		Dir: out, MinZoom: m.Tiles.MinZoom, MaxZoom: m.Tiles.MaxZoom, TileSize: m.Tiles.Size,
		Colors: colors, Look: Look(m), Workers: workers,
	})
	if err != nil {
		return nil, err
	}
	sum.Tiles = st
	logf("wrote %d tiles (%.1f MB)", st.Tiles, float64(st.Bytes)/1e6)

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
	return sum, nil
}

// Look is the map's dot schedule: full diameter at the deepest zoom, and
// each zoom out halves the dot's area, down to the minimum diameter, so low
// zooms read as density and high zooms as single dots. Tiles of 512 pixels
// are high-density tiles: the same look at twice the pixels.
func Look(m *mapfile.Map) func(z int) render.Dot {
	scale := float64(m.Tiles.Size) / 256
	return func(z int) render.Dot {
		d := m.Dots.Diameter * math.Pow(math.Sqrt2, float64(z-m.Tiles.MaxZoom))
		d = math.Max(d, m.Dots.MinDiameter)
		return render.Dot{Diameter: d * scale, Opacity: m.Dots.Opacity}
	}
}

// Place samples every feature's dots into a sorted store; results[i] says
// what happened to feature i's people. The store is the same for any number
// of workers.
func Place(layer *geo.Layer, counts [][]float64, m *mapfile.Map, workers int) (*dotstore.Store, []sample.Result) {
	results := make([]sample.Result, len(layer.Features))
	keys := make([][]uint64, workers)
	opt := sample.Options{PeoplePerDot: m.PeoplePerDot, Seed: m.Seed}
	var wg sync.WaitGroup
	next := make(chan int, 64)
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			for i := range next {
				results[i] = sample.Feature(&layer.Features[i], counts[i], opt, func(cat int, p orb.Point) {
					x, y := dotstore.World(p[0], p[1])
					keys[w] = append(keys[w], dotstore.Key(x, y, cat))
				})
			}
		}(w)
	}
	for i := range layer.Features {
		next <- i
	}
	close(next)
	wg.Wait()
	n := 0
	for _, k := range keys {
		n += len(k)
	}
	store := dotstore.New(n)
	for _, k := range keys {
		store.AddKeys(k)
	}
	store.Sort()
	return store, results
}
