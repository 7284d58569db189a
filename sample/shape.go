package sample

import (
	"math"
	"math/rand/v2"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

const degToRad = math.Pi / 180

// boxFill is the fill ratio (part area / box area) from which a simple part
// is sampled by rejection against its box instead of by triangles, and
// boxMaxEdges the most edges such a part may have. Measured here (2 noisy
// cores, medians of 3, BENCHMARKS.md, "Dot placement"):
//   - BenchmarkFillThreshold, 64-vertex parallelogram, prepare + 100 dots:
//     box 127/66/68/40/41/36/47 µs against triangles 59/64/61/51/52/77/51 µs
//     at fill 0.1/0.2/0.3/0.4/0.5/0.6/0.8: box rejection pays from about
//     0.4, and 0.5 keeps its worst case at 2 proposals per dot;
//   - BenchmarkMethodByEdges, coastlines of fill ≈ 0.6, per dot: box
//     175/236/278/267/336 ns against triangles 116/101/90/113/130 ns at
//     64/512/2048/8192/50000 vertices: triangle draws cost the same at
//     any size while the containment test grows with the number of edges
//     a horizontal line meets, so big rings go to triangles whatever
//     their fill (their triangulation costs about as much as checkRings).
const (
	boxFill     = 0.5
	boxMaxEdges = 2048
)

// method is how a part draws proposals.
type method uint8

const (
	byBox       method = iota // uniform in the box, test against the rings
	byTriangles               // pick a triangle by area, uniform in it; always inside
	byGrid                    // pick an inside or boundary cell, uniform in it; test in boundary cells
	autoMethod  method = 255  // let NewShape choose
)

func (m method) String() string {
	switch m {
	case byBox:
		return "box"
	case byTriangles:
		return "triangles"
	case byGrid:
		return "grid"
	}
	return "auto"
}

// Shape is a feature's polygons prepared for sampling, in the equal-area
// plane x = longitude (degrees, unwrapped across the antimeridian),
// y = sin(latitude). Each part with area gets a sampling method; see the
// package documentation.
type Shape struct {
	parts    []part
	pick     *alias // part by proposal weight
	area     float64
	crossing bool
	minX     float64
	maxX     float64
	minY     float64
	maxY     float64
	outline  []float64 // lon/lat segments (x0,y0,x1,y1) for features without area
	olen     []float64 // cumulative segment lengths
}

type part struct {
	rings                  [][]float64
	minX, minY, maxX, maxY float64
	area                   float64 // plane units: degrees × (sin φ)
	weight                 float64 // proposal area
	method                 method
	check                  ringCheck
	ix                     *edgeIndex // plane rings, for the grid
	ll                     *edgeIndex // lon/lat rings: containment
	tri                    []float64  // 6 per triangle
	tris                   *alias
	grid                   *cellGrid
}

// NewShape prepares g (lon/lat degrees) for sampling. Parts without area
// are dropped; Area then tells whether anything is left.
func NewShape(g orb.MultiPolygon) *Shape { return newShape(g, autoMethod) }

func newShape(g orb.MultiPolygon, force method) *Shape {
	s := &Shape{minX: math.Inf(1), minY: math.Inf(1), maxX: math.Inf(-1), maxY: math.Inf(-1)}
	var weights []float64
	for _, poly := range g {
		pt, ok := newPart(poly, force)
		if pt.check == ringsCross {
			s.crossing = true
		}
		if !ok {
			continue
		}
		s.parts = append(s.parts, pt)
		weights = append(weights, pt.weight)
		s.area += pt.area
		s.minX, s.maxX = math.Min(s.minX, pt.minX), math.Max(s.maxX, pt.maxX)
		s.minY, s.maxY = math.Min(s.minY, pt.minY), math.Max(s.maxY, pt.maxY)
	}
	if len(s.parts) > 0 {
		s.pick = newAlias(weights)
	} else {
		s.setOutline(g)
	}
	return s
}

// newPart prepares one polygon; ok is false when it has no area.
func newPart(poly orb.Polygon, force method) (part, bool) {
	var llRings [][]float64
	pt := part{}
	pt.rings, llRings = ringsOf(poly)
	if len(pt.rings) == 0 {
		return pt, false
	}
	pt.minX, pt.minY, pt.maxX, pt.maxY = bounds(pt.rings)
	box := (pt.maxX - pt.minX) * (pt.maxY - pt.minY)
	if !(box > 0) || math.IsInf(box, 0) {
		return pt, false
	}
	// Topology is that of the lon/lat rings: densified chords of two edges
	// may meet within EdgeTolerance where the edges themselves do not (two
	// diagonals crossing at both their midpoints meet at a shared vertex).
	pt.check = checkRings(llRings)
	pt.ix = newEdgeIndex(pt.rings)
	pt.ll = newEdgeIndex(llRings)
	m := force
	if pt.check == ringsSimple {
		pt.area = math.Abs(geo.RingArea(asRing(pt.rings[0])))
		for _, h := range pt.rings[1:] {
			pt.area -= math.Abs(geo.RingArea(asRing(h)))
		}
		if !(pt.area > 0) {
			return pt, false
		}
		if m == autoMethod {
			m = byTriangles
			if pt.area >= boxFill*box && pt.ix.edges <= boxMaxEdges {
				m = byBox
			}
		}
	} else {
		// Even-odd fill that triangulation does not handle.
		m = byGrid
	}
	if m == byTriangles {
		tri, ok := triangulate(pt.rings)
		sum := 0.0
		w := make([]float64, len(tri)/6)
		for k := range w {
			t := tri[6*k:]
			w[k] = cross(t[0], t[1], t[2], t[3], t[4], t[5]) / 2
			sum += w[k]
		}
		// A wrong cover misses or doubles whole triangles; 1e-8 is far above
		// the rounding of the two sums (TestRealCountyBoundaries).
		if ok && len(w) > 0 && math.Abs(sum-pt.area) <= 1e-8*pt.area {
			pt.tri, pt.tris = tri, newAlias(w)
			pt.weight = sum
		} else {
			m = byGrid
		}
	}
	switch m {
	case byBox:
		pt.weight = box
	case byGrid:
		pt.grid = newCellGrid(pt.rings, pt.ix, pt.minX, pt.minY, pt.maxX, pt.maxY)
		pt.weight = pt.grid.weight()
		if pt.check != ringsSimple {
			pt.area = pt.grid.area(pt.ix)
		}
		if !(pt.area > 0) || pt.weight <= 0 {
			return pt, false
		}
	}
	pt.method = m
	return pt, true
}

// propose draws one point from the part's proposal (in the plane) and says
// whether it may be inside the part; inside makes the final test.
func (pt *part) propose(p *rand.PCG) (x, y float64, ok bool) {
	switch pt.method {
	case byTriangles:
		t := pt.tri[6*pt.tris.draw(p):]
		u, v := unit(p), unit(p)
		if u+v > 1 {
			u, v = 1-u, 1-v
		}
		x = t[0] + u*(t[2]-t[0]) + v*(t[4]-t[0])
		y = t[1] + u*(t[3]-t[1]) + v*(t[5]-t[1])
		return x, y, true
	case byGrid:
		return pt.grid.propose(p, pt.ix)
	}
	x = pt.minX + unit(p)*(pt.maxX-pt.minX)
	y = pt.minY + unit(p)*(pt.maxY-pt.minY)
	return x, y, true
}

// inside is the containment test of plane point (x, y) against the part's
// rings with edges straight in lon/lat: a horizontal ray in the plane is a
// parallel, so even-odd ray casting on (x, latitude) against the lon/lat
// edges is ray casting in the plane against the curved images of the edges.
// It returns the point's latitude too, and y clamped to [-1, 1] (the sine of
// that latitude as drawn).
func (pt *part) inside(x, y float64) (lat, sin float64, ok bool) {
	sin = math.Max(-1, math.Min(1, y))
	lat = math.Asin(sin) / degToRad
	return lat, sin, pt.ll.contains(x, lat)
}

// Area is the shape's area on the unit sphere (steradians). For parts whose
// rings cross it is an estimate (see cellGrid.area); otherwise exact for the
// polygons as drawn in the equal-area plane.
func (s *Shape) Area() float64 { return s.area * degToRad }

// Point draws one point uniformly by area, trying at most maxTry proposals.
// The proposals of all parts are weighted by their proposal areas and a
// rejected proposal starts over from the choice of part, which makes the
// result uniform over the union of the parts whatever their methods.
func (s *Shape) Point(p *rand.PCG, maxTry int) (orb.Point, bool) {
	q, _, ok := s.point(p, maxTry)
	return q, ok
}

// point is Point that also returns the sine of the point's latitude as
// drawn (the plane's y).
func (s *Shape) point(p *rand.PCG, maxTry int) (orb.Point, float64, bool) {
	for try := 0; try < maxTry && len(s.parts) > 0; try++ {
		pt := &s.parts[s.pick.draw(p)]
		if x, y, ok := pt.propose(p); ok {
			if lat, sin, in := pt.inside(x, y); in {
				return orb.Point{wrapLon(x), lat}, sin, true
			}
		}
	}
	return orb.Point{}, 0, false
}

// pointUnmasked is point that also rejects points inside masks.
func (s *Shape) pointUnmasked(p *rand.PCG, maxTry int, m *Mask) (orb.Point, float64, bool) {
	for try := 0; try < maxTry && len(s.parts) > 0; try++ {
		pt := &s.parts[s.pick.draw(p)]
		x, y, ok := pt.propose(p)
		if !ok {
			continue
		}
		lat, sin, in := pt.inside(x, y)
		if !in {
			continue
		}
		x = wrapLon(x)
		if m.containsLonLat(x, y, lat) {
			continue
		}
		return orb.Point{x, lat}, sin, true
	}
	return orb.Point{}, 0, false
}

// Contains tells whether point q (lon/lat degrees) is inside the shape by
// the test the sampler uses: even-odd against the edges straight in lon/lat.
func (s *Shape) Contains(q orb.Point) bool {
	lat := math.Max(-90, math.Min(90, q[1]))
	y := math.Sin(lat * degToRad)
	for k := range s.parts {
		pt := &s.parts[k]
		if y < pt.minY || y > pt.maxY {
			continue
		}
		// Unwrapped parts may lie anywhere in x: try each shift of q by
		// 360° that lands in the part's box.
		x := q[0] + 360*math.Ceil((pt.minX-q[0])/360)
		for n := 0; x <= pt.maxX && n < 4096; n++ {
			if x >= pt.minX && pt.ll.contains(x, lat) {
				return true
			}
			x += 360
		}
		if q[0] >= pt.minX && q[0] <= pt.maxX && pt.ll.contains(q[0], lat) {
			return true
		}
	}
	return false
}

// setOutline keeps the segments of g's rings, for placing the dots of a
// feature that has people but no area.
func (s *Shape) setOutline(g orb.MultiPolygon) {
	total := 0.0
	for _, poly := range g {
		for _, ring := range poly {
			for i, q := range ring {
				if !finite(q) {
					continue
				}
				if len(s.outline) == 0 && len(s.olen) == 0 {
					// Remember the first vertex as a zero-length segment.
					s.outline = append(s.outline, q[0], q[1], q[0], q[1])
					s.olen = append(s.olen, 0)
				}
				if i == 0 || !finite(ring[i-1]) {
					continue
				}
				a := ring[i-1]
				d := math.Hypot(q[0]-a[0], q[1]-a[1])
				if d == 0 || math.IsInf(d, 0) {
					continue
				}
				total += d
				s.outline = append(s.outline, a[0], a[1], q[0], q[1])
				s.olen = append(s.olen, total)
			}
		}
	}
}

func finite(q orb.Point) bool {
	return !math.IsNaN(q[0]) && !math.IsInf(q[0], 0) && !math.IsNaN(q[1]) && !math.IsInf(q[1], 0)
}

// outlinePoint draws a point uniformly by length along the outline of a
// shape without area (in lon/lat degrees); ok is false when g had no vertex.
func (s *Shape) outlinePoint(p *rand.PCG) (orb.Point, bool) {
	if len(s.olen) == 0 {
		return orb.Point{}, false
	}
	total := s.olen[len(s.olen)-1]
	if total == 0 {
		return orb.Point{wrapLon(s.outline[0]), s.outline[1]}, true
	}
	u := unit(p) * total
	lo, hi := 0, len(s.olen)-1
	for lo < hi {
		mid := (lo + hi) / 2
		if s.olen[mid] > u {
			hi = mid
		} else {
			lo = mid + 1
		}
	}
	seg := s.outline[4*lo:]
	t := unit(p)
	return orb.Point{wrapLon(seg[0] + t*(seg[2]-seg[0])), seg[1] + t*(seg[3]-seg[1])}, true
}
