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
// Antimeridian: when some edge of the polygon jumps by more than 180° of
// longitude, the polygon is taken to cross the antimeridian and its rings
// are unwrapped, each vertex shifted by a multiple of 360° so that no edge
// is longer than 180°; holes are then shifted as a whole next to their outer
// ring. x may then lie outside [-180, 180]; dots are wrapped back by wrapLon.
// A ring that does not close after unwrapping (one that goes round a pole)
// is kept as given.
func planeRings(poly orb.Polygon) [][]float64 {
	jump := false
	for _, ring := range poly {
		for i := 1; i < len(ring); i++ {
			if math.Abs(ring[i][0]-ring[i-1][0]) > 180 {
				jump = true
			}
		}
	}
	var out [][]float64
	for ri, ring := range poly {
		flat := make([]float64, 0, 2*len(ring)+2)
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
			x, y := lon+off, math.Sin(math.Max(-90, math.Min(90, lat))*degToRad)
			if n := len(flat); n >= 2 && flat[n-2] == x && flat[n-1] == y {
				continue
			}
			flat = append(flat, x, y)
		}
		if !ok {
			continue
		}
		if jump && off != 0 {
			// Did not close: the ring goes round a pole. Keep it as given.
			flat = flat[:0]
			for _, p := range ring {
				x, y := p[0], math.Sin(math.Max(-90, math.Min(90, p[1]))*degToRad)
				if n := len(flat); n >= 2 && flat[n-2] == x && flat[n-1] == y {
					continue
				}
				flat = append(flat, x, y)
			}
		}
		for n := len(flat); n >= 4 && flat[0] == flat[n-2] && flat[1] == flat[n-1]; n = len(flat) {
			flat = flat[:n-2]
		}
		if len(flat) < 6 {
			continue
		}
		flat = append(flat, flat[0], flat[1])
		if jump && ri > 0 && len(out) > 0 {
			shiftNear(flat, out[0])
		}
		out = append(out, flat)
	}
	return out
}

// shiftNear moves ring r by a multiple of 360° in x so that its first
// vertex is as close as it can be to the middle of ring ref's x range.
func shiftNear(r, ref []float64) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := 0; i < len(ref); i += 2 {
		lo, hi = math.Min(lo, ref[i]), math.Max(hi, ref[i])
	}
	k := math.Round(((lo+hi)/2 - r[0]) / 360)
	if k == 0 {
		return
	}
	for i := 0; i < len(r); i += 2 {
		r[i] += 360 * k
	}
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
