package read

import (
	"fmt"
	"math"
	"sort"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
	"github.com/stipple-maps/stipple/geo"
)

// Repair cleans the layer's geometry in place and records what it did in
// res.Notes and res.Repairs. A polygon whose outer ring is dropped is dropped
// with its holes; a feature left with no polygon keeps its counts, and the
// sampler reports its people as not drawn.
func Repair(res *Result) {
	l := res.Layer
	note := func(f *geo.Feature, format string, a ...any) {
		e := &geo.Error{Path: l.Path, Index: f.Index, ID: f.ID, Field: "geometry", Message: fmt.Sprintf(format, a...)}
		res.Notes = append(res.Notes, e.Error())
	}
	for i := range l.Features {
		f := &l.Features[i]
		var out orb.MultiPolygon
		for pi, poly := range f.Geometry {
			var keep orb.Polygon
			for ri, ring := range poly {
				r, closed, dropped := clean(ring)
				if closed {
					res.Repairs.ClosedRings++
				}
				res.Repairs.DroppedPoints += dropped
				what := "hole"
				if ri == 0 {
					what = "outer ring"
				}
				if len(r) < 4 {
					res.Repairs.DroppedRings++
					note(f, "part %d %s %d has %d distinct points; dropped", pi, what, ri, max(len(r)-1, 0))
					if ri == 0 {
						break
					}
					continue
				}
				if band, ok := fullCircle(r); ok {
					res.Repairs.FullBands++
					note(f, "part %d %s %d runs along a parallel from −180° to 180°, all the way round: drawn as the full band of longitudes it encloses", pi, what, ri)
					r = band
				}
				if ri > 0 && len(keep) > 0 && outside(r, keep[0]) {
					res.Repairs.DroppedRings++
					note(f, "part %d hole %d lies wholly outside its outer ring; dropped (the area's people stay in the outer ring)", pi, ri)
					continue
				}
				if polar, moved, ok := closeAtPole(r); ok {
					res.Repairs.PolarRings++
					pole := "north"
					if polar[len(polar)-2][1] < 0 {
						pole = "south"
					}
					note(f, "part %d %s %d goes once round the %s pole without closing there (its closing edge runs back across every longitude); "+
						"cut at ±180° and closed along %g° latitude, which moved %.0f km² of area", pi, what, ri, pole, polar[len(polar)-2][1], moved)
					r = polar
				}
				crosses := SelfIntersects(r)
				if geo.RingArea(r) == 0 && !crosses { // a bowtie's lobes cancel, but it has area
					res.Repairs.DroppedRings++
					note(f, "part %d %s %d has no area; dropped", pi, what, ri)
					if ri == 0 {
						break
					}
					continue
				}
				if jumps(r) {
					res.Repairs.Antimeridian++
					note(f, "part %d %s %d jumps more than 180° of longitude (drawn across the antimeridian); it is unwrapped for sampling", pi, what, ri)
				}
				if crosses {
					res.Repairs.SelfIntersecting++
					note(f, "part %d %s %d crosses itself; dots fill it by the even-odd rule", pi, what, ri)
				}
				keep = append(keep, r)
			}
			if len(keep) > 0 && len(poly) > 0 && len(keep[0]) > 0 {
				out = append(out, keep)
			}
		}
		if len(out) == 0 && len(f.Geometry) > 0 {
			note(f, "no polygon with area is left; its people cannot be drawn")
		}
		if len(out) == 0 {
			res.Repairs.EmptyFeatures++
		}
		f.Geometry = out
	}
}

// clean drops repeated consecutive points and closes the ring.
func clean(r orb.Ring) (out orb.Ring, closed bool, dropped int) {
	out = make(orb.Ring, 0, len(r)+1)
	for _, p := range r {
		if len(out) > 0 && out[len(out)-1] == p {
			dropped++
			continue
		}
		out = append(out, p)
	}
	if len(out) > 0 && out[0] != out[len(out)-1] {
		out = append(out, out[0])
		closed = true
	}
	return out, closed, dropped
}

// jumps tells whether an edge spans more than 180° of longitude. Edges
// along a pole line (both ends at ±90°) are points on the globe, whatever
// their longitudes, and do not count.
func jumps(r orb.Ring) bool {
	for i := 1; i < len(r); i++ {
		if math.Abs(r[i][0]-r[i-1][0]) > 180 && !alongPole(r[i-1], r[i]) {
			return true
		}
	}
	return false
}

func alongPole(a, b orb.Point) bool {
	return math.Abs(a[1]) == 90 && a[1] == b[1]
}

// fullCircle repairs a ring with edges along a parallel from −180° to 180°
// (a box written [[-180,s],[180,s],[180,n],[-180,n]]): read the short way
// round, such an edge has no length and the band no area; meant is the
// whole circle, so each such edge gets points at −90°, 0° and 90°, which
// makes every edge of it less than 180° long. ok is false when the ring
// has no such edge.
func fullCircle(r orb.Ring) (out orb.Ring, ok bool) {
	for i := 1; i < len(r); i++ {
		a, b := r[i-1], r[i]
		if a[1] == b[1] && math.Abs(a[0]) == 180 && b[0] == -a[0] && math.Abs(a[1]) != 90 {
			ok = true
			break
		}
	}
	if !ok {
		return r, false
	}
	out = orb.Ring{r[0]}
	for i := 1; i < len(r); i++ {
		a, b := r[i-1], r[i]
		if a[1] == b[1] && math.Abs(a[0]) == 180 && b[0] == -a[0] && math.Abs(a[1]) != 90 {
			step := 90.0
			if b[0] < a[0] {
				step = -90
			}
			for lon := a[0] + step; lon != b[0]; lon += step {
				out = append(out, orb.Point{lon, a[1]})
			}
		}
		out = append(out, b)
	}
	return out, true
}

// outside tells whether every vertex of ring h lies outside ring outer
// (orb's planar even-odd test): a hole that cannot be one of outer's.
func outside(h, outer orb.Ring) bool {
	for _, p := range h {
		if planar.RingContains(outer, p) {
			return false
		}
	}
	return true
}

// authalicR is the radius in km of the sphere with the area of WGS 84
// (R₂ of H. Moritz, "Geodetic Reference System 1980", Bulletin Géodésique
// 54, 1980: 6 371 007.2 m), for the km² of repair notes.
const authalicR = 6371.0072

// closeAtPole repairs a ring that goes once round a pole and is closed by an
// edge running back across the whole circle of longitudes (a publisher's
// polar ring without its stretch along the pole line): unwrapped, its
// longitudes gain or lose 360°. The ring is cut where it crosses ±180°,
// started at −180° and closed along the pole line on the side of its
// vertices' mean latitude, the area that closing along the pole encloses.
// moved is the area in km² between the even-odd fill of the ring as given
// and the repaired one, on the sphere of authalicR, with edges as the
// sampler draws them (the equal-area plane: x = longitude, y = sin
// latitude). ok is false for any other ring.
func closeAtPole(r orb.Ring) (out orb.Ring, moved float64, ok bool) {
	n := len(r) - 1 // distinct vertices of the closed ring
	if n < 3 {
		return nil, 0, false
	}
	// Unwrapped longitudes, each edge taken the short way round.
	u := make([]float64, n+1)
	u[0] = r[0][0]
	meanLat := 0.0
	for i := 1; i <= n; i++ {
		d := r[i][0] - r[i-1][0]
		if alongPole(r[i-1], r[i]) {
			return nil, 0, false // already closed along the pole line
		}
		d -= 360 * math.Round(d/360)
		u[i] = u[i-1] + d
		meanLat += r[i][1]
	}
	wind := u[n] - u[0]
	if math.Abs(math.Abs(wind)-360) > 1e-9 {
		return nil, 0, false
	}
	pole := -90.0
	if meanLat > 0 {
		pole = 90
	}
	// Walk the ring once from the first edge that crosses the antimeridian
	// (an unwrapped longitude c ≡ 180 mod 360), starting there at ∓180.
	start, c := -1, 0.0
	for i := 0; i < n && start < 0; i++ {
		lo, hi := math.Min(u[i], u[i+1]), math.Max(u[i], u[i+1])
		if k := 180 + 360*math.Ceil((lo-180)/360); hi > lo && k <= hi {
			start, c = i, k
		}
	}
	if start < 0 {
		return nil, 0, false
	}
	t := (c - u[start]) / (u[start+1] - u[start])
	lat := r[start][1] + t*(r[start+1][1]-r[start][1])
	sign := 1.0 // eastward: from -180 to 180
	if wind < 0 {
		sign = -1
	}
	shift := c + 180*sign
	path := orb.Ring{{-180 * sign, lat}}
	for j := start + 1; j <= start+n; j++ {
		x, y := 0.0, 0.0
		if j <= n {
			x, y = u[j], r[j][1]
		} else {
			x, y = u[j-n]+wind, r[j-n][1]
		}
		if q := (orb.Point{math.Max(-180, math.Min(180, x-shift)), y}); q != path[len(path)-1] {
			path = append(path, q)
		}
	}
	for _, q := range []orb.Point{{180 * sign, lat}, {180 * sign, pole}, {-180 * sign, pole}, {-180 * sign, lat}} {
		if q != path[len(path)-1] {
			path = append(path, q)
		}
	}
	if len(path) < 4 {
		return nil, 0, false
	}
	moved = math.Abs(planeArea(path) - math.Abs(planeArea(r)))
	return path, moved, true
}

// planeArea is the absolute area in km² of a closed ring with edges
// straight in the equal-area plane (x = longitude, y = sin latitude).
func planeArea(r orb.Ring) float64 {
	a := 0.0
	for i := 1; i < len(r); i++ {
		x0, y0 := r[i-1][0]*math.Pi/180, math.Sin(r[i-1][1]*math.Pi/180)
		x1, y1 := r[i][0]*math.Pi/180, math.Sin(r[i][1]*math.Pi/180)
		a += x0*y1 - x1*y0
	}
	return math.Abs(a/2) * authalicR * authalicR
}

// SelfIntersects reports whether two non-adjacent edges of the closed ring
// cross or touch (geo.SegmentsMeet). It sweeps edges sorted by their west
// end, so compact rings cost about n log n.
//
// The sampler has its own ring check (sample's checkRings) on the same
// segment test: it answers a different question (all rings of a part at
// once, in its equal-area plane after antimeridian unwrapping; touching
// apart from crossing; holes outside or nested) and buckets edges in a grid
// for parts of tens of thousands of vertices. This one reports, per ring
// and in the file's coordinates, what the notes say.
func SelfIntersects(r orb.Ring) bool {
	n := len(r) - 1 // edges
	if n < 4 {
		return false
	}
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	minX := func(e int) float64 { return math.Min(r[e][0], r[e+1][0]) }
	maxX := func(e int) float64 { return math.Max(r[e][0], r[e+1][0]) }
	sort.Slice(idx, func(a, b int) bool { return minX(idx[a]) < minX(idx[b]) })
	var active []int
	for _, e := range idx {
		x := minX(e)
		k := 0
		for _, a := range active {
			if maxX(a) >= x {
				active[k] = a
				k++
			}
		}
		active = active[:k]
		for _, a := range active {
			if adjacent(a, e, n) {
				continue
			}
			if geo.SegmentsMeet(r[a], r[a+1], r[e], r[e+1]) != geo.SegmentsApart {
				return true
			}
		}
		active = append(active, e)
	}
	return false
}

func adjacent(a, b, n int) bool {
	d := a - b
	if d < 0 {
		d = -d
	}
	return d <= 1 || d == n-1
}
