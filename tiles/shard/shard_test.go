package shard

import (
	"bytes"
	"context"
	"fmt"
	"image/color"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/maptile"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// look is a dot schedule like the map files': 3 px at max zoom, √2 less
// per zoom out, fading below 0.6 px.
func look(maxZ int) func(int) render.Dot {
	return func(z int) render.Dot {
		d := 3 * math.Pow(math.Sqrt2, float64(z-maxZ))
		o := 0.9
		if d < 0.6 {
			o *= (d / 0.6) * (d / 0.6)
			d = 0.6
		}
		return render.Dot{Diameter: d, Opacity: o}
	}
}

// invented areas: small boxes scattered over a made-up region, with
// lognormal dot counts, plus a few wide ones.
func inventedAreas(seed uint64, n int) []Area {
	rng := rand.New(rand.NewPCG(seed, 1))
	var out []Area
	for i := 0; i < n; i++ {
		lon, lat := -20+40*rng.Float64(), -10+30*rng.Float64()
		w := 0.05 + 0.5*rng.Float64()
		b := orb.Bound{Min: orb.Point{lon, lat}, Max: orb.Point{lon + w, lat + w}}
		out = append(out, Area{Bound: b, Dots: math.Round(200 * math.Exp(rng.NormFloat64()))})
	}
	return out
}

var colors = []color.NRGBA{{230, 159, 0, 255}, {86, 180, 233, 255}, {0, 158, 115, 255}}

// bestCut is the plain reference for cut: the smallest largest sum over
// every way to cut the weights into n non-empty runs (exhaustive).
func bestCut(w []float64, n int) float64 {
	if n == 1 {
		s := 0.0
		for _, v := range w {
			s += v
		}
		return s
	}
	best := math.Inf(1)
	s := 0.0
	for i := 0; i < len(w)-n+1; i++ {
		s += w[i]
		best = math.Min(best, math.Max(s, bestCut(w[i+1:], n-1)))
	}
	return best
}

func TestCutIsOptimal(t *testing.T) {
	const seed = 3
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 2))
	for trial := 0; trial < 200; trial++ {
		nb := 1 + rng.IntN(12)
		n := 1 + rng.IntN(min(nb, 4))
		blocks := make([]block, nb)
		w := make([]float64, nb)
		for i := range blocks {
			w[i] = float64(rng.IntN(100))
			blocks[i] = block{uint64(i), w[i]}
		}
		l, err := cut(blocks, 3, n)
		if err != nil {
			t.Fatal(err)
		}
		most := slices.Max(l.Weight)
		if want := bestCut(w, n); math.Abs(most-want) > 1e-6*math.Max(want, 1) {
			t.Fatalf("weights %v into %d: largest part %v; the best cut has %v", w, n, most, want)
		}
		for i := 0; i < n; i++ {
			if l.Lo[i] >= l.Lo[i+1] {
				t.Fatalf("part %d is empty: %v", i, l.Lo)
			}
		}
	}
}

// TestPlanBalancesByDots: on invented areas the largest part's estimated
// work stays within 1.25× the mean for 2, 4 and 16 parts, and the parts'
// estimated dots add up to every dot.
func TestPlanBalancesByDots(t *testing.T) {
	areas := inventedAreas(7, 3000)
	total := 0.0
	for _, a := range areas {
		total += a.Dots
	}
	p := Pyramid{MinZoom: 0, MaxZoom: 14, TileSize: 256, Look: look(14)}
	for _, n := range []int{1, 2, 4, 16} {
		l, err := Plan(areas, p, PlanOptions{Shards: n})
		if err != nil {
			t.Fatal(err)
		}
		sum := 0.0
		for _, w := range l.Dots {
			sum += w
		}
		if math.Abs(sum-total) > 1e-6*total {
			t.Errorf("%d parts: estimated dots add to %v; want %v", n, sum, total)
		}
		if l.Imbalance() > 1.25 {
			t.Errorf("%d parts at split %d: imbalance %.3f", n, l.Split, l.Imbalance())
		}
		if l.Split > p.FirstDisc() {
			t.Errorf("split zoom %d is past the first disc zoom %d", l.Split, p.FirstDisc())
		}
		t.Logf("%d parts: split %d, %d blocks, imbalance %.3f", n, l.Split, l.Blocks, l.Imbalance())
	}
	// Too many parts for the blocks there are.
	if _, err := Plan(areas[:3], p, PlanOptions{Shards: 64, MaxSplit: 2}); err == nil {
		t.Error("64 parts of 3 small areas at split ≤ 2 accepted")
	}
}

func TestFirstDiscAndMargin(t *testing.T) {
	// 3 px at z14 → 2.12 px at z13, 1.5 at z12, 1.06 at z11, 0.75 at z10.
	p := Pyramid{MinZoom: 0, MaxZoom: 14, TileSize: 256, Look: look(14)}
	if got := p.FirstDisc(); got != 11 {
		t.Errorf("FirstDisc = %d; want 11", got)
	}
	p.HiDPI = true // @2x dots are twice as wide: the 0.6 px floor is 1.2 px
	if got := p.FirstDisc(); got != 0 {
		t.Errorf("FirstDisc with @2x = %d; want 0 (discs at every zoom)", got)
	}
	p.HiDPI = false
	// At split 11 the widest reach in world cells is at z11: a 1.06 px dot
	// has reach ceil(0.53+0.5)+1 = 3 (render.NewStamp), plus 2 pixels of
	// slack, times 2^(29−11−8) cells a pixel.
	if got, want := p.Margin(11), uint32(5<<10); got != want {
		t.Errorf("Margin(11) = %d; want %d", got, want)
	}
	allCount := Pyramid{MinZoom: 0, MaxZoom: 5, TileSize: 256, Look: func(int) render.Dot { return render.Dot{Diameter: 0.5, Opacity: 1} }}
	if allCount.FirstDisc() != 6 || allCount.Margin(3) != 0 {
		t.Errorf("all count zooms: FirstDisc %d, Margin %d; want 6, 0", allCount.FirstDisc(), allCount.Margin(3))
	}
}

// rectDist is the Chebyshev distance in cells from (x, y) to the block
// (bx, by) of zoom s, with columns wrapping around the world.
func rectDist(s int, bx, by int, x, y uint32) int64 {
	size := int64(1) << (dotstore.WorldBits - s)
	ws := int64(dotstore.WorldSize)
	x0, y0 := int64(bx)*size, int64(by)*size
	d := func(v, lo int64) int64 {
		if v < lo {
			return lo - v
		}
		if v >= lo+size {
			return v - (lo + size - 1)
		}
		return 0
	}
	dx := min(d(int64(x), x0), d(int64(x)+ws, x0), d(int64(x)-ws, x0))
	return max(dx, d(int64(y), y0))
}

// TestKeepsMatchesBruteForce compares Keeps with a scan of every block.
func TestKeepsMatchesBruteForce(t *testing.T) {
	const seed = 5
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 3))
	s := 3
	nb := 1 << s
	var blocks []block
	for by := 0; by < nb; by++ {
		for bx := 0; bx < nb; bx++ {
			blocks = append(blocks, block{morton(s, bx, by), float64(1 + rng.IntN(9))})
		}
	}
	slices.SortFunc(blocks, func(a, b block) int { return int(a.code) - int(b.code) })
	l, err := cut(blocks, s, 5)
	if err != nil {
		t.Fatal(err)
	}
	l.Margin = 1 << 20 // 1/64 of a block of zoom 3
	for trial := 0; trial < 20000; trial++ {
		var x, y uint32
		switch trial % 3 {
		case 0: // anywhere
			x, y = uint32(rng.IntN(dotstore.WorldSize)), uint32(rng.IntN(dotstore.WorldSize))
		case 1: // near a block edge
			b := uint32(1) << (dotstore.WorldBits - s)
			x = uint32(rng.IntN(nb))*b + uint32(rng.IntN(3<<20)) - 3<<19
			y = uint32(rng.IntN(dotstore.WorldSize))
			x %= dotstore.WorldSize
		default: // near the antimeridian
			x = uint32(rng.IntN(2 << 20))
			if rng.IntN(2) == 0 {
				x = dotstore.WorldSize - 1 - x
			}
			y = uint32(rng.IntN(dotstore.WorldSize))
		}
		for i := 0; i < l.Shards; i++ {
			want := false
			for by := 0; by < nb && !want; by++ {
				for bx := 0; bx < nb; bx++ {
					if l.BlockOwner(bx, by) == i && rectDist(s, bx, by, x, y) <= int64(l.Margin) {
						want = true
						break
					}
				}
			}
			if got := l.Keeps(i, x, y); got != want {
				t.Fatalf("Keeps(%d, %d, %d) = %v; brute force says %v", i, x, y, got, want)
			}
		}
	}
}

// TestOwnedKeysAreTheOwnersDots compares the contiguous run with a filter.
func TestOwnedKeysAreTheOwnersDots(t *testing.T) {
	areas := inventedAreas(11, 400)
	l, err := Plan(areas, Pyramid{MinZoom: 2, MaxZoom: 12, TileSize: 256, Look: look(12)}, PlanOptions{Shards: 4})
	if err != nil {
		t.Fatal(err)
	}
	keys := randomKeys(3, 50000)
	seen := 0
	for i := 0; i < l.Shards; i++ {
		var want []uint64
		for _, k := range keys {
			x, y, _ := dotstore.Split(k)
			if l.OwnerAt(x, y) == i {
				want = append(want, k)
			}
		}
		got := l.OwnedKeys(keys, i)
		if !slices.Equal(got, want) {
			t.Fatalf("part %d: OwnedKeys has %d keys; the filter %d", i, len(got), len(want))
		}
		seen += len(got)
	}
	if seen != len(keys) {
		t.Errorf("parts own %d of %d keys", seen, len(keys))
	}
}

// randomKeys are sorted dot keys over the invented region, in 3
// categories.
func randomKeys(seed uint64, n int) []uint64 {
	rng := rand.New(rand.NewPCG(seed, 4))
	keys := make([]uint64, n)
	for i := range keys {
		// Clusters, so that some pixels hold many dots.
		cx, cy := -20+40*rng.Float64(), -10+30*rng.Float64()
		if rng.IntN(2) == 0 {
			cx, cy = 3+0.01*rng.NormFloat64(), 5+0.01*rng.NormFloat64()
		}
		x, y := dotstore.World(cx, cy)
		keys[i] = dotstore.Key(x, y, rng.IntN(3))
	}
	slices.Sort(keys)
	return keys
}

func TestSummarizeAndCodec(t *testing.T) {
	keys := randomKeys(9, 20000)
	const level = 14
	s := Summarize(keys, level)
	// Reference: a map from (pixel, category) to count.
	want := map[[3]uint32]uint64{}
	for _, k := range keys {
		x, y, c := dotstore.Split(k)
		want[[3]uint32{x >> (29 - level), y >> (29 - level), uint32(c)}]++
	}
	if len(s.Keys) != len(want) {
		t.Fatalf("%d entries; want %d", len(s.Keys), len(want))
	}
	for i, k := range s.Keys {
		x, y, c := dotstore.Split(k)
		if x&(1<<(29-level)-1) != 0 || y&(1<<(29-level)-1) != 0 {
			t.Fatalf("entry %d is not a pixel corner", i)
		}
		if got, w := s.Counts[i], want[[3]uint32{x >> (29 - level), y >> (29 - level), uint32(c)}]; got != w {
			t.Fatalf("entry %d: count %d; want %d", i, got, w)
		}
	}
	if s.Dots() != uint64(len(keys)) {
		t.Errorf("Dots = %d; want %d", s.Dots(), len(keys))
	}
	b, err := s.MarshalBinary()
	if err != nil {
		t.Fatal(err)
	}
	var back Summary
	if err := back.UnmarshalBinary(b); err != nil {
		t.Fatal(err)
	}
	if back.Level != level || !slices.Equal(back.Keys, s.Keys) || !slices.Equal(back.Counts, s.Counts) {
		t.Fatal("round trip changed the summary")
	}
	t.Logf("%d dots → %d entries, %d bytes", len(keys), len(s.Keys), len(b))
	// Merging two halves gives the whole.
	a, c := Summarize(keys[:len(keys)/2], level), Summarize(keys[len(keys)/2:], level)
	m, err := Merge(a, c)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(m.Keys, s.Keys) || !slices.Equal(m.Counts, s.Counts) {
		t.Fatal("merged halves differ from the whole")
	}
	if _, err := Merge(a, Summarize(keys, level-1)); err == nil {
		t.Error("merged summaries of two levels")
	}
	for name, bad := range map[string][]byte{
		"empty":     nil,
		"magic":     []byte("STIPSUM2\x00\x00"),
		"cut":       b[:len(b)-3],
		"stray":     append(slices.Clone(b), 0),
		"too many":  append([]byte(summaryMagic), 14, 0xff, 0xff, 0xff, 0x0f),
		"level":     append([]byte(summaryMagic), 40, 0),
		"repeating": append([]byte(summaryMagic), 14, 2, 5, 1, 0, 1),
	} {
		var x Summary
		if err := x.UnmarshalBinary(bad); err == nil {
			t.Errorf("%s: decoded without error", name)
		}
	}
}

// treeFiles reads every file under dir except stipple's state folder.
func treeFiles(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && d.Name() == tiles.StateDir {
			return filepath.SkipDir
		}
		if !d.IsDir() {
			rel, _ := filepath.Rel(dir, p)
			b, _ := os.ReadFile(p)
			out[filepath.ToSlash(rel)] = b
		}
		return nil
	})
	return out
}

// TestPartsAndFinalStepEqualOneWrite: tiles.Write of all dots is the
// reference. Each part keeps its dots (Keeps) and writes zooms split…max
// with a Keep of its own tiles: it must write those and no other, equal to
// the reference's, and the final step's tiles of
// zooms min…split−1, drawn from the parts' summaries, too. Dots sit on
// both sides of the antimeridian, where tiles wrap.
func TestPartsAndFinalStepEqualOneWrite(t *testing.T) {
	ctx := context.Background()
	for _, hidpi := range []bool{false, true} {
		t.Run(fmt.Sprintf("hidpi=%v", hidpi), func(t *testing.T) {
			const maxZ = 8
			p := Pyramid{MinZoom: 1, MaxZoom: maxZ, TileSize: 256, HiDPI: hidpi, Look: look(maxZ)}
			keys := randomKeys(21, 12000)
			rng := rand.New(rand.NewPCG(21, 9))
			for i := 0; i < 3000; i++ { // both sides of 180°
				lon := 179.9 + 0.2*rng.Float64()
				if lon > 180 {
					lon -= 360
				}
				x, y := dotstore.World(lon, 51+rng.Float64())
				keys = append(keys, dotstore.Key(x, y, rng.IntN(3)))
			}
			slices.Sort(keys)
			// One area per occupied tile of zoom 8, holding its dots.
			var areas []Area
			dotstore.TilesOf(keys, 8, func(x, y int, k []uint64) {
				b := maptile.New(uint32(x), uint32(y), 8).Bound()
				e := 1e-9
				b.Min[0], b.Min[1], b.Max[0], b.Max[1] = b.Min[0]+e, b.Min[1]+e, b.Max[0]-e, b.Max[1]-e
				areas = append(areas, Area{Bound: b, Dots: float64(len(k))})
			})
			split := p.FirstDisc()
			l, err := cut(weigh(areas, split, func(int) []orb.Point { return nil }, func(i int) float64 { return areas[i].Dots }), split, 3)
			if err != nil {
				t.Fatal(err)
			}
			l.MinZoom, l.MaxZoom, l.Pyramid, l.Margin = p.MinZoom, p.MaxZoom, p, p.Margin(split)
			t.Logf("split %d, margin %d cells, weights %v", split, l.Margin, l.Weight)

			root := t.TempDir()
			ref, union := filepath.Join(root, "ref"), filepath.Join(root, "union")
			opt := tiles.Options{Dir: ref, MinZoom: p.MinZoom, MaxZoom: maxZ, TileSize: 256, Colors: colors, Look: p.Look, HiDPI: hidpi, Workers: 2}
			if _, err := tiles.Write(ctx, dotstore.FromSorted(keys), opt); err != nil {
				t.Fatal(err)
			}
			var sums []*Summary
			for i := 0; i < l.Shards; i++ {
				var kept []uint64
				for _, k := range keys {
					if x, y, _ := dotstore.Split(k); l.Keeps(i, x, y) {
						kept = append(kept, k)
					}
				}
				part := filepath.Join(root, fmt.Sprint("part", i))
				o := opt
				o.Dir, o.MinZoom = part, split
				o.Keep = func(z, x, y int) bool { return l.Owner(z, x, y) == i }
				if _, err := tiles.Write(ctx, dotstore.FromSorted(kept), o); err != nil {
					t.Fatal(err)
				}
				for path, b := range treeFiles(t, part) {
					var z, x, y int
					fmt.Sscanf(path, "%d/%d/%d", &z, &x, &y)
					if l.Owner(z, x, y) != i {
						t.Errorf("part %d drew %s, which part %d owns", i, path, l.Owner(z, x, y))
						continue
					}
					dst := filepath.Join(union, filepath.FromSlash(path))
					os.MkdirAll(filepath.Dir(dst), 0o755)
					os.WriteFile(dst, b, 0o644)
				}
				sums = append(sums, Summarize(l.OwnedKeys(kept, i), l.Level()))
			}
			merged, err := Merge(sums...)
			if err != nil {
				t.Fatal(err)
			}
			if merged.Dots() != uint64(len(keys)) {
				t.Fatalf("summaries hold %d dots; want %d", merged.Dots(), len(keys))
			}
			if _, err := RenderLow(ctx, merged, l, sink.NewDir(union), LowOptions{Colors: colors, Workers: 2}); err != nil {
				t.Fatal(err)
			}
			want, got := treeFiles(t, ref), treeFiles(t, union)
			if len(want) < 50 {
				t.Fatalf("reference has only %d tiles", len(want))
			}
			bad := 0
			for path, b := range want {
				if !bytes.Equal(got[path], b) {
					if bad < 5 {
						t.Errorf("%s differs (%d vs %d bytes)", path, len(got[path]), len(b))
					}
					bad++
				}
			}
			for path := range got {
				if _, ok := want[path]; !ok {
					t.Errorf("%s is extra", path)
				}
			}
			if bad > 0 {
				t.Fatalf("%d of %d tiles differ", bad, len(want))
			}
			t.Logf("%d tiles identical", len(want))
		})
	}
}
