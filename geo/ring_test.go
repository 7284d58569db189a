package geo

import (
	"math"
	"math/big"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
)

// TestRingArea checks RingArea on rings whose area is known by hand (the
// shoelace formula, or the side lengths of a rectangle or triangle) and
// whose winding is fixed by a standard: RFC 7946 §3.1.6 (outer rings
// counter-clockwise, holes clockwise) with the polygon of its Appendix A.3,
// and the ESRI Shapefile Technical Description (July 1998), which winds
// outer rings clockwise (negative here).
func TestRingArea(t *testing.T) {
	const far = 0x1p40 // exactly representable; 2⁻¹⁰ steps stay exact there
	for _, c := range []struct {
		name string
		r    orb.Ring
		want float64
	}{
		{"triangle ½·4·3, counter-clockwise", orb.Ring{{0, 0}, {4, 0}, {0, 3}, {0, 0}}, 6},
		{"same triangle clockwise", orb.Ring{{0, 0}, {0, 3}, {4, 0}, {0, 0}}, -6},
		{"RFC 7946 A.3 exterior (counter-clockwise)", orb.Ring{{100, 0}, {101, 0}, {101, 1}, {100, 1}, {100, 0}}, 1},
		{"RFC 7946 A.3 hole (clockwise), 0.6 × 0.6", orb.Ring{{100.8, 0.8}, {100.8, 0.2}, {100.2, 0.2}, {100.2, 0.8}, {100.8, 0.8}}, -0.36},
		{"ESRI outer ring (clockwise) 2 × 3", orb.Ring{{0, 0}, {0, 3}, {2, 3}, {2, 0}, {0, 0}}, -6},
		{"square of side 2⁻¹⁰ at 2⁴⁰", orb.Ring{{far, far}, {far + 0x1p-10, far}, {far + 0x1p-10, far + 0x1p-10}, {far, far + 0x1p-10}, {far, far}}, 0x1p-20},
		{"collinear", orb.Ring{{0, 0}, {1, 1}, {2, 2}, {0, 0}}, 0},
		{"two points", orb.Ring{{0, 0}, {1, 1}}, 0},
		{"empty", nil, 0},
	} {
		got := RingArea(c.r)
		if math.Abs(got-c.want) > 1e-12*math.Max(1, math.Abs(c.want)) {
			t.Errorf("%s: RingArea = %.17g, want %.17g", c.name, got, c.want)
		}
		if len(c.r) >= 4 {
			rev := slices.Clone(c.r)
			slices.Reverse(rev)
			if back := RingArea(rev); back != -got {
				t.Errorf("%s reversed: %v, want %v", c.name, back, -got)
			}
		}
	}
}

// TestRingAreaMatchesOrb compares RingArea with orb's planar.Area on a ring
// (signed: "Ring area may be negative if it has a clockwise winding order",
// planar.CentroidArea's doc), which sums the same terms: they must agree
// bit for bit, and orb.Ring.Orientation must agree on the sign.
func TestRingAreaMatchesOrb(t *testing.T) {
	seed := uint64(11)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 3))
	for k := 0; k < 2000; k++ {
		r := randomRing(rng, 1e6*rng.Float64(), 1e6*rng.Float64(), 3+rng.IntN(50))
		got, want := RingArea(r), planar.Area(r)
		if got != want {
			t.Fatalf("ring %d: RingArea %.17g, planar.Area %.17g", k, got, want)
		}
		if o := r.Orientation(); (o == orb.CCW) != (got > 0) || (o == orb.CW) != (got < 0) {
			t.Fatalf("ring %d: area %v, orb orientation %v", k, got, o)
		}
	}
}

// randomRing returns a closed ring through n points drawn in the box
// (cx ± 5, cy ± 5): often self-crossing, which the shoelace sum does not
// mind (each lobe counts with its own winding).
func randomRing(rng *rand.Rand, cx, cy float64, n int) orb.Ring {
	r := make(orb.Ring, 0, n+1)
	for range n {
		r = append(r, orb.Point{cx + 10*rng.Float64() - 5, cy + 10*rng.Float64() - 5})
	}
	return append(r, r[0])
}

// exactArea is the shoelace sum in exact arithmetic (math/big at 4096 bits
// holds every product and sum of float64 here without rounding), using the
// same relative coordinates as RingAreaBound so only the summation differs.
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

// TestRingAreaBoundVsExact checks RingAreaBound against the exact sum: the error
// stays under the bound, and whenever |area| > 2·bound the sign is right for
// the ring and for its reverse. Rings include nearly collinear slivers far
// from the origin, where the sign is hard.
func TestRingAreaBoundVsExact(t *testing.T) {
	seed := uint64(7)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 2))
	decided := 0
	for k := 0; k < 2000; k++ {
		var r orb.Ring
		if k%2 == 0 {
			r = randomRing(rng, 1e6*rng.Float64(), 1e6*rng.Float64(), 3+rng.IntN(50))
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
		a, bound := RingAreaBound(r)
		exact := exactArea(r)
		diff := new(big.Float).Sub(new(big.Float).SetFloat64(a), exact)
		if d, _ := diff.Float64(); math.Abs(d) > bound {
			t.Fatalf("ring %d: error %g above bound %g", k, d, bound)
		}
		if math.Abs(a) > 2*bound {
			decided++
			rev := slices.Clone(r)
			slices.Reverse(rev)
			ar, _ := RingAreaBound(rev)
			if (a > 0) != (exact.Sign() > 0) || (ar > 0) == (a > 0) {
				t.Fatalf("ring %d: area %g, reversed %g, exact sign %d", k, a, ar, exact.Sign())
			}
		}
	}
	if decided < 1000 {
		t.Errorf("only %d of 2000 rings had a certain sign", decided)
	}
}
