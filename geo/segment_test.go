package geo

import (
	"testing"

	"github.com/paulmach/orb"
)

// TestSegmentsMeet checks the segment test on configurations drawn by hand
// on a grid (the cases of the orientation test, Cormen et al.,
// "Introduction to Algorithms", §33.1, from memory: proper crossing, an end
// on the other segment, collinear overlap and collinear disjoint, parallel,
// near miss). The answer must not depend on the order of the segments or
// of their ends.
func TestSegmentsMeet(t *testing.T) {
	type seg [2]orb.Point
	for _, c := range []struct {
		name string
		p, q seg
		want Meet
	}{
		{"X through (1, 1)", seg{{0, 0}, {2, 2}}, seg{{0, 2}, {2, 0}}, SegmentsCross},
		{"plus through (0, 0)", seg{{-1, 0}, {1, 0}}, seg{{0, -1}, {0, 1}}, SegmentsCross},
		{"T: end on the middle of the other", seg{{0, 0}, {2, 0}}, seg{{1, 0}, {1, 3}}, SegmentsTouch},
		{"shared end", seg{{0, 0}, {2, 0}}, seg{{2, 0}, {3, 5}}, SegmentsTouch},
		{"collinear overlap", seg{{0, 0}, {3, 0}}, seg{{2, 0}, {5, 0}}, SegmentsTouch},
		{"collinear, one inside the other", seg{{0, 0}, {4, 4}}, seg{{1, 1}, {2, 2}}, SegmentsTouch},
		{"collinear, apart", seg{{0, 0}, {1, 0}}, seg{{2, 0}, {3, 0}}, SegmentsApart},
		{"parallel", seg{{0, 0}, {2, 0}}, seg{{0, 1}, {2, 1}}, SegmentsApart},
		{"line of one crosses the other beyond its end", seg{{0, 0}, {1, 1}}, seg{{3, 0}, {0, 3}}, SegmentsApart},
		{"near miss of an end", seg{{0, 0}, {2, 0}}, seg{{1, 0.5}, {1, 3}}, SegmentsApart},
	} {
		a, b, p, q := c.p[0], c.p[1], c.q[0], c.q[1]
		for _, o := range [][4]orb.Point{
			{a, b, p, q}, {b, a, p, q}, {a, b, q, p}, {b, a, q, p},
			{p, q, a, b}, {q, p, a, b}, {p, q, b, a}, {q, p, b, a},
		} {
			if got := SegmentsMeet(o[0], o[1], o[2], o[3]); got != c.want {
				t.Errorf("%s: SegmentsMeet(%v, %v, %v, %v) = %d, want %d", c.name, o[0], o[1], o[2], o[3], got, c.want)
			}
		}
	}
}
