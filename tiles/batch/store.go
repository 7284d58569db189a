package batch

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"time"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/sample"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// storeFormat names the layout of a batch's store folder; change it when
// what is kept there changes.
const storeFormat = "stipple-batch-dots/1"

// placed is one sampling: the store and what happened to each feature.
type placed struct {
	store    *dotstore.Store
	fp       string
	dots     [][]int  // [feature][category] drawn
	lost     [][]int  // [feature][category] not placed
	problems []string // [feature] "" or what went wrong
	reused   bool
	elapsed  time.Duration
}

type storeInfo struct {
	Format      string   `json:"format"`
	Fingerprint string   `json:"fingerprint"`
	Keys        int      `json:"dots"`
	Dots        [][]int  `json:"dots_per_feature"`
	Lost        [][]int  `json:"lost_per_feature"`
	Problems    []string `json:"problems_per_feature"`
}

// storeDir is the folder of the sampling at perDot people per dot.
func storeDir(out string, perDot float64) string {
	return filepath.Join(out, tiles.StateDir, "dots-"+strings.ReplaceAll(fmt.Sprint(perDot), ".", "_"))
}

// place returns the sampling of in at m's people per dot: the store kept in
// dir when its fingerprint matches, else a new one placed there.
func place(ctx context.Context, dir string, in *mapjob.Input, m *mapfile.Map, workers int, memory int64) (*placed, error) {
	start := time.Now()
	fp := samplingFingerprint(in.Layer, in.Counts, m)
	if p := reuse(dir, fp, len(in.Layer.Features), len(m.Categories)); p != nil {
		p.elapsed = time.Since(start)
		return p, nil
	}
	if err := os.RemoveAll(dir); err != nil {
		return nil, fmt.Errorf("batch: %w", err)
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("batch: %w", err)
	}
	store, results, _, err := mapjob.PlaceStore(ctx, in.Layer, in.Counts, m, mapjob.PlaceOptions{
		Workers: workers, Memory: memory, SpillDir: dir, StorePath: filepath.Join(dir, "dots.bin"),
	})
	if err != nil {
		return nil, err
	}
	p := &placed{store: store, fp: fp}
	for _, r := range results {
		p.dots = append(p.dots, r.Dots)
		p.lost = append(p.lost, r.Lost)
		p.problems = append(p.problems, r.Problem)
	}
	info := storeInfo{Format: storeFormat, Fingerprint: fp, Keys: store.Len(), Dots: p.dots, Lost: p.lost, Problems: p.problems}
	data, err := json.Marshal(info)
	if err != nil {
		return nil, fmt.Errorf("batch: %w", err)
	}
	if err := tiles.WriteFileAtomic(filepath.Join(dir, "dots.json"), append(data, '\n')); err != nil {
		return nil, err
	}
	p.elapsed = time.Since(start)
	return p, nil
}

func reuse(dir, fp string, nf, nc int) *placed {
	data, err := os.ReadFile(filepath.Join(dir, "dots.json"))
	if err != nil {
		return nil
	}
	var info storeInfo
	if json.Unmarshal(data, &info) != nil || info.Format != storeFormat || info.Fingerprint != fp ||
		len(info.Dots) != nf || len(info.Lost) != nf || len(info.Problems) != nf {
		return nil
	}
	for i := range info.Dots {
		if len(info.Dots[i]) != nc || len(info.Lost[i]) != nc {
			return nil
		}
	}
	s, err := dotstore.Open(filepath.Join(dir, "dots.bin"))
	if err != nil {
		return nil
	}
	if s.Len() != info.Keys {
		s.Close()
		return nil
	}
	return &placed{store: s, fp: fp, dots: info.Dots, lost: info.Lost, problems: info.Problems, reused: true}
}

// samplingFingerprint hashes everything the placed dots depend on: the
// areas' ids, geometry and counts, the map's sampling settings, and a probe
// of the sampler itself.
func samplingFingerprint(layer *geo.Layer, counts [][]float64, m *mapfile.Map) string {
	h := sha256.New()
	fmt.Fprintf(h, "%s\n%s\nprobe=%s\n", storeFormat, mapjob.Version, samplerProbe())
	fmt.Fprintf(h, "%s\n", samplingSettings(m))
	mapjob.HashAreas(h, layer, counts)
	return hex.EncodeToString(h.Sum(nil))
}

// samplingSettings are the map settings the dots depend on, as text.
func samplingSettings(m *mapfile.Map) string {
	var b strings.Builder
	fmt.Fprintf(&b, "id=%q layer=%q seed=%d perdot=%x rounding=%q mask=%q\n", m.Input.ID, m.Input.Layer, m.Seed,
		math.Float64bits(m.PeoplePerDot), m.Rounding, m.Input.Mask)
	if t := m.Input.Table; t != nil {
		fmt.Fprintf(&b, "table=%+v\n", *t)
	}
	for _, c := range m.Categories {
		fmt.Fprintf(&b, "fields=%q\n", c.Fields)
	}
	return b.String()
}

var (
	probeOnce              sync.Once
	samplerHash, tilesHash string
)

// samplerProbe hashes the dots the sampler places in a fixed shape, and
// rendererProbe the tiles drawn from them: when either changes, so do the
// fingerprints, and a rerun redraws instead of mixing old and new.
func samplerProbe() string  { probes(); return samplerHash }
func rendererProbe() string { probes(); return tilesHash }

func probes() {
	probeOnce.Do(func() {
		f := &geo.Feature{ID: "probe", Geometry: orb.MultiPolygon{{
			{{10, 10}, {10.02, 10}, {10.03, 10.02}, {10, 10.02}, {10, 10}},
			{{10.005, 10.005}, {10.005, 10.01}, {10.01, 10.01}, {10.01, 10.005}, {10.005, 10.005}},
		}}}
		h := sha256.New()
		s := dotstore.New(0)
		sample.Feature(f, []float64{370, 55}, sample.Options{PeoplePerDot: 1, Seed: 7, Streams: []uint64{sample.CategoryStream("a"), sample.CategoryStream("b")}}, func(cat int, p orb.Point) {
			fmt.Fprintf(h, "%d %x %x\n", cat, math.Float64bits(p[0]), math.Float64bits(p[1]))
			s.Add(p[0], p[1], cat)
		})
		samplerHash = hex.EncodeToString(h.Sum(nil))[:16]
		s.Sort()
		dir, err := os.MkdirTemp("", "stipple-probe-")
		if err != nil {
			tilesHash = "unknown"
			return
		}
		defer os.RemoveAll(dir)
		look := func(z int) render.Dot {
			return render.Dot{Diameter: 3 * math.Pow(math.Sqrt2, float64(z-15)), Opacity: 0.9}
		}
		if _, err := tiles.Write(context.Background(), s, tiles.Options{Dir: dir, MinZoom: 9, MaxZoom: 15, TileSize: 256,
			Colors: []color.NRGBA{{0, 0x72, 0xb2, 255}, {0xe6, 0x9f, 0, 255}}, Look: look, Workers: 1}); err != nil {
			tilesHash = "unknown"
			return
		}
		th := sha256.New()
		filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
			if err != nil || d.IsDir() || !strings.HasSuffix(p, ".png") {
				return nil
			}
			data, _ := os.ReadFile(p)
			rel, _ := filepath.Rel(dir, p)
			fmt.Fprintf(th, "%s %d\n", filepath.ToSlash(rel), len(data))
			th.Write(data)
			return nil
		})
		tilesHash = hex.EncodeToString(th.Sum(nil))[:16]
	})
}

// tileFingerprint hashes what the cached tiles depend on besides their
// zoom and place.
func tileFingerprint(dots string, size int, hidpi bool, colors []color.NRGBA, look func(int) render.Dot) string {
	h := sha256.New()
	fmt.Fprintf(h, "dots=%s\nrenderer=%s\nsize=%d\nhidpi=%v\n", dots, rendererProbe(), size, hidpi)
	for _, c := range colors {
		fmt.Fprintf(h, "color=%v\n", c)
	}
	for z := 0; z <= 24; z++ {
		d := look(z)
		fmt.Fprintf(h, "z%d %x %x\n", z, math.Float64bits(d.Diameter), math.Float64bits(d.Opacity))
	}
	return hex.EncodeToString(h.Sum(nil))
}
