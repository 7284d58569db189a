package sample

import (
	"math"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// ringCheck is what checkRings found out about one part's rings.
type ringCheck int

const (
	// ringsSimple: no two edges meet except neighbours at their shared
	// vertex, every hole lies inside the outer ring and inside no other
	// hole. Triangulation applies and the area is |outer| − Σ|holes|.
	ringsSimple ringCheck = iota
	// ringsTouch: edges touch or overlap without crossing (a hole touching
	// the outer ring at a vertex, a spike), or the check gave up on a
	// pathological edge layout. The even-odd fill is still the intended one,
	// but only the grid method is used.
	ringsTouch
	// ringsCross: edges cross, or a hole lies outside the outer ring or
	// inside another hole. The part is filled by the even-odd rule.
	ringsCross
)

// lattice is a grid of nx × ny cells of size cw × ch from (minX, minY).
type lattice struct {
	minX, minY, cw, ch float64
	nx, ny             int
}

// coverPad widens every covered range by this fraction of a cell, far more
// than the rounding of the coordinates computed here, so that an edge is
// listed in every cell its exact line touches.
const coverPad = 1e-7

// cover calls f(j, i0, i1) for each row j of cells that the edge
// (x0,y0)-(x1,y1) meets, with the columns i0..i1 it meets in that row (a
// superset, padded by coverPad).
func (l *lattice) cover(x0, y0, x1, y1 float64, f func(j, i0, i1 int)) {
	py, px := coverPad*l.ch, coverPad*l.cw
	ylo, yhi := y0, y1
	if ylo > yhi {
		ylo, yhi = yhi, ylo
	}
	j0, j1 := l.row(ylo-py), l.row(yhi+py)
	for j := j0; j <= j1; j++ {
		var xlo, xhi float64
		if y0 == y1 || j0 == j1 {
			xlo, xhi = math.Min(x0, x1), math.Max(x0, x1)
		} else {
			ya := math.Max(ylo, l.minY+float64(j)*l.ch-py)
			yb := math.Min(yhi, l.minY+float64(j+1)*l.ch+py)
			xa := x0 + (ya-y0)*(x1-x0)/(y1-y0)
			xb := x0 + (yb-y0)*(x1-x0)/(y1-y0)
			xlo, xhi = math.Min(xa, xb), math.Max(xa, xb)
		}
		f(j, l.col(xlo-px), l.col(xhi+px))
	}
}

func (l *lattice) row(y float64) int { return clampCell((y-l.minY)/l.ch, l.ny) }
func (l *lattice) col(x float64) int { return clampCell((x-l.minX)/l.cw, l.nx) }

func clampCell(f float64, n int) int {
	if !(f >= 0) {
		return 0
	}
	if f >= float64(n) {
		return n - 1
	}
	return int(f)
}

// checkRings tells whether a part's rings (outer first, closed, in the
// plane) form a simple polygon with holes. Segments are compared by
// geo.SegmentsMeet, the test geo/read's SelfIntersects uses too (that one
// checks a single ring in file coordinates for the repair notes). Edges are bucketed into a grid so
// that only edges sharing a cell are compared; on a layout where that still
// means too many comparisons it stops and answers ringsTouch.
func checkRings(rings [][]float64) ringCheck {
	type edge struct{ ring, pos, n int32 }
	var edges []edge
	for ri, r := range rings {
		m := len(r)/2 - 1
		for i := 0; i < m; i++ {
			edges = append(edges, edge{int32(ri), int32(i), int32(m)})
		}
	}
	E := len(edges)
	minX, minY, maxX, maxY := bounds(rings)
	if E == 0 || !(maxX > minX) || !(maxY > minY) {
		return ringsTouch
	}
	// About one edge per cell (BenchmarkPrepare: a quarter of that doubled
	// the time of the pair tests on the 50 000-vertex coastline).
	g := int(math.Ceil(math.Sqrt(float64(E))))
	g = max(1, min(g, 1024))
	l := lattice{minX: minX, minY: minY, cw: (maxX - minX) / float64(g), ch: (maxY - minY) / float64(g), nx: g, ny: g}
	seg := func(e edge) (float64, float64, float64, float64) {
		r := rings[e.ring]
		k := 2 * int(e.pos)
		return r[k], r[k+1], r[k+2], r[k+3]
	}
	// Counting sort of edge ids into cells.
	start := make([]int32, g*g+1)
	for _, e := range edges {
		x0, y0, x1, y1 := seg(e)
		l.cover(x0, y0, x1, y1, func(j, i0, i1 int) {
			for i := i0; i <= i1; i++ {
				start[j*g+i+1]++
			}
		})
	}
	for c := 0; c < g*g; c++ {
		start[c+1] += start[c]
	}
	if int(start[g*g]) > 64*E+1<<20 {
		return ringsTouch
	}
	ids := make([]int32, start[g*g])
	fill := make([]int32, g*g)
	copy(fill, start)
	for id, e := range edges {
		x0, y0, x1, y1 := seg(e)
		l.cover(x0, y0, x1, y1, func(j, i0, i1 int) {
			for i := i0; i <= i1; i++ {
				ids[fill[j*g+i]] = int32(id)
				fill[j*g+i]++
			}
		})
	}
	budget := 64*E + 1<<22
	touch := false
	for c := 0; c < g*g; c++ {
		cell := ids[start[c]:start[c+1]]
		for a := 0; a < len(cell); a++ {
			ea := edges[cell[a]]
			ax, ay, bx, by := seg(ea)
			for b := a + 1; b < len(cell); b++ {
				if budget--; budget < 0 {
					return ringsTouch
				}
				eb := edges[cell[b]]
				cx, cy, dx, dy := seg(eb)
				if (ax < cx && ax < dx && bx < cx && bx < dx) || (ax > cx && ax > dx && bx > cx && bx > dx) ||
					(ay < cy && ay < dy && by < cy && by < dy) || (ay > cy && ay > dy && by > cy && by > dy) {
					continue // boxes apart
				}
				if ea.ring == eb.ring && (ea.pos-eb.pos == 1 || eb.pos-ea.pos == 1 || (ea.n > 2 && (ea.pos-eb.pos == ea.n-1 || eb.pos-ea.pos == ea.n-1))) {
					// Neighbours share one vertex; they only go wrong when
					// the second doubles back along the first.
					if spike(ax, ay, bx, by, cx, cy, dx, dy) {
						touch = true
					}
					continue
				}
				switch geo.SegmentsMeet(orb.Point{ax, ay}, orb.Point{bx, by}, orb.Point{cx, cy}, orb.Point{dx, dy}) {
				case geo.SegmentsCross:
					return ringsCross
				case geo.SegmentsTouch:
					touch = true
				}
			}
		}
	}
	// No edges cross, so each hole is wholly inside or outside each other
	// ring and one vertex tells which.
	outer := rings[:1]
	box := make([][4]float64, len(rings))
	for h := range rings {
		box[h][0], box[h][1], box[h][2], box[h][3] = bounds(rings[h : h+1])
	}
	for h := 1; h < len(rings); h++ {
		x, y := rings[h][0], rings[h][1]
		if !evenOdd(outer, x, y) {
			return ringsCross
		}
		hb := box[h]
		for o := 1; o < len(rings); o++ {
			ob := box[o]
			if o != h && hb[0] >= ob[0] && hb[2] <= ob[2] && hb[1] >= ob[1] && hb[3] <= ob[3] && evenOdd(rings[o:o+1], x, y) {
				return ringsCross
			}
		}
	}
	if touch {
		return ringsTouch
	}
	return ringsSimple
}

// spike tells whether neighbouring edges ab and cd (sharing a vertex) are
// collinear and run back over each other.
func spike(ax, ay, bx, by, cx, cy, dx, dy float64) bool {
	// The shared vertex is b == c or d == a.
	var px, py, qx, qy, sx, sy float64
	switch {
	case bx == cx && by == cy:
		px, py, qx, qy, sx, sy = ax, ay, bx, by, dx, dy
	case dx == ax && dy == ay:
		px, py, qx, qy, sx, sy = cx, cy, dx, dy, bx, by
	default:
		return false
	}
	return cross(px, py, qx, qy, sx, sy) == 0 && (qx-px)*(sx-qx)+(qy-py)*(sy-qy) < 0
}
