package sample

import (
	"math"
	"sort"

	"github.com/stipple-maps/stipple/geo"
)

// Triangulation of a simple polygon with holes by ear clipping, after
// joining each hole to the outer ring by a bridge (the method described in
// D. Eberly, "Triangulation by Ear Clipping", Geometric Tools, 2002–2015:
// holes taken by decreasing greatest x, a ray from the hole's rightmost
// vertex M to +x, the nearest edge it hits, and the visible vertex chosen
// among those inside the triangle of M, the hit point and the edge's
// right end). The code is our own.
//
// It is only run on rings that checkRings found simple. It never loops
// without bound and reports failure (ok = false) instead of returning a
// wrong cover; the caller also checks that the triangles' areas add up to
// the polygon's area, and falls back to the grid method otherwise.

// earList is a circular doubly linked list of vertices, in arrays.
type earList struct {
	x, y       []float64
	prev, next []int32
	dead       []bool
}

func (l *earList) add(x, y float64) int32 {
	i := int32(len(l.x))
	l.x = append(l.x, x)
	l.y = append(l.y, y)
	l.prev = append(l.prev, i)
	l.next = append(l.next, i)
	l.dead = append(l.dead, false)
	return i
}

// ring adds the closed ring r (last point = first, dropped here) as its own
// circle, counter-clockwise when ccw, and returns one of its vertices.
func (l *earList) ring(r []float64, ccw bool) int32 {
	m := len(r)/2 - 1
	rev := (geo.RingArea(asRing(r)) > 0) != ccw
	first := int32(-1)
	last := int32(-1)
	for k := 0; k < m; k++ {
		i := k
		if rev {
			i = m - 1 - k
		}
		v := l.add(r[2*i], r[2*i+1])
		if first < 0 {
			first = v
		} else {
			l.next[last], l.prev[v] = v, last
		}
		last = v
	}
	l.next[last], l.prev[first] = first, last
	return first
}

func (l *earList) cross(a, b, c int32) float64 {
	return cross(l.x[a], l.y[a], l.x[b], l.y[b], l.x[c], l.y[c])
}

func (l *earList) same(a, b int32) bool { return l.x[a] == l.x[b] && l.y[a] == l.y[b] }

func (l *earList) remove(v int32) {
	p, n := l.prev[v], l.next[v]
	l.next[p], l.prev[n] = n, p
	l.dead[v] = true
}

// locallyInside tells whether point (mx, my) lies inside the polygon's angle
// at vertex v (the list runs counter-clockwise around the filled side).
func (l *earList) locallyInside(v int32, mx, my float64) bool {
	p, n := l.prev[v], l.next[v]
	left1 := cross(l.x[p], l.y[p], l.x[v], l.y[v], mx, my) > 0
	left2 := cross(l.x[v], l.y[v], l.x[n], l.y[n], mx, my) > 0
	if l.cross(p, v, n) >= 0 { // convex
		return left1 && left2
	}
	return left1 || left2
}

// triangulate returns the triangles (ax, ay, bx, by, cx, cy each) of the
// simple polygon rings[0] with holes rings[1:], closed rings in the plane.
func triangulate(rings [][]float64) ([]float64, bool) {
	n := 0
	for _, r := range rings {
		n += len(r)/2 - 1
	}
	// Each hole costs one scan of the vertices joined so far.
	if len(rings) > 1 && float64(len(rings)-1)*float64(n) > 4e8 {
		return nil, false
	}
	l := &earList{}
	l.x = make([]float64, 0, n+2*len(rings))
	l.y = make([]float64, 0, n+2*len(rings))
	start := l.ring(rings[0], true)
	type hole struct {
		m   int32
		idx int
	}
	holes := make([]hole, 0, len(rings)-1)
	for h := 1; h < len(rings); h++ {
		v := l.ring(rings[h], false)
		m := v
		for u := l.next[v]; u != v; u = l.next[u] {
			if l.x[u] > l.x[m] || (l.x[u] == l.x[m] && l.y[u] < l.y[m]) {
				m = u
			}
		}
		holes = append(holes, hole{m, h})
	}
	sort.Slice(holes, func(i, j int) bool {
		a, b := holes[i], holes[j]
		if l.x[a.m] != l.x[b.m] {
			return l.x[a.m] > l.x[b.m]
		}
		return a.idx < b.idx
	})
	for _, h := range holes {
		if !l.bridge(start, h.m) {
			return nil, false
		}
	}
	return l.clip(start)
}

// bridge joins the hole through its vertex m to the circle through start.
func (l *earList) bridge(start, m int32) bool {
	mx, my := l.x[m], l.y[m]
	hit, hx := int32(-1), math.Inf(1)
	for a := start; ; {
		b := l.next[a]
		ay, by := l.y[a], l.y[b]
		// Edges going up (+y) face the hole from the east on a
		// counter-clockwise outer ring and on holes joined clockwise.
		if ay <= my && my <= by && ay != by {
			x := l.x[a] + (my-ay)*(l.x[b]-l.x[a])/(by-ay)
			if x >= mx && x < hx {
				hx, hit = x, a
			}
		}
		if a = b; a == start {
			break
		}
	}
	if hit < 0 {
		return false
	}
	a, b := hit, l.next[hit]
	var p int32
	switch {
	case l.y[a] == my:
		p = a
	case l.y[b] == my:
		p = b
	case l.x[a] > l.x[b]:
		p = a
	default:
		p = b
	}
	px, py := l.x[p], l.y[p]
	// Candidates: p and every vertex inside the triangle (m, hit, p); the
	// one whose direction from m is closest to the ray is visible from m.
	best, bestTan, bestD := int32(-1), math.Inf(1), math.Inf(1)
	for v := start; ; {
		vx, vy := l.x[v], l.y[v]
		if vx > mx && (l.same(v, p) || inTriangle(mx, my, hx, my, px, py, vx, vy)) {
			tan := math.Abs(vy-my) / (vx - mx)
			d := vx - mx
			if (tan < bestTan || (tan == bestTan && d < bestD)) && l.locallyInside(v, mx, my) {
				best, bestTan, bestD = v, tan, d
			}
		}
		if v = l.next[v]; v == start {
			break
		}
	}
	if best < 0 {
		return false
	}
	// Split: best → m → … hole … → m' → best' → old next of best.
	b2 := l.add(l.x[best], l.y[best])
	m2 := l.add(mx, my)
	bn, mp := l.next[best], l.prev[m]
	l.next[best], l.prev[m] = m, best
	l.next[b2], l.prev[bn] = bn, b2
	l.next[m2], l.prev[b2] = b2, m2
	l.next[mp], l.prev[m2] = m2, mp
	return true
}

// inTriangle tells whether p lies in the closed triangle abc, of either
// orientation.
func inTriangle(ax, ay, bx, by, cx, cy, px, py float64) bool {
	d1 := cross(ax, ay, bx, by, px, py)
	d2 := cross(bx, by, cx, cy, px, py)
	d3 := cross(cx, cy, ax, ay, px, py)
	neg := d1 < 0 || d2 < 0 || d3 < 0
	pos := d1 > 0 || d2 > 0 || d3 > 0
	return !(neg && pos)
}

// vertexGrid buckets vertex ids by cell, for the ear test.
type vertexGrid struct {
	lattice
	start []int32
	ids   []int32
}

func newVertexGrid(l *earList) *vertexGrid {
	minX, minY := math.Inf(1), math.Inf(1)
	maxX, maxY := math.Inf(-1), math.Inf(-1)
	for i := range l.x {
		minX, maxX = math.Min(minX, l.x[i]), math.Max(maxX, l.x[i])
		minY, maxY = math.Min(minY, l.y[i]), math.Max(maxY, l.y[i])
	}
	g := max(1, min(512, int(math.Ceil(math.Sqrt(float64(len(l.x))/2)))))
	vg := &vertexGrid{lattice: lattice{minX: minX, minY: minY, nx: g, ny: g,
		cw: math.Max(maxX-minX, 1e-300) / float64(g), ch: math.Max(maxY-minY, 1e-300) / float64(g)}}
	vg.start = make([]int32, g*g+1)
	cells := make([]int32, len(l.x))
	for i := range l.x {
		c := int32(vg.row(l.y[i])*g + vg.col(l.x[i]))
		cells[i] = c
		vg.start[c+1]++
	}
	for c := 0; c < g*g; c++ {
		vg.start[c+1] += vg.start[c]
	}
	vg.ids = make([]int32, len(l.x))
	fill := make([]int32, g*g)
	copy(fill, vg.start)
	for i, c := range cells {
		vg.ids[fill[c]] = int32(i)
		fill[c]++
	}
	return vg
}

// isEar tells whether the triangle (a, b, c) at convex vertex b can be cut
// off: no other live vertex lies in it or on its sides, vertices at the same
// place as a corner (bridge copies) excepted.
func (l *earList) isEar(vg *vertexGrid, a, b, c int32) bool {
	if l.cross(a, b, c) <= 0 {
		return false
	}
	ax, ay, bx, by, cx, cy := l.x[a], l.y[a], l.x[b], l.y[b], l.x[c], l.y[c]
	i0, i1 := vg.col(min(ax, bx, cx)), vg.col(max(ax, bx, cx))
	j0, j1 := vg.row(min(ay, by, cy)), vg.row(max(ay, by, cy))
	for j := j0; j <= j1; j++ {
		for _, v := range vg.ids[vg.start[j*vg.nx+i0]:vg.start[j*vg.nx+i1+1]] {
			if l.dead[v] || v == a || v == b || v == c {
				continue
			}
			px, py := l.x[v], l.y[v]
			if (px == ax && py == ay) || (px == bx && py == by) || (px == cx && py == cy) {
				continue
			}
			if cross(ax, ay, bx, by, px, py) >= 0 && cross(bx, by, cx, cy, px, py) >= 0 && cross(cx, cy, ax, ay, px, py) >= 0 {
				return false
			}
		}
	}
	return true
}

// clip cuts ears off the circle through start until one triangle is left.
func (l *earList) clip(start int32) ([]float64, bool) {
	remaining := 1
	for v := l.next[start]; v != start; v = l.next[v] {
		remaining++
	}
	vg := newVertexGrid(l)
	out := make([]float64, 0, 6*(remaining-2))
	budget := 40*remaining + 1<<20
	cur := start
	stop := cur
	for remaining > 3 {
		if budget--; budget < 0 {
			return nil, false
		}
		p, n := l.prev[cur], l.next[cur]
		if l.isEar(vg, p, cur, n) {
			out = append(out, l.x[p], l.y[p], l.x[cur], l.y[cur], l.x[n], l.y[n])
			l.remove(cur)
			remaining--
			cur, stop = n, n
			continue
		}
		if cur = n; cur != stop {
			continue
		}
		// A whole round without an ear: drop one vertex that adds no area
		// (on a straight line with its neighbours, or doubling back).
		removed := false
		for q := cur; ; {
			pq, nq := l.prev[q], l.next[q]
			if l.cross(pq, q, nq) == 0 {
				l.remove(q)
				remaining--
				cur, stop, removed = nq, nq, true
				break
			}
			if q = nq; q == cur {
				break
			}
		}
		if !removed {
			return nil, false
		}
	}
	p, n := l.prev[cur], l.next[cur]
	switch c := l.cross(p, cur, n); {
	case c > 0:
		out = append(out, l.x[p], l.y[p], l.x[cur], l.y[cur], l.x[n], l.y[n])
	case c < 0:
		return nil, false
	}
	return out, true
}
