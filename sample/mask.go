package sample

import (
	"math"

	"github.com/paulmach/orb"
)

// Mask is a prepared set of areas where nobody lives (water, parks): dots
// are kept out of them. A point is masked when it is inside any mask polygon
// by the even-odd rule with edges straight in lon/lat, the same test as the
// sampler's. Polygons crossing the antimeridian are unwrapped like
// features. A Mask is read-only after NewMask and safe for concurrent use.
type Mask struct {
	parts []maskPart
	grid  lattice
	start []int32 // cell c lists parts ids[start[c]:start[c+1]]
	ids   []int32
}

type maskPart struct {
	minX, minY, maxX, maxY float64    // y in the plane (sin latitude)
	ix                     *edgeIndex // lon/lat rings (x, latitude)
}

// maxMaskCells caps the mask's bucket grid.
const maxMaskCells = 1 << 20

// NewMask prepares mask polygons (lon/lat degrees). Parts without area are
// left out. The index is a grid over the masks' box with about four cells
// per part, each cell listing the parts whose box meets it.
func NewMask(polys []orb.MultiPolygon) *Mask {
	m := &Mask{}
	for _, mp := range polys {
		for _, poly := range mp {
			_, rings := ringsOf(poly)
			if len(rings) == 0 {
				continue
			}
			// Edges straight in lon/lat are monotone in x and latitude, so
			// the box of the vertices is the box of the part; y is kept in
			// the plane (sin latitude) for the bucket grid.
			x0, lat0, x1, lat1 := bounds(rings)
			y0, y1 := math.Sin(lat0*degToRad), math.Sin(lat1*degToRad)
			if !((x1-x0)*(lat1-lat0) > 0) {
				continue
			}
			mp := maskPart{x0, y0, x1, y1, newEdgeIndex(rings)}
			m.parts = append(m.parts, mp)
			// Unwrapped parts reaching past ±180° are also looked up from
			// the other side (queries are in [-180, 180]); the edges are
			// shifted by the offset at query time.
		}
	}
	minX, minY := math.Inf(1), math.Inf(1)
	maxX, maxY := math.Inf(-1), math.Inf(-1)
	for _, p := range m.parts {
		for _, s := range shifts(p) {
			minX, maxX = math.Min(minX, p.minX+s), math.Max(maxX, p.maxX+s)
		}
		minY, maxY = math.Min(minY, p.minY), math.Max(maxY, p.maxY)
	}
	minX, maxX = math.Max(minX, -180), math.Min(maxX, 180)
	if len(m.parts) == 0 || !(maxX > minX) || !(maxY > minY) {
		m.parts = nil
		return m
	}
	cells := max(1, min(maxMaskCells, 4*len(m.parts)))
	w, h := maxX-minX, maxY-minY
	nx := max(1, min(cells, int(math.Round(math.Sqrt(float64(cells)*w*degToRad/h)))))
	ny := max(1, cells/nx)
	m.grid = lattice{minX: minX, minY: minY, cw: w / float64(nx), ch: h / float64(ny), nx: nx, ny: ny}
	each := func(f func(c, id int)) {
		for id, p := range m.parts {
			for _, s := range shifts(p) {
				lo, hi := math.Max(p.minX+s, minX), math.Min(p.maxX+s, maxX)
				if lo > hi {
					continue
				}
				i0, i1 := m.grid.col(lo), m.grid.col(hi)
				j0, j1 := m.grid.row(p.minY), m.grid.row(p.maxY)
				for j := j0; j <= j1; j++ {
					for i := i0; i <= i1; i++ {
						f(j*nx+i, id)
					}
				}
			}
		}
	}
	m.start = make([]int32, nx*ny+1)
	each(func(c, _ int) { m.start[c+1]++ })
	for c := 0; c < nx*ny; c++ {
		m.start[c+1] += m.start[c]
	}
	m.ids = make([]int32, m.start[nx*ny])
	fill := make([]int32, nx*ny)
	copy(fill, m.start)
	each(func(c, id int) { m.ids[fill[c]] = int32(id); fill[c]++ })
	return m
}

// shifts lists the x offsets under which part p can contain a point with x
// in [-180, 180].
func shifts(p maskPart) []float64 {
	s := []float64{0}
	if p.maxX > 180 {
		s = append(s, -360)
	}
	if p.minX < -180 {
		s = append(s, 360)
	}
	return s
}

// Len is the number of mask polygons (parts) with area.
func (m *Mask) Len() int {
	if m == nil {
		return 0
	}
	return len(m.parts)
}

// Contains tells whether q (lon/lat degrees) is masked.
func (m *Mask) Contains(q orb.Point) bool {
	lat := math.Max(-90, math.Min(90, q[1]))
	return m.containsLonLat(wrapLon(q[0]), math.Sin(lat*degToRad), lat)
}

// containsLonLat is Contains for a point with x in [-180, 180], its
// latitude and y = sin(latitude).
func (m *Mask) containsLonLat(x, y, lat float64) bool {
	if m == nil || len(m.parts) == 0 {
		return false
	}
	g := &m.grid
	if x < g.minX || y < g.minY || x > g.minX+float64(g.nx)*g.cw || y > g.minY+float64(g.ny)*g.ch {
		return false
	}
	c := g.row(y)*g.nx + g.col(x)
	for _, id := range m.ids[m.start[c]:m.start[c+1]] {
		p := &m.parts[id]
		// The part is listed once per shift that reaches this cell.
		for _, s := range [3]float64{0, 360, -360} {
			px := x + s
			if px >= p.minX && px <= p.maxX && y >= p.minY && y <= p.maxY && p.ix.contains(px, lat) {
				return true
			}
		}
	}
	return false
}

// overlaps tells whether the mask's box meets the plane box of a shape.
func (m *Mask) overlaps(s *Shape) bool {
	if m == nil || len(m.parts) == 0 {
		return false
	}
	if s.minY > m.grid.minY+float64(m.grid.ny)*m.grid.ch || s.maxY < m.grid.minY {
		return false
	}
	return true
}
