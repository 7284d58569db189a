package tiles

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/dotstore"
)

// randomStore makes n dots: half in a few tight clusters (many dots per
// pixel, mixed categories), half spread over a region most of a zoom-4
// tile wide, and a few in the world's corners.
func randomStore(seed uint64, n, ncat int) *dotstore.Store {
	rng := rand.New(rand.NewPCG(seed, seed*7+1))
	var keys []uint64
	cx := make([]float64, 5)
	cy := make([]float64, 5)
	for i := range cx {
		cx[i], cy[i] = 3000+rng.Float64()*150, 1500+rng.Float64()*120
	}
	for i := 0; i < n; i++ {
		var px, py float64
		switch {
		case i%2 == 0:
			k := rng.IntN(len(cx))
			px, py = cx[k]+rng.NormFloat64()*3, cy[k]+rng.NormFloat64()*3
		case i%97 == 1:
			px, py = float64(rng.IntN(2))*(4096-1e-3), float64(rng.IntN(2))*(4096-1e-3)
		default:
			px, py = 2980+rng.Float64()*200, 1480+rng.Float64()*160
		}
		px, py = min(max(px, 0), 4095.999), min(max(py, 0), 4095.999)
		wx, wy := worldAt(4, px, py)
		keys = append(keys, dotstore.Key(wx, wy, rng.IntN(ncat)))
	}
	return sorted(keys)
}

// directCount draws count tile (z, x, y) of size T the plain way: every
// dot of the tile counted into the pixel holding it, then composited and
// encoded like the pyramid does.
func directCount(t *testing.T, src *dotstore.Store, z, x, y, T int, look render.Dot, colors int) []byte {
	t.Helper()
	c := render.NewCanvas(T, T, colors)
	shift := 0
	for 1<<shift < T {
		shift++
	}
	s := dotstore.WorldBits - z - shift
	for _, k := range src.Tile(z, x, y) {
		wx, wy, cat := dotstore.Split(k)
		c.Count(cat, int(wx>>s)-x<<shift, int(wy>>s)-y<<shift)
	}
	tile := render.NewTile(T, T)
	c.CompositeCountsTile(testColors[:colors], look.Mass(), tile)
	var buf bytes.Buffer
	if err := render.NewEncoder().EncodeTile(&buf, tile); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// TestDerivedCountTilesEqualDirectCounts: the pyramid counts dots once at
// its deepest count zoom and sums 2 × 2 blocks for each zoom above; every
// tile it writes, at every zoom, 1× and @2x, must be byte for byte the
// tile counted directly from the tile's own dots, and it must write
// exactly the tiles that hold dots. Random stores, several seeds, worker
// counts and zoom ranges (one where a disc zoom lies between count zooms).
func TestDerivedCountTilesEqualDirectCounts(t *testing.T) {
	cases := []struct {
		seed             uint64
		n, ncat, workers int
		minZ, maxZ, disc int // disc: a zoom drawn as discs (−1: none)
		size             int
	}{
		{1, 20000, 3, 1, 0, 9, -1, 256},
		{2, 40000, 3, 2, 0, 10, -1, 256},
		{3, 15000, 2, 3, 2, 9, 5, 256},
		{4, 10000, 3, 2, 0, 8, -1, 512},
	}
	for _, tc := range cases {
		src := randomStore(tc.seed, tc.n, tc.ncat)
		look := func(z int) render.Dot {
			if z == tc.disc {
				return render.Dot{Diameter: 1.5, Opacity: 0.8}
			}
			return render.Dot{Diameter: 0.3 + 0.05*float64(z), Opacity: 0.9}
		}
		dir := t.TempDir()
		st, err := Write(context.Background(), src, Options{Dir: dir, MinZoom: tc.minZ, MaxZoom: tc.maxZ, TileSize: tc.size,
			Colors: testColors[:tc.ncat], Look: look, HiDPI: true, Workers: tc.workers})
		if err != nil {
			t.Fatal(err)
		}
		checked := 0
		for z := tc.minZ; z <= tc.maxZ; z++ {
			if z == tc.disc {
				continue
			}
			n := 0
			src.EachTile(z, func(x, y int, _ []uint64) {
				n++
				for _, k := range []struct {
					suffix string
					size   int
					look   render.Dot
				}{{"", tc.size, look(z)}, {"@2x", 2 * tc.size, render.Dot{Diameter: 2 * look(z).Diameter, Opacity: look(z).Opacity}}} {
					if k.look.Diameter >= 1 {
						continue
					}
					got, err := os.ReadFile(filepath.Join(dir, filepath.FromSlash(TilePath(z, x, y, k.suffix))))
					if err != nil {
						t.Fatalf("seed %d: %v", tc.seed, err)
					}
					if want := directCount(t, src, z, x, y, k.size, k.look, tc.ncat); !bytes.Equal(got, want) {
						t.Fatalf("seed %d: tile %d/%d/%d%s differs from the directly counted one", tc.seed, z, x, y, k.suffix)
					}
					checked++
				}
			})
			if st.PerZoom[z] != int64(n) {
				t.Errorf("seed %d zoom %d: %d tiles written; %d tiles hold dots", tc.seed, z, st.PerZoom[z], n)
			}
		}
		if checked < 50 {
			t.Errorf("seed %d: only %d tiles compared", tc.seed, checked)
		}
	}
}

// TestKillDuringDerivedZoomResumes stops a write while a zoom summed from
// the one below is part-written (a deeper zoom done or not), resumes it,
// and compares with an uninterrupted write: same files, same bytes.
func TestKillDuringDerivedZoomResumes(t *testing.T) {
	src := randomStore(9, 30000, 3)
	look := func(z int) render.Dot {
		return render.Dot{Diameter: 2.5 * math.Pow(math.Sqrt2, float64(z-11)), Opacity: 0.9}
	}
	opt := Options{MinZoom: 0, MaxZoom: 9, TileSize: 256, Colors: testColors, Look: look, Workers: 1, Fingerprint: "f"}
	ref := t.TempDir()
	o := opt
	o.Dir = ref
	want, err := Write(context.Background(), src, o)
	if err != nil {
		t.Fatal(err)
	}
	var deep int // deepest count zoom
	for z := 0; z <= 9; z++ {
		if look(z).Diameter < 1 {
			deep = z
		}
	}
	if deep < 3 {
		t.Fatalf("deepest count zoom %d; the test needs zooms summed from below", deep)
	}
	var countTiles int64
	for z := 0; z <= deep; z++ {
		countTiles += want.PerZoom[z]
	}
	for _, frac := range []int64{3, 2} {
		dir := t.TempDir()
		o.Dir = dir
		ctx, cancel := context.WithCancel(context.Background())
		stopAt := countTiles / frac
		o.Progress = func(s Stats) {
			if s.Tiles >= stopAt {
				cancel()
			}
		}
		if _, err := Write(ctx, src, o); err == nil {
			t.Fatal("a cancelled write reported no error")
		}
		cancel()
		// Some derived zoom (above deep) must be begun and not done, with
		// tiles of it on disk, or the test tests nothing.
		var m manifest
		data, err := os.ReadFile(manifestPath(dir))
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(data, &m); err != nil {
			t.Fatal(err)
		}
		partial := -1
		for z := 0; z < deep; z++ {
			if _, done := m.Done[zoomKey(z, "")]; done {
				continue
			}
			if cols, _ := os.ReadDir(filepath.Join(dir, zoomKey(z, ""))); len(cols) > 0 {
				partial = z
			}
		}
		if partial < 0 {
			t.Fatalf("stopped at %d of %d count tiles with no derived zoom part-written (done: %v)", stopAt, countTiles, m.Done)
		}
		o.Progress = nil
		got, err := Write(context.Background(), src, o)
		if err != nil {
			t.Fatal(err)
		}
		if got.Kept == 0 || got.Tiles != want.Tiles || got.Bytes != want.Bytes {
			t.Errorf("resumed: %d kept, %d tiles, %d bytes; uninterrupted %d tiles, %d bytes", got.Kept, got.Tiles, got.Bytes, want.Tiles, want.Bytes)
		}
		compareTrees(t, ref, dir)
	}
}
