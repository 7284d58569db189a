package sample

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
	geom "github.com/twpayne/go-geom"
	"github.com/twpayne/go-geom/xy"
)

// Test geometry is mostly written in the equal-area plane (x = longitude
// degrees, y = sin latitude), where the sampler's edges are straight, and
// turned into lon/lat by fromPlane.

// fromPlane turns plane rings into an orb.Polygon in lon/lat degrees.
func fromPlane(rings ...[][2]float64) orb.Polygon {
	var poly orb.Polygon
	for _, r := range rings {
		var ring orb.Ring
		for _, p := range r {
			ring = append(ring, orb.Point{p[0], math.Asin(p[1]) / degToRad})
		}
		if ring[0] != ring[len(ring)-1] {
			ring = append(ring, ring[0])
		}
		poly = append(poly, ring)
	}
	return poly
}

// toPlane maps a lon/lat point to the plane.
func toPlane(p orb.Point) (float64, float64) {
	return p[0], math.Sin(p[1] * degToRad)
}

// refInside is the independent containment test: go-geom's ray-crossing
// point-in-ring (xy.IsPointInRing; boundary counts as inside) applied to the
// part's rings in lon/lat, where edges are straight (RFC 7946 §3.1.1),
// inside when an odd number of rings contain the point. shift tries x ± 360 too, for parts drawn across the
// antimeridian.
func refInside(poly orb.Polygon, p orb.Point) bool {
	x, y := p[0], p[1]
	for _, s := range []float64{0, 360, -360} {
		n := 0
		for _, ring := range refRings(poly) {
			if xy.IsPointInRing(geom.XY, geom.Coord{x + s, y}, ring) {
				n++
			}
		}
		if n%2 == 1 {
			return true
		}
	}
	return false
}

// refRings converts a polygon to flat lon/lat rings, unwrapping a ring that
// jumps across the antimeridian the plain way (consecutive longitudes kept
// within 180° of each other) and moving holes next to the outer ring.
func refRings(poly orb.Polygon) [][]float64 {
	var out [][]float64
	for ri, ring := range poly {
		var flat []float64
		prev := 0.0
		for i, p := range ring {
			lon := p[0]
			if i > 0 {
				for lon-prev > 180 {
					lon -= 360
				}
				for lon-prev < -180 {
					lon += 360
				}
			}
			prev = lon
			flat = append(flat, lon, p[1])
		}
		if ri > 0 && len(out) > 0 {
			d := math.Round((out[0][0] - flat[0]) / 360)
			for i := 0; i < len(flat); i += 2 {
				flat[i] += 360 * d
			}
		}
		out = append(out, flat)
	}
	return out
}

// refInsideMulti is refInside over the parts of a MultiPolygon; it returns
// the index of the first part containing p, or -1.
func refInsideMulti(mp orb.MultiPolygon, p orb.Point) int {
	for i, poly := range mp {
		if refInside(poly, p) {
			return i
		}
	}
	return -1
}

// draw draws n dots of category 0 from g with a forced method, the way
// FeatureN does (stream per dot index), returning them in lon/lat.
func draw(t testing.TB, g orb.MultiPolygon, m method, seed uint64, id string, n int) []orb.Point {
	t.Helper()
	s := newShape(g, m)
	var pts []orb.Point
	h := IDHash(id)
	for i := 0; i < n; i++ {
		p := stream(seed, h, 0, uint64(i))
		pt, ok := s.Point(&p, DefaultMaxAttempts)
		if !ok {
			t.Fatalf("dot %d not placed", i)
		}
		pts = append(pts, pt)
	}
	return pts
}

// methodsOf lists the methods a shape chose, per part.
func methodsOf(s *Shape) []method {
	var ms []method
	for _, p := range s.parts {
		ms = append(ms, p.method)
	}
	return ms
}
