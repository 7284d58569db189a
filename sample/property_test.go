package sample

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// star is a star-shaped ring (simple by construction) round (cx, cy) with
// n vertices at sorted angles and radii in [r0, r1], counter-clockwise when
// ccw, in lon/lat degrees.
func star(rng *rand.Rand, cx, cy, r0, r1 float64, n int, ccw bool) orb.Ring {
	angles := make([]float64, n)
	for i := range angles {
		angles[i] = 2 * math.Pi * (float64(i) + 0.9*rng.Float64()) / float64(n)
	}
	var ring orb.Ring
	for i := range angles {
		a := angles[i]
		if !ccw {
			a = angles[n-1-i]
		}
		r := r0 + (r1-r0)*rng.Float64()
		ring = append(ring, orb.Point{cx + r*math.Cos(a), cy + r*math.Sin(a)})
	}
	return append(ring, ring[0])
}

// randomFeature makes a MultiPolygon of 1–6 star-shaped parts, each with up
// to 6 star-shaped holes that neither touch each other nor the outer ring;
// windings are random. With messy set, some parts are random vertex
// soups (self-crossing rings).
func randomFeature(rng *rand.Rand, messy bool) orb.MultiPolygon {
	var mp orb.MultiPolygon
	parts := 1 + rng.IntN(6)
	baseLon := -170 + 340*rng.Float64()
	baseLat := -60 + 120*rng.Float64()
	for k := 0; k < parts; k++ {
		cx, cy := baseLon+2.5*float64(k), baseLat+0.3*rng.Float64()
		R := 0.2 + rng.Float64()
		if messy && rng.IntN(3) == 0 {
			var ring orb.Ring
			for i := 0; i < 3+rng.IntN(12); i++ {
				ring = append(ring, orb.Point{cx + R*(2*rng.Float64()-1), cy + R*(2*rng.Float64()-1)})
			}
			mp = append(mp, orb.Polygon{append(ring, ring[0])})
			continue
		}
		// With 12 or more vertices the outer ring keeps 0.44R clear round
		// the centre (the widest angle gap is 2π·1.9/12), room for holes
		// out to 0.37R; fewer vertices get no holes.
		nv := 3 + rng.IntN(60)
		poly := orb.Polygon{star(rng, cx, cy, 0.5*R, R, nv, rng.IntN(2) == 0)}
		var centres [][2]float64
		for h := 0; h < rng.IntN(7) && nv >= 12; h++ {
			hr := 0.07 * R
			a, d := 2*math.Pi*rng.Float64(), 0.3*R*rng.Float64()
			hx, hy := cx+d*math.Cos(a), cy+d*math.Sin(a)
			ok := true
			for _, c := range centres {
				if math.Hypot(c[0]-hx, c[1]-hy) < 2.2*hr {
					ok = false
				}
			}
			if !ok {
				continue
			}
			centres = append(centres, [2]float64{hx, hy})
			poly = append(poly, star(rng, hx, hy, 0.4*hr, hr, 3+rng.IntN(12), rng.IntN(2) == 0))
		}
		mp = append(mp, poly)
	}
	return mp
}

// TestPropertyDotsInsideFeature: over generated features, every dot of
// every method is inside its feature by the independent containment test
// (go-geom, see refInside), so outside holes, and valid features are
// triangulated without falling back.
func TestPropertyDotsInsideFeature(t *testing.T) {
	seed := uint64(7)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 1))
	fallbacks := 0
	for n := 0; n < 150; n++ {
		messy := n%3 == 2
		g := randomFeature(rng, messy)
		for _, m := range allMethods {
			s := newShape(g, m)
			if !messy && m == byTriangles {
				for k, pm := range methodsOf(s) {
					if pm != byTriangles {
						fallbacks++
						t.Errorf("feature %d part %d: valid star polygon fell back to %v", n, k, pm)
					}
				}
			}
			for i, p := range draw(t, g, m, seed, fmt.Sprint(n), 200) {
				if refInsideMulti(g, p) < 0 {
					t.Fatalf("feature %d (%v, messy %v) dot %d at %v is outside", n, m, messy, i, p)
				}
			}
		}
	}
}

// TestPropertyMasks: dots stay out of masks (reference test) unless the
// result says the masks were ignored.
func TestPropertyMasks(t *testing.T) {
	seed := uint64(8)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 2))
	ignored := 0
	for n := 0; n < 60; n++ {
		g := randomFeature(rng, n%3 == 2)
		// Masks: stars scattered over the feature's box.
		b := g.Bound()
		var masks []orb.MultiPolygon
		for k := 0; k < 1+rng.IntN(8); k++ {
			cx := b.Min[0] + rng.Float64()*(b.Max[0]-b.Min[0])
			cy := b.Min[1] + rng.Float64()*(b.Max[1]-b.Min[1])
			masks = append(masks, orb.MultiPolygon{{star(rng, cx, cy, 0.1, 0.6, 5+rng.IntN(20), true)}})
		}
		mask := NewMask(masks)
		f := &geo.Feature{ID: fmt.Sprint("m", n), Geometry: g}
		drawn := 0
		r := FeatureN(f, []int{150, 50}, Options{Seed: seed, Masks: mask}, func(cat int, p orb.Point) {
			drawn++
			if refInsideMulti(g, p) < 0 {
				t.Fatalf("feature %d: dot %v outside", n, p)
			}
			for _, mm := range masks {
				if refInsideMulti(mm, p) >= 0 && mask.Contains(p) != true {
					t.Fatalf("feature %d: Mask.Contains(%v) false, reference true", n, p)
				}
			}
		})
		if drawn != 200 || r.Dots[0] != 150 || r.Dots[1] != 50 {
			t.Fatalf("feature %d: drew %d (%v), want 200: people lost", n, drawn, r.Dots)
		}
		if r.MaskIgnored {
			ignored++
			continue
		}
		// Not ignored: check again that no dot is masked.
		FeatureN(f, []int{150, 50}, Options{Seed: seed, Masks: mask}, func(cat int, p orb.Point) {
			for _, mm := range masks {
				if refInsideMulti(mm, p) >= 0 {
					t.Fatalf("feature %d: dot %v inside a mask", n, p)
				}
			}
		})
	}
	t.Logf("%d of 60 features had their masks ignored", ignored)
}

// TestPropertyTotals: the default rounding gives each feature and category
// ⌊e⌋ or ⌊e⌋+1 dots (e = count/N), with a total within 3.29 standard
// deviations of the expected total (3.2906² = 10.828, the df-1 chi-square
// critical value at 0.001 of NIST/SEMATECH 1.3.6.7.4); exact mode gives
// exactly round(total/N) per category, each feature its Hamilton quota
// rounded down or up, and the same numbers for any order of the features.
func TestPropertyTotals(t *testing.T) {
	seed := uint64(9)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 3))
	for trial := 0; trial < 20; trial++ {
		nf := 1 + rng.IntN(400)
		ids := make([]string, nf)
		counts := make([][]float64, nf)
		for i := range ids {
			ids[i] = fmt.Sprintf("f%04d", i)
			counts[i] = []float64{float64(rng.IntN(60)), rng.Float64() * 30, 0, float64(rng.IntN(3) * 7)}
		}
		perDot := []float64{1, 2.5, 7, 10, 100}[trial%5]
		dots := Allocate(ids, counts, perDot, seed, false)
		for k := range counts[0] {
			exp, vr, got := 0.0, 0.0, 0
			for i := range ids {
				e := counts[i][k] / perDot
				d := dots[i][k]
				if float64(d) != math.Floor(e) && float64(d) != math.Floor(e)+1 {
					t.Fatalf("trial %d feature %d cat %d: %d dots for e = %v", trial, i, k, d, e)
				}
				if f := e - math.Floor(e); f == 0 && float64(d) != e {
					t.Fatalf("integer e = %v gave %d", e, d)
				}
				exp += e
				vr += (e - math.Floor(e)) * (1 - e + math.Floor(e))
				got += d
			}
			if vr > 0 && math.Abs(float64(got)-exp) > math.Sqrt(10.828*vr) {
				t.Errorf("trial %d cat %d: %d dots, expected %.2f (sd %.2f)", trial, k, got, exp, math.Sqrt(vr))
			}
		}

		exact := Allocate(ids, counts, perDot, seed, true)
		for k := range counts[0] {
			total := 0.0
			for i := range ids {
				total += counts[i][k]
			}
			want := int(math.Round(total / perDot))
			got := 0
			for i := range ids {
				q := 0.0
				if total > 0 {
					q = counts[i][k] * float64(want) / total
				}
				d := exact[i][k]
				if float64(d) < math.Floor(q) || float64(d) > math.Floor(q)+1 {
					t.Fatalf("trial %d cat %d feature %d: %d dots for quota %v", trial, k, i, d, q)
				}
				got += d
			}
			if got != want {
				t.Errorf("trial %d cat %d: exact mode drew %d, want round(%v/%v) = %d", trial, k, got, total, perDot, want)
			}
		}
		// Shuffled order: same dots per id.
		perm := rng.Perm(nf)
		ids2 := make([]string, nf)
		counts2 := make([][]float64, nf)
		for i, j := range perm {
			ids2[i], counts2[i] = ids[j], counts[j]
		}
		exact2 := Allocate(ids2, counts2, perDot, seed, true)
		def2 := Allocate(ids2, counts2, perDot, seed, false)
		for i, j := range perm {
			for k := range counts[j] {
				if exact2[i][k] != exact[j][k] || def2[i][k] != dots[j][k] {
					t.Fatalf("trial %d: feature %s cat %d: %d/%d dots shuffled, %d/%d in order", trial, ids[j], k, exact2[i][k], def2[i][k], exact[j][k], dots[j][k])
				}
			}
		}
	}
}

// TestHamiltonWorkedExample: largest remainders by hand. Counts 50, 30,
// 20 people at 7 per dot: total 100, round(100/7) = 14 dots; quotas 7,
// 4.2, 2.8 → floors 7, 4, 2 = 13, one left for the largest remainder
// (0.8) → 7, 4, 3.
func TestHamiltonWorkedExample(t *testing.T) {
	got := Allocate([]string{"a", "b", "c"}, [][]float64{{50}, {30}, {20}}, 7, 1, true)
	want := []int{7, 4, 3}
	for i := range want {
		if got[i][0] != want[i] {
			t.Fatalf("got %v, want %v", got, want)
		}
	}
	// A tie (two equal remainders, one dot left) goes by the seeded hash,
	// not by order: the winner is the same in both orders, and some seed
	// picks each feature.
	winners := map[string]bool{}
	for seed := uint64(0); seed < 32; seed++ {
		a := Allocate([]string{"x", "y"}, [][]float64{{1}, {1}}, 2, seed, true)
		b := Allocate([]string{"y", "x"}, [][]float64{{1}, {1}}, 2, seed, true)
		if a[0][0] != b[1][0] || a[1][0] != b[0][0] || a[0][0]+a[1][0] != 1 {
			t.Fatalf("seed %d: %v in order, %v reversed", seed, a, b)
		}
		winners[map[bool]string{true: "x", false: "y"}[a[0][0] == 1]] = true
	}
	if len(winners) != 2 {
		t.Errorf("ties always won by the same feature: %v", winners)
	}
}

// TestReproducibleUnderShuffle: every dot depends on (seed, id, category,
// index) only: features placed in a shuffled order, split over
// goroutines, give the same dots per feature.
func TestReproducibleUnderShuffle(t *testing.T) {
	seed := uint64(10)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 4))
	var feats []geo.Feature
	var dots [][]int
	for i := 0; i < 40; i++ {
		feats = append(feats, geo.Feature{Index: i, ID: fmt.Sprintf("r%d", i), Geometry: randomFeature(rng, i%4 == 3)})
		dots = append(dots, []int{rng.IntN(40), rng.IntN(10)})
	}
	place := func(order []int, workers int) map[string][]orb.Point {
		out := make([]map[string][]orb.Point, workers)
		done := make(chan bool)
		for w := 0; w < workers; w++ {
			out[w] = map[string][]orb.Point{}
			go func(w int) {
				for n := w; n < len(order); n += workers {
					i := order[n]
					FeatureN(&feats[i], dots[i], Options{Seed: seed}, func(cat int, p orb.Point) {
						out[w][feats[i].ID] = append(out[w][feats[i].ID], p)
					})
				}
				done <- true
			}(w)
		}
		for w := 0; w < workers; w++ {
			<-done
		}
		all := map[string][]orb.Point{}
		for _, m := range out {
			for k, v := range m {
				all[k] = v
			}
		}
		return all
	}
	ordered := make([]int, len(feats))
	for i := range ordered {
		ordered[i] = i
	}
	a := place(ordered, 1)
	b := place(rng.Perm(len(feats)), 3)
	for id, pa := range a {
		pb := b[id]
		if len(pa) != len(pb) {
			t.Fatalf("%s: %d dots, %d shuffled", id, len(pa), len(pb))
		}
		for i := range pa {
			if pa[i] != pb[i] {
				t.Fatalf("%s dot %d: %v in order, %v shuffled", id, i, pa[i], pb[i])
			}
		}
	}
	// Dot i of a category is the same whether or not more dots follow.
	f := &feats[0]
	var few, many []orb.Point
	FeatureN(f, []int{5}, Options{Seed: seed}, func(_ int, p orb.Point) { few = append(few, p) })
	FeatureN(f, []int{50}, Options{Seed: seed}, func(_ int, p orb.Point) { many = append(many, p) })
	for i := range few {
		if few[i] != many[i] {
			t.Fatalf("dot %d differs with more dots: %v vs %v", i, few[i], many[i])
		}
	}
}
