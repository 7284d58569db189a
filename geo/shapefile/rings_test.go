package shapefile

import (
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
	"github.com/stipple-maps/stipple/geo"
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
			if geo.RingArea(r) < 0 {
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
