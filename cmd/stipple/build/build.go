package build

import (
	"context"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"sync"
	"time"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/cmd/stipple/mapfile"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/geojson"
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
}

// Summary is what a run did.
type Summary struct {
	Features  int
	People    []float64 // per category
	Dots      []int     // drawn, per category
	NotDrawn  float64   // people with no dot (lost dots × people per dot)
	Problems  []string  // one line per feature with lost dots
	Tiles     tiles.Stats
	Elapsed   time.Duration
	Bounds    orb.Bound
	Metadata  *tiles.Metadata
	OutputDir string
}

// Load reads the map's areas and returns them with their counts per
// category (counts[i][k] for feature i, category k).
func Load(m *mapfile.Map, layer *geo.Layer) (*geo.Layer, [][]float64, error) {
	if layer == nil {
		path := m.Resolve(m.Input.File)
		var err error
		switch strings.ToLower(filepath.Ext(path)) {
		case ".geojson", ".json":
			layer, err = geojson.Read(path, geojson.Options{IDField: m.Input.ID})
		default:
			return nil, nil, fmt.Errorf("%s: key input.file: %s: unknown file type %q; stipple reads .geojson", m.Path, path, filepath.Ext(path))
		}
		if err != nil {
			return nil, nil, err
		}
	}
	counts := make([][]float64, len(layer.Features))
	ids := make(map[string]int, len(layer.Features))
	for i := range layer.Features {
		f := &layer.Features[i]
		if j, dup := ids[f.ID]; dup {
			return nil, nil, &geo.Error{Path: layer.Path, Index: i, ID: f.ID, Field: m.Input.ID,
				Message: fmt.Sprintf("id is also the id of feature %d; ids must be unique (they seed the dots)", j)}
		}
		ids[f.ID] = i
		counts[i] = make([]float64, len(m.Categories))
		for k, c := range m.Categories {
			n, err := geo.Count(layer.Path, f, c.Fields)
			if err != nil {
				return nil, nil, err
			}
			counts[i][k] = n
		}
	}
	return layer, counts, nil
}

// Run renders the map m into its output folder.
func Run(ctx context.Context, m *mapfile.Map, opt Options) (*Summary, error) {
	start := time.Now()
	logf := func(format string, a ...any) {
		if opt.Log != nil {
			fmt.Fprintf(opt.Log, format+"\n", a...)
		}
	}
	layer, counts, err := Load(m, opt.Layer)
	if err != nil {
		return nil, err
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	nc := len(m.Categories)
	sum := &Summary{Features: len(layer.Features), People: make([]float64, nc), Dots: make([]int, nc), Bounds: orb.Bound{Min: orb.Point{math.Inf(1), math.Inf(1)}, Max: orb.Point{math.Inf(-1), math.Inf(-1)}}}
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

	store, results := place(layer, counts, m, workers)
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

func place(layer *geo.Layer, counts [][]float64, m *mapfile.Map, workers int) (*dotstore.Store, []sample.Result) {
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

// Metadata describes the finished map.
func Metadata(m *mapfile.Map, s *Summary) *tiles.Metadata {
	b := s.Bounds
	md := &tiles.Metadata{
		Format: "stipple-map/1", Version: Version, Title: m.Title, Credit: m.Credit,
		Bounds:  [4]float64{b.Min[0], b.Min[1], b.Max[0], b.Max[1]},
		MinZoom: m.Tiles.MinZoom, MaxZoom: m.Tiles.MaxZoom, TileSize: m.Tiles.Size,
		Tiles: "{z}/{x}/{y}.png", PeoplePerDot: m.PeoplePerDot, Seed: m.Seed,
		Note: render.DotNote(m.PeoplePerDot), Caution: render.Caution,
		TileCount: s.Tiles.Tiles, TileBytes: s.Tiles.Bytes, PerZoom: s.Tiles.PerZoom,
	}
	md.Center = [3]float64{(b.Min[0] + b.Max[0]) / 2, (b.Min[1] + b.Max[1]) / 2, float64(FitZoom(b, 900, 600, m.Tiles.MinZoom, m.Tiles.MaxZoom))}
	for k, c := range m.Categories {
		md.Categories = append(md.Categories, tiles.Category{
			Key: c.Key, Label: c.Label, Color: strings.ToUpper(c.Color), People: s.People[k],
			DotsExpected: s.People[k] / m.PeoplePerDot, DotsDrawn: s.Dots[k],
		})
	}
	md.NotDrawn.People = s.NotDrawn
	md.NotDrawn.Dots = int(math.Round(s.NotDrawn / m.PeoplePerDot))
	md.NotDrawn.Features = s.Problems
	if len(md.NotDrawn.Features) > 100 {
		md.NotDrawn.Features = md.NotDrawn.Features[:100]
	}
	if md.NotDrawn.Features == nil {
		md.NotDrawn.Features = []string{}
	}
	sort.Strings(md.NotDrawn.Features)
	return md
}

// FitZoom is the deepest zoom at which bound b fits a w × h pixel view.
func FitZoom(b orb.Bound, w, h, minZ, maxZ int) int {
	for z := maxZ; z > minZ; z-- {
		nw := dotstoreWorld(b.Min[0], b.Max[1], z)
		se := dotstoreWorld(b.Max[0], b.Min[1], z)
		if se[0]-nw[0] <= float64(w) && se[1]-nw[1] <= float64(h) {
			return z
		}
	}
	return minZ
}

func dotstoreWorld(lon, lat float64, z int) [2]float64 {
	x, y := dotstore.World(lon, lat)
	s := 256 * math.Exp2(float64(z)) / dotstore.WorldSize
	return [2]float64{float64(x) * s, float64(y) * s}
}

// LegendOf is the legend for the metadata.
func LegendOf(md *tiles.Metadata, colors []color.NRGBA) render.Legend {
	l := render.Legend{Title: md.Title, Note: md.Note, Caution: md.Caution, Credit: md.Credit}
	for k, c := range md.Categories {
		l.Entries = append(l.Entries, render.LegendEntry{Label: c.Label, Color: colors[k], People: c.People, Dots: c.DotsDrawn})
	}
	return l
}

func writePNG(path string, img image.Image) error {
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("output: %w", err)
	}
	if err := png.Encode(f, img); err != nil {
		f.Close()
		return fmt.Errorf("output: %s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("output: %w", err)
	}
	return nil
}
