package shapefile

import (
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"reflect"
	"slices"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
)

// randomStar returns a closed star-shaped ring around (cx, cy), clockwise
// when cw is set.
func randomStar(rng *rand.Rand, cx, cy float64, n int, cw bool) orb.Ring {
	angles := make([]float64, n)
	for i := range angles {
		angles[i] = rng.Float64() * 2 * math.Pi
	}
	slices.Sort(angles)
	r := make(orb.Ring, 0, n+1)
	for _, a := range angles {
		d := 1 + 4*rng.Float64()
		r = append(r, orb.Point{cx + d*math.Cos(a), cy + d*math.Sin(a)})
	}
	r = append(r, r[0])
	if cw {
		slices.Reverse(r)
	}
	return r
}

// TestClassifyVsOrb compares the crossing-number test with orb's
// planar.RingContains (even-odd ray casting, boundary counted inside) on
// random points, none of which lies on an edge in practice; and checks
// vertices and edge midpoints of axis-parallel edges are on the boundary.
func TestClassifyVsOrb(t *testing.T) {
	seed := uint64(20261202)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 1))
	for k := 0; k < 200; k++ {
		r := randomStar(rng, 0, 0, 3+rng.IntN(40), k%2 == 0)
		for i := 0; i < 200; i++ {
			p := orb.Point{rng.Float64()*12 - 6, rng.Float64()*12 - 6}
			got := classify(p, r)
			want := outside
			if planar.RingContains(r, p) {
				want = inside
			}
			if got != want {
				t.Fatalf("ring %d point %v: classify %d, orb %d", k, p, got, want)
			}
		}
		for _, v := range r {
			if classify(v, r) != onBoundary {
				t.Fatalf("vertex %v not on boundary", v)
			}
		}
	}
	sq := orb.Ring{{0, 0}, {0, 4}, {4, 4}, {4, 0}, {0, 0}}
	for _, c := range []struct {
		p    orb.Point
		want int
	}{{orb.Point{2, 0}, onBoundary}, {orb.Point{0, 3}, onBoundary}, {orb.Point{2, 2}, inside}, {orb.Point{5, 2}, outside}, {orb.Point{-1, 4}, outside}} {
		if got := classify(c.p, sq); got != c.want {
			t.Errorf("%v: %d, want %d", c.p, got, c.want)
		}
	}
}

// exactArea is the shoelace sum in exact arithmetic (math/big at 4096 bits
// holds every product and sum of float64 here without rounding), using the
// same relative coordinates as areaWithBound so only the summation differs.
func exactArea(r orb.Ring) *big.Float {
	x0, y0 := r[0][0], r[0][1]
	s := new(big.Float).SetPrec(4096)
	for i := 1; i+1 < len(r); i++ {
		a := new(big.Float).SetPrec(4096).SetFloat64(r[i][0] - x0)
		b := new(big.Float).SetPrec(4096).SetFloat64(r[i+1][1] - y0)
		c := new(big.Float).SetPrec(4096).SetFloat64(r[i+1][0] - x0)
		d := new(big.Float).SetPrec(4096).SetFloat64(r[i][1] - y0)
		s.Add(s, new(big.Float).SetPrec(4096).Mul(a, b))
		s.Sub(s, new(big.Float).SetPrec(4096).Mul(c, d))
	}
	return s.Quo(s, big.NewFloat(2))
}

// TestAreaBoundVsExact checks areaWithBound against the exact sum: the error
// stays under the bound, and whenever |area| > 2·bound the sign is right for
// the ring and for its reverse. Rings include nearly collinear slivers far
// from the origin, where the sign is hard.
func TestAreaBoundVsExact(t *testing.T) {
	seed := uint64(7)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 2))
	decided := 0
	for k := 0; k < 2000; k++ {
		var r orb.Ring
		if k%2 == 0 {
			r = randomStar(rng, 1e6*rng.Float64(), 1e6*rng.Float64(), 3+rng.IntN(50), rng.IntN(2) == 0)
		} else {
			// A sliver: points on a line with tiny offsets.
			x0, y0 := rng.Float64()*1e7, rng.Float64()*1e7
			n := 3 + rng.IntN(10)
			for i := 0; i < n; i++ {
				tt := rng.Float64()
				r = append(r, orb.Point{x0 + tt*1000, y0 + tt*777 + (rng.Float64()-0.5)*1e-9})
			}
			r = append(r, r[0])
		}
		a, bound := areaWithBound(r)
		exact := exactArea(r)
		diff := new(big.Float).Sub(new(big.Float).SetFloat64(a), exact)
		if d, _ := diff.Float64(); math.Abs(d) > bound {
			t.Fatalf("ring %d: error %g above bound %g", k, d, bound)
		}
		if math.Abs(a) > 2*bound {
			decided++
			rev := slices.Clone(r)
			slices.Reverse(rev)
			ar, _ := areaWithBound(rev)
			if (a > 0) != (exact.Sign() > 0) || (ar > 0) == (a > 0) {
				t.Fatalf("ring %d: area %g, reversed %g, exact sign %d", k, a, ar, exact.Sign())
			}
		}
	}
	if decided < 1000 {
		t.Errorf("only %d of 2000 rings had a certain sign", decided)
	}
}

// TestAssembleNested builds islands of concentric squares (depth 0 outer
// clockwise, depth 1 hole, depth 2 outer, ...), shuffles all rings and
// checks that every hole lands in the outer ring just outside it: the
// construction is the reference for "the smallest outer ring that
// contains it" (Technical Description, "Polygon").
func TestAssembleNested(t *testing.T) {
	seed := uint64(99)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 3))
	for trial := 0; trial < 200; trial++ {
		var rings []orb.Ring
		var want []orb.Polygon
		for isl := 0; isl < 1+rng.IntN(5); isl++ {
			cx, cy := float64(isl)*100, float64(rng.IntN(5))*100
			depth := 1 + rng.IntN(5)
			sq := func(d int) orb.Ring {
				h := 40 - 8*float64(d)
				r := orb.Ring{{cx - h, cy - h}, {cx - h, cy + h}, {cx + h, cy + h}, {cx + h, cy - h}, {cx - h, cy - h}} // clockwise
				if d%2 == 1 {
					slices.Reverse(r)
				}
				return r
			}
			for d := 0; d < depth; d++ {
				rings = append(rings, sq(d))
				if d%2 == 0 {
					p := orb.Polygon{reversedCopy(sq(d))}
					if d+1 < depth {
						p = append(p, reversedCopy(sq(d+1)))
					}
					want = append(want, p)
				}
			}
		}
		rng.Shuffle(len(rings), func(i, j int) { rings[i], rings[j] = rings[j], rings[i] })
		// The output keeps the file order of outer rings; sort both sides by
		// the outer ring for a stable comparison.
		in := make([]orb.Ring, len(rings))
		for i, r := range rings {
			in[i] = slices.Clone(r)
		}
		got, warns := assemble(in)
		if len(warns) != 0 {
			t.Fatalf("trial %d: warnings %v", trial, warns)
		}
		key := func(p orb.Polygon) string { return fmt.Sprint(p[0]) }
		g, w := slices.Clone([]orb.Polygon(got)), slices.Clone(want)
		slices.SortFunc(g, func(a, b orb.Polygon) int { return compareStrings(key(a), key(b)) })
		slices.SortFunc(w, func(a, b orb.Polygon) int { return compareStrings(key(a), key(b)) })
		if !reflect.DeepEqual(g, w) {
			t.Fatalf("trial %d:\n got %v\nwant %v", trial, g, w)
		}
		// Outer rings keep their file order.
		var order []string
		for _, r := range rings {
			if a, _ := areaWithBound(r); a < 0 {
				order = append(order, fmt.Sprint(reversedCopy(r)))
			}
		}
		for i, p := range got {
			if key(p) != order[i] {
				t.Fatalf("trial %d: polygon %d out of file order", trial, i)
			}
		}
	}
}

func reversedCopy(r orb.Ring) orb.Ring {
	c := slices.Clone(r)
	slices.Reverse(c)
	return c
}

func compareStrings(a, b string) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// TestAssembleManyBadParts: problems are summarised per kind, so a record
// of 100 000 empty parts gives one line; identical outer/hole pairs are
// placed, the first candidate tried being the smallest.
func TestAssembleManyBadParts(t *testing.T) {
	parts := make([]orb.Ring, 100_000)
	parts = append(parts, orb.Ring{{0, 0}, {0, 1}, {1, 1}, {1, 0}, {0, 0}})
	mp, warns := assemble(parts)
	if len(mp) != 1 || len(warns) != 1 || warns[0] != "rings 0, 1, 2, 3, 4 and 99995 more have fewer than 4 points once closed: dropped" {
		t.Errorf("%d polygons, warnings %q", len(mp), warns)
	}

	sq := orb.Ring{{0, 0}, {0, 1}, {1, 1}, {1, 0}, {0, 0}}
	var many []orb.Ring
	for i := 0; i < 20_000; i++ {
		many = append(many, slices.Clone(sq), reversedCopy(sq))
	}
	// Equal outers tie; the first in file order takes every hole.
	mp, warns = assemble(many)
	if len(mp) != 20_000 || len(warns) != 0 || len(mp[0]) != 20_001 || len(mp[1]) != 1 {
		t.Errorf("%d polygons, first has %d rings, warnings %q", len(mp), len(mp[0]), warns)
	}
}
