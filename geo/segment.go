package geo

import (
	"math"

	"github.com/paulmach/orb"
)

// Meet says how two segments meet; see SegmentsMeet.
type Meet int

const (
	// SegmentsApart: the segments have no point in common.
	SegmentsApart Meet = iota
	// SegmentsTouch: an end of one segment lies on the other, or the two
	// overlap along a line, without crossing.
	SegmentsTouch
	// SegmentsCross: the segments cross at one point inside both.
	SegmentsCross
)

// SegmentsMeet tells whether segments ab and cd meet, by the signs of the
// four orientations (cross products) of each segment's ends against the
// other segment (the standard test, e.g. Cormen et al., "Introduction to
// Algorithms", §33.1, SEGMENTS-INTERSECT, from memory), computed exactly as
// written so that the answer is the same wherever it is asked. It is the
// one segment test behind both self-intersection checks: geo/read's
// SelfIntersects (one ring, longitude/latitude) and the sampler's ring
// check (all rings of a part, in its equal-area plane).
func SegmentsMeet(a, b, c, d orb.Point) Meet {
	d1 := orientation(c, d, a)
	d2 := orientation(c, d, b)
	d3 := orientation(a, b, c)
	d4 := orientation(a, b, d)
	if ((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0)) {
		return SegmentsCross
	}
	if (d1 == 0 && inBox(c, d, a)) || (d2 == 0 && inBox(c, d, b)) ||
		(d3 == 0 && inBox(a, b, c)) || (d4 == 0 && inBox(a, b, d)) {
		return SegmentsTouch
	}
	return SegmentsApart
}

// orientation is twice the signed area of triangle (a, b, c): positive when
// c is left of the line a→b.
func orientation(a, b, c orb.Point) float64 {
	return (b[0]-a[0])*(c[1]-a[1]) - (b[1]-a[1])*(c[0]-a[0])
}

// inBox tells whether p, collinear with ab, lies within ab's box.
func inBox(a, b, p orb.Point) bool {
	return math.Min(a[0], b[0]) <= p[0] && p[0] <= math.Max(a[0], b[0]) &&
		math.Min(a[1], b[1]) <= p[1] && p[1] <= math.Max(a[1], b[1])
}
