package sample

import (
	"math"
	"math/rand/v2"
	"sort"

	"github.com/paulmach/orb"
)

const degToRad = math.Pi / 180

// Shape is a feature's polygons prepared for sampling: each part in the
// equal-area plane (x = longitude in radians, y = sin latitude) with its
// bounding box and area.
type Shape struct {
	parts []part
	cum   []float64 // cumulative part areas, for choosing a part
	area  float64
}

type part struct {
	rings                  [][]float64 // x0,y0,x1,y1,… per ring, closed
	minX, minY, maxX, maxY float64
	area                   float64
}

// NewShape prepares g for sampling. Parts with no area are dropped.
func NewShape(g orb.MultiPolygon) *Shape {
	s := &Shape{}
	for _, poly := range g {
		var pt part
		pt.minX, pt.minY = math.Inf(1), math.Inf(1)
		pt.maxX, pt.maxY = math.Inf(-1), math.Inf(-1)
		for ri, ring := range poly {
			if len(ring) < 3 {
				continue
			}
			flat := make([]float64, 0, 2*len(ring)+2)
			for _, p := range ring {
				x, y := p[0]*degToRad, math.Sin(p[1]*degToRad)
				flat = append(flat, x, y)
				if ri == 0 {
					pt.minX, pt.maxX = math.Min(pt.minX, x), math.Max(pt.maxX, x)
					pt.minY, pt.maxY = math.Min(pt.minY, y), math.Max(pt.maxY, y)
				}
			}
			if ring[0] != ring[len(ring)-1] {
				flat = append(flat, flat[0], flat[1])
			}
			a := math.Abs(shoelace(flat))
			if ri == 0 {
				pt.area += a
			} else {
				pt.area -= a
			}
			pt.rings = append(pt.rings, flat)
		}
		if len(pt.rings) == 0 || pt.area <= 0 || pt.maxX <= pt.minX || pt.maxY <= pt.minY {
			continue
		}
		s.parts = append(s.parts, pt)
		s.area += pt.area
		s.cum = append(s.cum, s.area)
	}
	return s
}

// Area is the shape's area on the unit sphere (steradians).
func (s *Shape) Area() float64 { return s.area }

// Point draws one point uniformly by area, trying at most maxTry times.
func (s *Shape) Point(p *rand.PCG, maxTry int) (orb.Point, bool) {
	if len(s.parts) == 0 {
		return orb.Point{}, false
	}
	i := 0
	if len(s.parts) > 1 {
		u := unit(p) * s.area
		i = sort.SearchFloat64s(s.cum, u)
		if i >= len(s.parts) {
			i = len(s.parts) - 1
		}
	}
	pt := &s.parts[i]
	w, h := pt.maxX-pt.minX, pt.maxY-pt.minY
	for try := 0; try < maxTry; try++ {
		x := pt.minX + unit(p)*w
		y := pt.minY + unit(p)*h
		if evenOdd(pt.rings, x, y) {
			return orb.Point{x / degToRad, math.Asin(y) / degToRad}, true
		}
	}
	return orb.Point{}, false
}

// evenOdd reports whether (x, y) is inside the rings by the even-odd rule:
// inside the outer ring and outside every hole, and for self-crossing rings
// inside the part that the even-odd rule fills.
func evenOdd(rings [][]float64, x, y float64) bool {
	in := false
	for _, r := range rings {
		n := len(r)
		for i := 2; i < n; i += 2 {
			x0, y0, x1, y1 := r[i-2], r[i-1], r[i], r[i+1]
			if (y0 > y) != (y1 > y) && x < x0+(y-y0)*(x1-x0)/(y1-y0) {
				in = !in
			}
		}
	}
	return in
}

func shoelace(r []float64) float64 {
	var a float64
	for i := 2; i < len(r); i += 2 {
		a += r[i-2]*r[i+1] - r[i]*r[i-1]
	}
	return a / 2
}
