package geo

import (
	"math"

	"github.com/paulmach/orb"
)

// RingArea returns the signed area of a closed ring (first point repeated
// last) by the shoelace formula, in squared coordinate units (degrees² for
// longitude/latitude, m² for projected metres). It is the area itself, not
// twice it: positive when the ring runs counter-clockwise in a plane with x
// east and y north (RFC 7946 outer rings), negative when clockwise (ESRI
// Shapefile outer rings), zero for fewer than three points.
//
// Coordinates are taken relative to the first point, so small rings far
// from the origin (projected metres, longitudes near ±180) keep their
// digits. The value is bit for bit that of orb's planar.Area on an
// orb.Ring, which sums the same terms in the same order (TestRingArea); it
// is written out here because RingAreaBound needs the rounding bound from
// the same loop, and planar.Area also computes a centroid.
func RingArea(r orb.Ring) float64 {
	a, _ := RingAreaBound(r)
	return a
}

// RingAreaBound returns RingArea and a bound on its rounding error: with m
// terms, |computed − exact| ≤ γ·Σ|products|, γ = (m+2)·2⁻⁵² (a generous form
// of the standard summation bound, Higham, "Accuracy and Stability of
// Numerical Algorithms", §4.2, from memory). When |area| > 2·bound the sign
// is certain and survives reversing the ring.
func RingAreaBound(r orb.Ring) (area, bound float64) {
	if len(r) < 3 {
		return 0, 0
	}
	x0, y0 := r[0][0], r[0][1]
	var s, abs float64
	for i := 1; i+1 < len(r); i++ {
		p := (r[i][0] - x0) * (r[i+1][1] - y0)
		q := (r[i+1][0] - x0) * (r[i][1] - y0)
		s += p - q
		abs += math.Abs(p) + math.Abs(q)
	}
	return s / 2, float64(len(r)+2) * 0x1p-52 * abs / 2
}
