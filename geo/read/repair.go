package read

import (
	"fmt"
	"math"
	"sort"

	"github.com/paulmach/orb"
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

func jumps(r orb.Ring) bool {
	for i := 1; i < len(r); i++ {
		if math.Abs(r[i][0]-r[i-1][0]) > 180 {
			return true
		}
	}
	return false
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
