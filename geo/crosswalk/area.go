package crosswalk

import (
	"math"
	"slices"
	"sort"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// pt is a point of the equal-area plane: x = longitude, y = sin(latitude)
// scaled by 180/π, so both axes are in degrees at the equator and one
// tolerance fits both.
type pt struct{ x, y float64 }

const ySpan = 180 / math.Pi

func toPlane(p orb.Point) pt { return pt{p[0], math.Sin(p[1]*math.Pi/180) * ySpan} }

// eps is the distance in plane degrees under which two points are one
// (about 0.1 mm on the ground): shared boundaries are copies of one line.
const eps = 1e-9

// shape is a polygon prepared for overlap areas: its rings oriented with
// the interior on the left (outer rings anticlockwise, holes clockwise).
type shape struct {
	rings                  [][]pt
	minX, minY, maxX, maxY float64
	area                   float64 // plane area, square plane degrees
}

func prepare(g orb.MultiPolygon) *shape {
	s := &shape{minX: math.Inf(1), minY: math.Inf(1), maxX: math.Inf(-1), maxY: math.Inf(-1)}
	for _, poly := range g {
		for ri, r := range poly {
			var ring []pt
			for _, p := range r {
				q := toPlane(p)
				if n := len(ring); n > 0 && ring[n-1] == q {
					continue
				}
				ring = append(ring, q)
			}
			if n := len(ring); n > 1 && ring[0] == ring[n-1] {
				ring = ring[:n-1]
			}
			if len(ring) < 3 {
				continue
			}
			a := signedArea(ring)
			if (ri == 0) != (a > 0) {
				slices.Reverse(ring)
				a = -a
			}
			s.area += a
			s.rings = append(s.rings, ring)
			for _, q := range ring {
				s.minX, s.maxX = math.Min(s.minX, q.x), math.Max(s.maxX, q.x)
				s.minY, s.maxY = math.Min(s.minY, q.y), math.Max(s.maxY, q.y)
			}
		}
	}
	return s
}

func signedArea(r []pt) float64 {
	s := 0.0
	o := r[0]
	for i := 1; i+1 < len(r); i++ {
		s += cross(sub(r[i], o), sub(r[i+1], o))
	}
	return s / 2
}

func sub(a, b pt) pt        { return pt{a.x - b.x, a.y - b.y} }
func cross(a, b pt) float64 { return a.x*b.y - a.y*b.x }
func dot(a, b pt) float64   { return a.x*b.x + a.y*b.y }
func (s *shape) meets(o *shape) bool {
	return s.minX <= o.maxX+eps && o.minX <= s.maxX+eps && s.minY <= o.maxY+eps && o.minY <= s.maxY+eps
}

// overlap is the plane area of a ∩ b by Green's theorem: the area of a
// region is ½∮(x dy − y dx) around its boundary, and the boundary of a ∩ b
// is made of the pieces of a's boundary inside b and of b's boundary
// inside a. A piece on both boundaries counts once when the two run the
// same way (both interiors on its left) and not at all when they run
// opposite ways (the interiors lie on either side: no area there). Every
// piece's midpoint is tested with the even-odd rule, the sampler's rule.
func overlap(a, b *shape) float64 {
	if !a.meets(b) {
		return 0
	}
	o := pt{a.minX, a.minY} // a local origin keeps the digits
	s := 0.0
	for _, r := range a.rings {
		for i := range r {
			s += piecesInside(r[i], r[(i+1)%len(r)], b, true, o)
		}
	}
	for _, r := range b.rings {
		for i := range r {
			s += piecesInside(r[i], r[(i+1)%len(r)], a, false, o)
		}
	}
	return s / 2
}

// piecesInside cuts edge p→q where other's boundary meets it and returns
// Σ cross(start−o, end−o) over the pieces that bound the intersection.
// sameWay says whether pieces lying on other's boundary, running the same
// way, count (true for one of the two shapes only).
func piecesInside(p, q pt, other *shape, sameWay bool, o pt) float64 {
	if math.Max(p.x, q.x) < other.minX-eps || math.Min(p.x, q.x) > other.maxX+eps ||
		math.Max(p.y, q.y) < other.minY-eps || math.Min(p.y, q.y) > other.maxY+eps {
		return 0
	}
	r := sub(q, p)
	rr := dot(r, r)
	if rr == 0 {
		return 0
	}
	rl := math.Sqrt(rr)
	ts := []float64{0, 1}
	lo, hi := pt{math.Min(p.x, q.x) - eps, math.Min(p.y, q.y) - eps}, pt{math.Max(p.x, q.x) + eps, math.Max(p.y, q.y) + eps}
	for _, ring := range other.rings {
		for i := range ring {
			c, d := ring[i], ring[(i+1)%len(ring)]
			if math.Max(c.x, d.x) < lo.x || math.Min(c.x, d.x) > hi.x || math.Max(c.y, d.y) < lo.y || math.Min(c.y, d.y) > hi.y {
				continue
			}
			sv := sub(d, c)
			den := cross(r, sv)
			cp := sub(c, p)
			// other's vertices on p→q cut it (this also covers edges
			// running along it).
			for _, v := range []pt{c, d} {
				vp := sub(v, p)
				if math.Abs(cross(r, vp))/rl <= eps {
					if t := dot(vp, r) / rr; t > 0 && t < 1 {
						ts = append(ts, t)
					}
				}
			}
			if math.Abs(den) <= eps*rl*math.Sqrt(dot(sv, sv)) {
				continue // parallel
			}
			t := cross(cp, sv) / den
			u := cross(cp, r) / den
			if t > 0 && t < 1 && u >= 0 && u <= 1 {
				ts = append(ts, t)
			}
		}
	}
	sort.Float64s(ts)
	sum := 0.0
	for i := 0; i+1 < len(ts); i++ {
		t0, t1 := ts[i], ts[i+1]
		if (t1-t0)*rl <= eps {
			continue
		}
		a := pt{p.x + r.x*t0, p.y + r.y*t0}
		b := pt{p.x + r.x*t1, p.y + r.y*t1}
		m := pt{(a.x + b.x) / 2, (a.y + b.y) / 2}
		switch other.onBoundary(m, r) {
		case 1:
			if !sameWay {
				continue
			}
		case -1:
			continue
		default:
			if !other.inside(m) {
				continue
			}
		}
		sum += cross(sub(a, o), sub(b, o))
	}
	return sum
}

// onBoundary is +1 when m lies on an edge of s running the way of dir, -1
// when on one running the other way, 0 when on none.
func (s *shape) onBoundary(m, dir pt) int {
	for _, ring := range s.rings {
		for i := range ring {
			c, d := ring[i], ring[(i+1)%len(ring)]
			if m.x < math.Min(c.x, d.x)-eps || m.x > math.Max(c.x, d.x)+eps || m.y < math.Min(c.y, d.y)-eps || m.y > math.Max(c.y, d.y)+eps {
				continue
			}
			e := sub(d, c)
			el := math.Sqrt(dot(e, e))
			if el == 0 || math.Abs(cross(e, sub(m, c)))/el > eps {
				continue
			}
			if dot(e, dir) > 0 {
				return 1
			}
			return -1
		}
	}
	return 0
}

// inside is the even-odd test of m against all of s's rings.
func (s *shape) inside(m pt) bool {
	in := false
	for _, ring := range s.rings {
		j := len(ring) - 1
		for i := range ring {
			a, b := ring[i], ring[j]
			if (a.y > m.y) != (b.y > m.y) && m.x < (b.x-a.x)*(m.y-a.y)/(b.y-a.y)+a.x {
				in = !in
			}
			j = i
		}
	}
	return in
}

// earthRadius is the radius of the sphere of equal area to the WGS 84
// ellipsoid (the authalic radius, 6371007.2 m; from memory of IUGG's mean
// radius R2), used only for the square metres in Overlap's result.
const earthRadius = 6371007.2

// Area is a polygon's area on the sphere in square metres, measured in
// the equal-area plane.
func Area(g orb.MultiPolygon) float64 { return prepare(g).area * planeToM2 }

// planeToM2 turns square plane degrees into square metres on the sphere:
// the plane is (λ in degrees, sin φ · 180/π), so one square plane degree
// is R²·(π/180)² square metres.
var planeToM2 = earthRadius * earthRadius * (math.Pi / 180) * (math.Pi / 180)

// Overlap is the area on the sphere, in square metres, that polygons a and
// b share (measured in the equal-area plane, edges straight there).
func Overlap(a, b orb.MultiPolygon) float64 {
	return overlap(prepare(a), prepare(b)) * planeToM2
}

// AreaWeights makes a crosswalk from the areas of src (the older
// boundaries) to those of dst (the newer): one pair for each source and
// target that overlap, weighted by the share of the source's area that
// lies in the target. Weights of a source sum to the share of it that the
// targets cover (Apply normalises them). Sources without area get no
// pairs (Apply reports them as unmatched). Features are matched by their
// ids (geo.Feature.ID).
func AreaWeights(src, dst *geo.Layer) []Pair {
	ts := make([]*shape, len(dst.Features))
	for j := range dst.Features {
		ts[j] = prepare(dst.Features[j].Geometry)
	}
	g := newGrid(ts)
	var pairs []Pair
	for i := range src.Features {
		s := prepare(src.Features[i].Geometry)
		if !(s.area > 0) {
			continue
		}
		for _, j := range g.near(s) {
			if a := overlap(s, ts[j]); a > 0 {
				w := a / s.area
				if w*s.area <= eps*eps {
					continue
				}
				pairs = append(pairs, Pair{Source: src.Features[i].ID, Target: dst.Features[j].ID, Weight: min(w, 1)})
			}
		}
	}
	return pairs
}

// grid buckets shapes by their boxes for AreaWeights' candidate search.
type grid struct {
	minX, minY, cw, ch float64
	nx, ny             int
	cells              [][]int
}

func newGrid(ss []*shape) *grid {
	g := &grid{minX: math.Inf(1), minY: math.Inf(1)}
	maxX, maxY := math.Inf(-1), math.Inf(-1)
	for _, s := range ss {
		if len(s.rings) == 0 {
			continue
		}
		g.minX, g.minY = math.Min(g.minX, s.minX), math.Min(g.minY, s.minY)
		maxX, maxY = math.Max(maxX, s.maxX), math.Max(maxY, s.maxY)
	}
	n := max(1, int(math.Sqrt(float64(len(ss)))))
	g.nx, g.ny = n, n
	if !(maxX > g.minX) || !(maxY > g.minY) {
		g.nx, g.ny, g.minX, g.minY, g.cw, g.ch = 1, 1, 0, 0, 1, 1
	} else {
		g.cw, g.ch = (maxX-g.minX)/float64(n), (maxY-g.minY)/float64(n)
	}
	g.cells = make([][]int, g.nx*g.ny)
	for j, s := range ss {
		if len(s.rings) == 0 {
			continue
		}
		g.each(s, func(c int) { g.cells[c] = append(g.cells[c], j) })
	}
	return g
}

func (g *grid) cell(v, lo, w float64, n int) int {
	return min(n-1, max(0, int((v-lo)/w)))
}

func (g *grid) each(s *shape, f func(c int)) {
	i0, i1 := g.cell(s.minX-eps, g.minX, g.cw, g.nx), g.cell(s.maxX+eps, g.minX, g.cw, g.nx)
	j0, j1 := g.cell(s.minY-eps, g.minY, g.ch, g.ny), g.cell(s.maxY+eps, g.minY, g.ch, g.ny)
	for j := j0; j <= j1; j++ {
		for i := i0; i <= i1; i++ {
			f(j*g.nx + i)
		}
	}
}

// near lists, in increasing order, the shapes whose cells s's box meets.
func (g *grid) near(s *shape) []int {
	seen := map[int]bool{}
	var out []int
	g.each(s, func(c int) {
		for _, j := range g.cells[c] {
			if !seen[j] {
				seen[j] = true
				out = append(out, j)
			}
		}
	})
	sort.Ints(out)
	return out
}
