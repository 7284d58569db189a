package sample

import "math"

// The containment test is even-odd ray casting towards +x in the
// equal-area plane: (x, y) is inside when the horizontal ray from it crosses
// an odd number of edges, an edge (x0,y0)-(x1,y1) being crossed when
// min(y0,y1) <= y < max(y0,y1) and x < x0+(y-y0)*(x1-x0)/(y1-y0). That
// half-open rule counts a vertex on the ray once and never counts a
// horizontal edge, so every point of the plane gets one answer; the answer is
// the same, bit for bit, whichever edges are looked at, as long as no edge
// that can be crossed is left out.
//
// edgeIndex is what makes that test fast on big rings: the y range of the
// part is cut into horizontal slabs, and each slab lists the edges whose
// half-open y range meets it. An edge can only be crossed by a ray inside one
// of its slabs, so a test reads one slab's list instead of every edge.

// slabMinEdges: below this many edges the index is one slab holding every
// non-horizontal edge, i.e. the plain scan (BenchmarkContains/ring20: 20
// edges, index and plain loop both well under 100 ns).
const slabMinEdges = 32

// edgeIndex holds a part's edges grouped by slab, four float64 per entry
// (x0, y0, x1, y1), slab s in seg[4*start[s] : 4*start[s+1]].
type edgeIndex struct {
	edges      int // edges of the rings, horizontal ones included
	minY, invH float64
	slabs      int
	start      []int32
	seg        []float64
}

// slab returns the slab of ordinate y, clamped to the index. It is monotone
// in y, which is what makes the edge lists complete (see newEdgeIndex).
func (ix *edgeIndex) slab(y float64) int {
	f := (y - ix.minY) * ix.invH
	if !(f >= 0) { // also NaN
		return 0
	}
	if f >= float64(ix.slabs) {
		return ix.slabs - 1
	}
	return int(f)
}

// newEdgeIndex indexes the edges of closed rings (x0,y0,…,x0,y0).
// Horizontal edges are left out: the rule above never counts them.
func newEdgeIndex(rings [][]float64) *edgeIndex {
	edges := 0
	minY, maxY := math.Inf(1), math.Inf(-1)
	for _, r := range rings {
		edges += len(r)/2 - 1
		for i := 1; i < len(r); i += 2 {
			minY, maxY = math.Min(minY, r[i]), math.Max(maxY, r[i])
		}
	}
	ix := &edgeIndex{edges: edges, minY: minY, slabs: 1}
	if edges >= slabMinEdges && maxY > minY {
		// About four edges per slab on a ring of short edges; halved while
		// long edges listed in many slabs make the index more than eight
		// entries per edge.
		ix.slabs = min(edges/4, 1<<16)
		for ix.slabs > 1 {
			ix.invH = float64(ix.slabs) / (maxY - minY)
			if ix.entries(rings) <= 8*edges {
				break
			}
			ix.slabs /= 2
		}
	}
	if ix.slabs <= 1 {
		ix.slabs, ix.invH = 1, 0
	} else {
		ix.invH = float64(ix.slabs) / (maxY - minY)
	}
	ix.start = make([]int32, ix.slabs+1)
	ix.forEach(rings, func(s0, s1 int, _ []float64) {
		for s := s0; s <= s1; s++ {
			ix.start[s+1]++
		}
	})
	for s := 0; s < ix.slabs; s++ {
		ix.start[s+1] += ix.start[s]
	}
	ix.seg = make([]float64, 4*ix.start[ix.slabs])
	fill := make([]int32, ix.slabs)
	copy(fill, ix.start[:ix.slabs])
	ix.forEach(rings, func(s0, s1 int, e []float64) {
		for s := s0; s <= s1; s++ {
			copy(ix.seg[4*fill[s]:], e[:4])
			fill[s]++
		}
	})
	return ix
}

// forEach calls f with the slab range and coordinates of every
// non-horizontal edge.
func (ix *edgeIndex) forEach(rings [][]float64, f func(s0, s1 int, e []float64)) {
	for _, r := range rings {
		for i := 2; i+1 < len(r); i += 2 {
			y0, y1 := r[i-1], r[i+1]
			if y0 == y1 {
				continue
			}
			lo, hi := ix.slab(math.Min(y0, y1)), ix.slab(math.Max(y0, y1))
			f(lo, hi, r[i-2:i+2])
		}
	}
}

func (ix *edgeIndex) entries(rings [][]float64) int {
	n := 0
	ix.forEach(rings, func(s0, s1 int, _ []float64) { n += s1 - s0 + 1 })
	return n
}

// contains is the even-odd test of (x, y) against the indexed rings.
func (ix *edgeIndex) contains(x, y float64) bool {
	s := ix.slab(y)
	seg := ix.seg[4*ix.start[s] : 4*ix.start[s+1]]
	in := false
	for i := 0; i+3 < len(seg); i += 4 {
		x0, y0, x1, y1 := seg[i], seg[i+1], seg[i+2], seg[i+3]
		if (y0 > y) != (y1 > y) && x < x0+(y-y0)*(x1-x0)/(y1-y0) {
			in = !in
		}
	}
	return in
}

// evenOdd is the same test without an index, over all edges of the rings;
// used where rings are small or tested once.
func evenOdd(rings [][]float64, x, y float64) bool {
	in := false
	for _, r := range rings {
		for i := 2; i+1 < len(r); i += 2 {
			x0, y0, x1, y1 := r[i-2], r[i-1], r[i], r[i+1]
			if (y0 > y) != (y1 > y) && x < x0+(y-y0)*(x1-x0)/(y1-y0) {
				in = !in
			}
		}
	}
	return in
}
