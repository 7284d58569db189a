package sample

import (
	"math"
	"unsafe"

	"github.com/paulmach/orb"
)

// planeRings turns a polygon (lon/lat degrees) into closed rings in the
// equal-area plane, x = longitude in degrees, y = sin(latitude): repeated
// consecutive points and the closing point are dropped and the ring closed
// again, rings with fewer than three distinct points are dropped, and
// non-finite coordinates drop their ring.
//
// Edges are straight in longitude/latitude (RFC 7946 §3.1.1), which is a
// curve in the plane: each edge is densified (densify) so that the plane
// ring strays from it by at most EdgeTolerance on the ground.
//
// Antimeridian: when some edge of the polygon jumps by more than 180° of
// longitude, the polygon is taken to cross the antimeridian and its rings
// are unwrapped, each vertex shifted by a multiple of 360° so that no edge
// is longer than 180°; holes are then shifted as a whole next to their outer
// ring. x may then lie outside [-180, 180]; dots are wrapped back by wrapLon.
// A ring that does not close after unwrapping (one that goes round a pole)
// is kept as given.
func planeRings(poly orb.Polygon) [][]float64 {
	plane, _ := ringsOf(poly)
	return plane
}

// ringsOf returns planeRings(poly) and, ring for ring, the same rings as
// given (not densified) in (x, latitude) degrees with the same unwrapping:
// the exact lon/lat outline that containment is decided against.
func ringsOf(poly orb.Polygon) (plane, lonLat [][]float64) {
	jump := false
	for _, ring := range poly {
		for i := 1; i < len(ring); i++ {
			// An edge along a pole line is a point on the globe: no jump.
			if math.Abs(ring[i][0]-ring[i-1][0]) > 180 && !(math.Abs(ring[i][1]) == 90 && ring[i][1] == ring[i-1][1]) {
				jump = true
			}
		}
	}
	for ri, ring := range poly {
		// ll holds (x, latitude) with x unwrapped when the polygon jumps.
		ll := make([]float64, 0, 2*len(ring)+2)
		off := 0.0
		ok := true
		for i, p := range ring {
			lon, lat := p[0], p[1]
			if math.IsNaN(lon) || math.IsInf(lon, 0) || math.IsNaN(lat) || math.IsInf(lat, 0) {
				ok = false
				break
			}
			if jump && i > 0 {
				d := lon - ring[i-1][0]
				if d > 180 {
					off -= 360
				} else if d < -180 {
					off += 360
				}
			}
			ll = append(ll, lon+off, math.Max(-90, math.Min(90, lat)))
		}
		if !ok {
			continue
		}
		if jump && off != 0 {
			// Did not close: the ring goes round a pole. Keep it as given.
			ll = ll[:0]
			for _, p := range ring {
				ll = append(ll, p[0], math.Max(-90, math.Min(90, p[1])))
			}
		}
		// The lon/lat ring, without repeats or closing point, then closed.
		llr := make([]float64, 0, len(ll)+2)
		for i := 0; i+1 < len(ll); i += 2 {
			if n := len(llr); n >= 2 && llr[n-2] == ll[i] && llr[n-1] == ll[i+1] {
				continue
			}
			llr = append(llr, ll[i], ll[i+1])
		}
		for n := len(llr); n >= 4 && llr[0] == llr[n-2] && llr[1] == llr[n-1]; n = len(llr) {
			llr = llr[:n-2]
		}
		if len(llr) < 6 {
			continue
		}
		llr = append(llr, llr[0], llr[1])
		flat := make([]float64, 0, len(ll))
		push := func(x, y float64) {
			if n := len(flat); n >= 2 && flat[n-2] == x && flat[n-1] == y {
				return
			}
			flat = append(flat, x, y)
		}
		for i := 0; i+1 < len(ll); i += 2 {
			if i > 0 {
				densify(ll[i-2], ll[i-1], ll[i], ll[i+1], push)
			}
			push(ll[i], math.Sin(ll[i+1]*degToRad))
		}
		for n := len(flat); n >= 4 && flat[0] == flat[n-2] && flat[1] == flat[n-1]; n = len(flat) {
			flat = flat[:n-2]
		}
		if len(flat) < 6 {
			continue
		}
		flat = append(flat, flat[0], flat[1])
		if jump && ri > 0 && len(plane) > 0 {
			if k := shiftNear(flat, plane[0]); k != 0 {
				for i := 0; i < len(llr); i += 2 {
					llr[i] += 360 * k
				}
			}
		}
		plane = append(plane, flat)
		lonLat = append(lonLat, llr)
	}
	return plane, lonLat
}

// EdgeTolerance is the most, in metres on the ground, by which the plane
// outline that proposals are drawn from strays from the polygon's edges
// taken as straight lines in longitude/latitude (TestDensifyTolerance
// measures it). Containment itself is exact (part.inside), so no dot falls
// outside; the strips of at most this width where an edge bulges out of
// its chords are the only places dots cannot reach.
const EdgeTolerance = 1.0

// earthRadius is the mean radius of the Earth in metres (IUGG R1, WGS 84:
// 6 371 008.8 m), used to turn EdgeTolerance into an angle.
const earthRadius = 6371008.8

// densifyDepth bounds the bisection of one edge: 2^-40 of an edge of 180°
// is far below EdgeTolerance, so the bound only guards against NaN.
const densifyDepth = 40

// densify calls push with the plane points strictly between (x0, lat0) and
// (x1, lat1) (x = longitude, degrees) that make the plane polyline follow
// the edge straight in lon/lat within EdgeTolerance. An edge along a
// meridian or a parallel is straight in the plane too and gets no point.
//
// The edge is cut at the equator, then bisected in its parameter until the
// midpoint of each chord
// lies within half the tolerance of the edge, measured north–south (an upper
// bound of the distance to the edge): at a given x the chord and the edge
// differ only in latitude. The deviation of a chord is largest near its
// middle (it is close to a parabola in the parameter), and half the
// tolerance leaves room for the rest; TestDensifyTolerance checks the whole
// length of edges up to the poles.
func densify(x0, lat0, x1, lat1 float64, push func(x, y float64)) {
	if x0 == x1 || lat0 == lat1 {
		return
	}
	tol := 0.5 * EdgeTolerance / earthRadius // radians of latitude
	var rec func(xa, pa, xb, pb float64, depth int)
	rec = func(xa, pa, xb, pb float64, depth int) {
		xm, pm := (xa+xb)/2, (pa+pb)/2
		ya, yb := math.Sin(pa*degToRad), math.Sin(pb*degToRad)
		chord := math.Asin(math.Max(-1, math.Min(1, (ya+yb)/2)))
		if depth >= densifyDepth || !(math.Abs(chord-pm*degToRad) > tol) {
			return
		}
		rec(xa, pa, xm, pm, depth+1)
		push(xm, math.Sin(pm*degToRad))
		rec(xm, pm, xb, pb, depth+1)
	}
	if (lat0 < 0) != (lat1 < 0) && lat0 != 0 && lat1 != 0 {
		// sin φ bends the other way across the equator, where a chord's
		// midpoint can lie on the edge while its quarters do not: split
		// there, so that on each side the deviation has one sign.
		xe := x0 + (0-lat0)/(lat1-lat0)*(x1-x0)
		rec(x0, lat0, xe, 0, 0)
		push(xe, 0)
		rec(xe, 0, x1, lat1, 0)
		return
	}
	rec(x0, lat0, x1, lat1, 0)
}

// shiftNear moves ring r by a multiple of 360° in x so that its first
// vertex is as close as it can be to the middle of ring ref's x range, and
// returns the multiple.
func shiftNear(r, ref []float64) float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := 0; i < len(ref); i += 2 {
		lo, hi = math.Min(lo, ref[i]), math.Max(hi, ref[i])
	}
	k := math.Round(((lo+hi)/2 - r[0]) / 360)
	if k == 0 {
		return 0
	}
	for i := 0; i < len(r); i += 2 {
		r[i] += 360 * k
	}
	return k
}

// wrapLon brings an unwrapped longitude back into [-180, 180].
func wrapLon(x float64) float64 {
	switch {
	case x >= -180 && x <= 180:
		return x
	case x > 180 && x <= 540:
		return x - 360 // exact: both within a factor of two
	case x < -180 && x >= -540:
		return x + 360
	}
	x = math.Mod(x+180, 360)
	if x < 0 {
		x += 360
	}
	return x - 180
}

// asRing views a flat ring (x0, y0, x1, y1, …) as an orb.Ring without
// copying, so that geo.RingArea serves the sampler's rings too. orb.Point is
// [2]float64, so n points and 2n float64s have the same layout in memory.
// (geo.RingArea takes coordinates relative to the first vertex: with
// longitudes near ±180 and small areas the plain formula loses most of its
// digits; real county parts of 1e-9 sr came out 1e-6 off, relatively.)
func asRing(r []float64) orb.Ring {
	if len(r) < 2 {
		return nil
	}
	return unsafe.Slice((*orb.Point)(unsafe.Pointer(unsafe.SliceData(r))), len(r)/2)
}

// bounds returns the bounding box of all rings.
func bounds(rings [][]float64) (minX, minY, maxX, maxY float64) {
	minX, minY = math.Inf(1), math.Inf(1)
	maxX, maxY = math.Inf(-1), math.Inf(-1)
	for _, r := range rings {
		for i := 0; i+1 < len(r); i += 2 {
			x, y := r[i], r[i+1]
			if x < minX {
				minX = x
			}
			if x > maxX {
				maxX = x
			}
			if y < minY {
				minY = y
			}
			if y > maxY {
				maxY = y
			}
		}
	}
	return
}

// cross is twice the signed area of triangle (a, b, c): positive when c is
// left of the line a→b.
func cross(ax, ay, bx, by, cx, cy float64) float64 {
	return (bx-ax)*(cy-ay) - (by-ay)*(cx-ax)
}
