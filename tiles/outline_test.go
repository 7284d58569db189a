package tiles

import (
	"bytes"
	"context"
	"image/png"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/demo"
)

// refCoverage is the plain reference for outlinePen.segment: every pixel of
// the buffer, the distance from its centre to the nearest of the (unclipped)
// segments, through the same ramp.
func refCoverage(p outlinePen, w, h int, segs [][4]float64) []float32 {
	out := make([]float32, w*h)
	for py := 0; py < h; py++ {
		for px := 0; px < w; px++ {
			xc, yc := float64(px)+0.5, float64(py)+0.5
			best := math.Inf(1)
			for _, s := range segs {
				dx, dy := s[2]-s[0], s[3]-s[1]
				t := 0.0
				if l := dx*dx + dy*dy; l > 0 {
					t = math.Max(0, math.Min(1, ((xc-s[0])*dx+(yc-s[1])*dy)/l))
				}
				best = math.Min(best, math.Hypot(s[0]+t*dx-xc, s[1]+t*dy-yc))
			}
			out[py*w+px] = p.coverage(best)
		}
	}
	return out
}

func TestOutlinePenMatchesReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	const w, h = 48, 40
	for _, width := range []float64{0.5, 1, 1.7, 3} {
		p := newOutlinePen(width)
		for trial := 0; trial < 60; trial++ {
			var segs [][4]float64
			for i := 0; i < 1+trial%5; i++ {
				s := [4]float64{rng.Float64()*80 - 16, rng.Float64()*70 - 15, rng.Float64()*80 - 16, rng.Float64()*70 - 15}
				switch i % 4 {
				case 1:
					s[3] = s[1] // horizontal
				case 2:
					s[2] = s[0] // vertical
				case 3:
					s[0], s[2] = s[0]*40-900, s[2]*40+900 // long, far past the buffer
				}
				segs = append(segs, s)
			}
			got := make([]float32, w*h)
			for _, s := range segs {
				p.segment(got, w, h, s[0], s[1], s[2], s[3])
			}
			want := refCoverage(p, w, h, segs)
			for i := range got {
				if math.Abs(float64(got[i]-want[i])) > 1e-5 {
					t.Fatalf("width %v trial %d pixel (%d,%d): coverage %v; reference %v (segments %v)", width, trial, i%w, i/w, got[i], want[i], segs)
				}
			}
		}
	}
}

func TestClipSegment(t *testing.T) {
	for _, c := range []struct {
		in   [4]float64
		ok   bool
		want [4]float64
	}{
		{[4]float64{1, 1, 5, 5}, true, [4]float64{1, 1, 5, 5}},         // inside
		{[4]float64{-5, 5, 15, 5}, true, [4]float64{0, 5, 10, 5}},      // through, horizontal
		{[4]float64{5, -10, 5, 20}, true, [4]float64{5, 0, 5, 10}},     // through, vertical
		{[4]float64{-10, -10, 20, 20}, true, [4]float64{0, 0, 10, 10}}, // diagonal through corners
		{[4]float64{-5, 12, 15, 12}, false, [4]float64{}},              // above
		{[4]float64{11, -3, 30, 8}, false, [4]float64{}},               // right of it
		{[4]float64{-4, 6, 6, -4}, true, [4]float64{0, 2, 2, 0}},       // cuts a corner
	} {
		ok, ax, ay, bx, by := clipSegment(c.in[0], c.in[1], c.in[2], c.in[3], 0, 0, 10, 10)
		got := [4]float64{ax, ay, bx, by}
		if ok != c.ok || (ok && got != c.want) {
			t.Errorf("clip %v: %v %v; want %v %v", c.in, ok, got, c.ok, c.want)
		}
	}
}

func TestWriteOutlinesDrawsTheBoundary(t *testing.T) {
	// A square from 10°W to 10°E and 10°S to 10°N: at zoom 2 its edges cross
	// the four tiles around the origin (OSM "Slippy map tilenames": x, y 1–2).
	sq := orb.MultiPolygon{{{{-10, -10}, {10, -10}, {10, 10}, {-10, 10}, {-10, -10}}}}
	dir := t.TempDir()
	st, err := WriteOutlines(context.Background(), []orb.MultiPolygon{sq}, OutlineOptions{Dir: dir, MinZoom: 2, MaxZoom: 2, TileSize: 256, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	filepath.WalkDir(filepath.Join(dir, OutlineDir), func(p string, d fs.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			r, _ := filepath.Rel(dir, p)
			got = append(got, filepath.ToSlash(r))
		}
		return nil
	})
	want := []string{"outline/2/1/1.png", "outline/2/1/2.png", "outline/2/2/1.png", "outline/2/2/2.png"}
	if len(got) != 4 || st.Tiles != 4 {
		t.Fatalf("tiles %v (stats %d); want %v", got, st.Tiles, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Fatalf("tiles %v; want %v", got, want)
		}
	}
	f, _ := os.ReadFile(filepath.Join(dir, "outline/2/1/1.png"))
	img, err := png.Decode(bytes.NewReader(f))
	if err != nil {
		t.Fatal(err)
	}
	// The west edge at 10°W: world x = 170/360 of 1024 px = 483.56 px, so
	// tile 1 column 227 (centre 227.5) lies 0.056 px from it: coverage 0.944.
	// The edge runs from 10°N (world y 483.4 px, row 227 of tile y 1) down
	// to the equator (the tile's bottom); take row 245.
	x := (170.0/360*1024 - 256)
	d := math.Abs(227.5 - x)
	wantA := uint8(float32(1-d)*float32(OutlineColor.A) + 0.5)
	_, _, _, a := img.At(227, 245).RGBA()
	if uint8(a>>8) != wantA {
		t.Errorf("alpha at the west edge %d; want %d", a>>8, wantA)
	}
	for _, p := range [][2]int{{100, 245}, {250, 100}, {229, 245}, {225, 245}, {227, 200}} {
		if _, _, _, a := img.At(p[0], p[1]).RGBA(); a != 0 {
			t.Errorf("pixel %v away from the edge has alpha %d", p, a>>8)
		}
	}
}

func TestWriteOutlinesSameForAnyWorkers(t *testing.T) {
	city := demo.City(1)
	var polys []orb.MultiPolygon
	for _, f := range city.Features {
		polys = append(polys, f.Geometry)
	}
	read := func(workers int) map[string][]byte {
		dir := t.TempDir()
		if _, err := WriteOutlines(context.Background(), polys, OutlineOptions{Dir: dir, MinZoom: 11, MaxZoom: 12, TileSize: 512, Workers: workers}); err != nil {
			t.Fatal(err)
		}
		out := map[string][]byte{}
		filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
			if err == nil && !d.IsDir() {
				b, _ := os.ReadFile(p)
				r, _ := filepath.Rel(dir, p)
				out[r] = b
			}
			return nil
		})
		return out
	}
	a, b := read(1), read(3)
	if len(a) == 0 || len(a) != len(b) {
		t.Fatalf("%d tiles with one worker, %d with three", len(a), len(b))
	}
	for k, v := range a {
		if !bytes.Equal(v, b[k]) {
			t.Errorf("%s differs between worker counts", k)
		}
	}
}

func TestWriteOutlinesRefuses(t *testing.T) {
	for _, o := range []OutlineOptions{{TileSize: 300}, {TileSize: 256, MinZoom: 5, MaxZoom: 3}, {TileSize: 256, Width: -1}, {TileSize: 256, Width: 40}} {
		if _, err := WriteOutlines(context.Background(), nil, o); err == nil {
			t.Errorf("options %+v taken", o)
		}
	}
	// Rings with NaN corners are skipped, not drawn across the world.
	bad := orb.MultiPolygon{{{{0, 0}, {math.NaN(), 1}, {1, 1}, {0, 0}}}}
	if n := len(outlineSegments([]orb.MultiPolygon{bad})); n != 1 {
		t.Errorf("%d segments from a ring with a NaN corner; want the 1 finite edge", n)
	}
}

func BenchmarkOutlineDemoZoom13(b *testing.B) {
	city := demo.City(1)
	var polys []orb.MultiPolygon
	for _, f := range city.Features {
		polys = append(polys, f.Geometry)
	}
	dir := b.TempDir()
	b.ReportAllocs()
	var tiles int64
	for b.Loop() {
		st, err := WriteOutlines(context.Background(), polys, OutlineOptions{Dir: dir, MinZoom: 13, MaxZoom: 13, TileSize: 256, Workers: 1})
		if err != nil {
			b.Fatal(err)
		}
		tiles = st.Tiles
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(int64(b.N)*tiles), "ns/tile")
}

func BenchmarkOutlinePenTile(b *testing.B) {
	// One tile's worth of short boundary edges, as at zoom 13 in the demo.
	rng := rand.New(rand.NewPCG(1, 2))
	segs := make([][4]float64, 400)
	for i := range segs {
		x, y := rng.Float64()*256, rng.Float64()*256
		segs[i] = [4]float64{x, y, x + rng.Float64()*40 - 20, y + rng.Float64()*40 - 20}
	}
	p := newOutlinePen(1)
	cov := make([]float32, 256*256)
	b.ReportAllocs()
	for b.Loop() {
		clear(cov)
		for _, s := range segs {
			p.segment(cov, 256, 256, s[0], s[1], s[2], s[3])
		}
	}
}

// BenchmarkOutlinePenTileReference is the naive baseline: the reference
// coverage, every pixel against every edge.
func BenchmarkOutlinePenTileReference(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	segs := make([][4]float64, 400)
	for i := range segs {
		x, y := rng.Float64()*256, rng.Float64()*256
		segs[i] = [4]float64{x, y, x + rng.Float64()*40 - 20, y + rng.Float64()*40 - 20}
	}
	p := newOutlinePen(1)
	b.ReportAllocs()
	for b.Loop() {
		refCoverage(p, 256, 256, segs)
	}
}
