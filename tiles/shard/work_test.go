package shard

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/paulmach/orb"
)

// runCost is the plain reference for a run's cost in cutShared: its blocks'
// work plus every item with a span meeting blocks a … b−1.
func runCost(w []float64, items []shared, a, b int) float64 {
	c := 0.0
	for _, v := range w[a:b] {
		c += v
	}
	for _, it := range items {
		for _, sp := range it.spans {
			if sp[0] < b && sp[1] >= a {
				c += it.w
				break
			}
		}
	}
	return c
}

// bestSharedCut is the smallest largest run cost over every way to cut the
// blocks a … len(w)−1 into n non-empty runs (exhaustive).
func bestSharedCut(w []float64, items []shared, a, n int) float64 {
	if n == 1 {
		return runCost(w, items, a, len(w))
	}
	best := math.Inf(1)
	for b := a + 1; b <= len(w)-n+1; b++ {
		best = math.Min(best, math.Max(runCost(w, items, a, b), bestSharedCut(w, items, b, n-1)))
	}
	return best
}

// TestCutSharedIsOptimal compares cutShared with an exhaustive search on
// random blocks and shared items, and checks the layout's weights are the
// runs' costs.
func TestCutSharedIsOptimal(t *testing.T) {
	const seed = 17
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 4))
	for trial := 0; trial < 300; trial++ {
		nb := 1 + rng.IntN(10)
		n := 1 + rng.IntN(min(nb, 4))
		blocks := make([]block, nb)
		w := make([]float64, nb)
		for i := range blocks {
			w[i] = float64(rng.IntN(100))
			blocks[i] = block{uint64(i), w[i]}
		}
		items := make([]shared, rng.IntN(6))
		for k := range items {
			items[k].w = float64(rng.IntN(150))
			at := 0
			for at < nb && len(items[k].spans) < 3 {
				a := at + rng.IntN(nb-at)
				b := a + rng.IntN(nb-a)
				items[k].spans = append(items[k].spans, [2]int{a, b})
				at = b + 2
			}
		}
		l, err := cutShared(blocks, items, 3, n)
		if err != nil {
			t.Fatal(err)
		}
		most := slices.Max(l.Weight)
		if want := bestSharedCut(w, items, 0, n); math.Abs(most-want) > 1e-6*math.Max(want, 1) {
			t.Fatalf("weights %v, items %v into %d: largest part %v; the best cut has %v", w, items, n, most, want)
		}
		for i := 0; i < n; i++ {
			if l.Lo[i] >= l.Lo[i+1] {
				t.Fatalf("part %d is empty: %v", i, l.Lo)
			}
			a, b := int(l.Lo[i]), min(int(l.Lo[i+1]), nb)
			if c := runCost(w, items, a, b); math.Abs(c-l.Weight[i]) > 1e-9*math.Max(c, 1) {
				t.Fatalf("weights %v, items %v into %d: part %d weighs %v; its blocks and items cost %v", w, items, n, i, l.Weight[i], c)
			}
		}
	}
}

// TestSampledByMatchesTouches: on invented areas (some wide, some across
// the antimeridian) the blocks sampledBy names for an area are exactly
// those whose part Layout.Touches says samples it, for any cut.
func TestSampledByMatchesTouches(t *testing.T) {
	const seed = 23
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 5))
	areas := inventedAreas(29, 300)
	for k := 0; k < 20; k++ {
		lon, lat := -180+360*rng.Float64(), -60+120*rng.Float64()
		w, h := 40*rng.Float64(), 20*rng.Float64()
		areas = append(areas, Area{Bound: orb.Bound{Min: orb.Point{lon, lat}, Max: orb.Point{math.Min(lon+w, 180), math.Min(lat+h, 85)}}, Dots: 50})
	}
	areas = append(areas,
		Area{Bound: orb.Bound{Min: orb.Point{-180, 50}, Max: orb.Point{-170, 55}}, Dots: 10},
		Area{Bound: orb.Bound{Min: orb.Point{175, 50}, Max: orb.Point{180, 52}}, Dots: 10},
		Area{Bound: orb.Bound{Min: orb.Point{-180, -20}, Max: orb.Point{180, -10}}, Dots: 10})
	for i := range areas {
		areas[i].Dots = math.Max(areas[i].Dots, 1)
	}
	for _, s := range []int{2, 4, 6} {
		blocks := weigh(areas, s, func(int) []orb.Point { return nil }, func(i int) float64 { return areas[i].Dots })
		margin := uint32(1) << (26 - s) // an eighth of a block
		items := sampledBy(areas, s, margin, blocks, func(i int) float64 { return float64(i) })
		if len(items) != len(areas) {
			t.Fatalf("split %d: %d items for %d areas", s, len(items), len(areas))
		}
		for _, n := range []int{1, 3, 7} {
			l, err := cutShared(blocks, nil, s, n)
			if err != nil {
				t.Fatal(err)
			}
			l.Margin = margin
			// The first block of each part, as indices into blocks.
			first := make([]int, n+1)
			for k := 1; k < n; k++ {
				first[k], _ = slices.BinarySearchFunc(blocks, l.Lo[k], func(b block, c uint64) int { return int(int64(b.code) - int64(c)) })
			}
			first[n] = len(blocks)
			for ai, a := range areas {
				it := items[ai]
				for i := 0; i < n; i++ {
					got := false
					for _, sp := range it.spans {
						got = got || (sp[0] < first[i+1] && sp[1] >= first[i])
					}
					if want := l.Touches(i, a.Bound); got != want {
						t.Fatalf("split %d, %d parts, area %d %v: sampledBy says part %d samples it: %v; Touches: %v (spans %v, parts from %v)",
							s, n, ai, a.Bound, i, got, want, it.spans, first)
					}
				}
			}
		}
	}
}
