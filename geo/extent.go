package geo

import (
	"fmt"
	"math"
	"sort"

	"github.com/paulmach/orb"
)

// Extent is a longitude/latitude box (degrees) that knows the antimeridian:
// its longitudes run east from West to East, so West > East means the box
// wraps across 180° (RFC 7946 §5.2: [177, -20, -178, -16] is 5° wide). The
// full circle of longitudes is West = -180, East = 180.
type Extent struct {
	West, South, East, North float64
}

// lonInterval is a closed interval of longitudes [lo, hi], lo ≤ hi, within
// [-180, 180].
type lonInterval struct{ lo, hi float64 }

// ExtentOf returns the smallest extent covering the bounds: the latitudes
// span all of them, and the longitudes are the shortest arc of the circle
// covering every bound's longitude interval, which is the circle less its
// largest gap between intervals. Each bound is an ordinary box (Min ≤ Max),
// as orb.Polygon.Bound gives for one part; a part already cut at ±180
// (RFC 7946 §3.1.9) is two bounds. ok is false when no bound is finite.
func ExtentOf(bounds ...orb.Bound) (e Extent, ok bool) {
	var iv []lonInterval
	e.South, e.North = math.Inf(1), math.Inf(-1)
	for _, b := range bounds {
		if !finiteBound(b) || b.Min[0] > b.Max[0] || b.Min[1] > b.Max[1] {
			continue
		}
		iv = append(iv, boundIntervals(b.Min[0], b.Max[0])...)
		e.South, e.North = math.Min(e.South, b.Min[1]), math.Max(e.North, b.Max[1])
	}
	if len(iv) == 0 {
		return Extent{}, false
	}
	e.West, e.East = coverArc(iv)
	return e, true
}

// ExtentOfFeatures is ExtentOf the bounds of every polygon of the features.
func ExtentOfFeatures(fs []Feature) (Extent, bool) {
	var bs []orb.Bound
	for i := range fs {
		for _, p := range fs[i].Geometry {
			if len(p) > 0 && len(p[0]) > 0 {
				bs = append(bs, p.Bound())
			}
		}
	}
	return ExtentOf(bs...)
}

// Union is the smallest extent covering both e and o (largest gap rule).
func (e Extent) Union(o Extent) Extent {
	iv := append(e.intervals(), o.intervals()...)
	u := Extent{South: math.Min(e.South, o.South), North: math.Max(e.North, o.North)}
	u.West, u.East = coverArc(iv)
	return u
}

// Width is the extent's span of longitude in degrees, in (0, 360].
func (e Extent) Width() float64 {
	if e.Full() {
		return 360
	}
	w := e.East - e.West
	if w < 0 {
		w += 360
	}
	return w
}

// Full tells whether the extent covers every longitude.
func (e Extent) Full() bool { return e.West == -180 && e.East == 180 }

// Centre is the middle of the extent: the longitude halfway along the arc
// from West to East (on the circle: the centre of 170°E..170°W is 180°, not
// the mean 0°), in [-180, 180), and the middle latitude.
func (e Extent) Centre() orb.Point {
	return orb.Point{normLon(e.West + e.Width()/2), (e.South + e.North) / 2}
}

// Contains tells whether (lon, lat) lies in the extent, edges included; lon
// is taken modulo 360.
func (e Extent) Contains(lon, lat float64) bool {
	if !(lat >= e.South && lat <= e.North) {
		return false
	}
	if e.Full() {
		return true
	}
	lon = normLon(lon)
	in := func(l float64) bool {
		if e.West <= e.East {
			return l >= e.West && l <= e.East
		}
		return l >= e.West || l <= e.East
	}
	return in(lon) || lon == -180 && in(180)
}

// String formats the extent as an RFC 7946 §5 bounding box:
// [west, south, east, north].
func (e Extent) String() string {
	return fmt.Sprintf("[%g, %g, %g, %g]", e.West, e.South, e.East, e.North)
}

// intervals splits the extent into ordinary longitude intervals.
func (e Extent) intervals() []lonInterval {
	if e.Full() || e.West <= e.East {
		return []lonInterval{{e.West, e.East}}
	}
	return []lonInterval{{e.West, 180}, {-180, e.East}}
}

// boundIntervals turns a bound's longitudes into intervals within
// [-180, 180]: a box wider than the circle is all of it; one outside the
// range (unwrapped geometry) is brought back, split at ±180 if need be.
func boundIntervals(lo, hi float64) []lonInterval {
	if hi-lo >= 360 {
		return []lonInterval{{-180, 180}}
	}
	if lo >= -180 && hi <= 180 {
		return []lonInterval{{lo, hi}}
	}
	w := hi - lo
	lo = normLon(lo)
	hi = lo + w
	if hi <= 180 {
		return []lonInterval{{lo, hi}}
	}
	return []lonInterval{{lo, 180}, {-180, hi - 360}}
}

// coverArc returns the shortest arc [west, east] of the circle covering the
// intervals: merge them, then leave out the largest gap between one
// interval's end and the next one's start, the gap from the last back
// round to the first included. No gap left means the full circle.
func coverArc(iv []lonInterval) (west, east float64) {
	sort.Slice(iv, func(a, b int) bool { return iv[a].lo < iv[b].lo })
	merged := []lonInterval{iv[0]}
	for _, v := range iv[1:] {
		m := &merged[len(merged)-1]
		if v.lo <= m.hi {
			m.hi = math.Max(m.hi, v.hi)
			continue
		}
		merged = append(merged, v)
	}
	n := len(merged)
	// The gap round the back, from the last end to the first start.
	gap := merged[0].lo + 360 - merged[n-1].hi
	west, east = merged[0].lo, merged[n-1].hi
	for i := 1; i < n; i++ {
		if g := merged[i].lo - merged[i-1].hi; g > gap {
			gap, west, east = g, merged[i].lo, merged[i-1].hi
		}
	}
	if gap <= 0 {
		return -180, 180
	}
	return west, east
}

// normLon brings a longitude into [-180, 180).
func normLon(lon float64) float64 {
	if lon >= -180 && lon < 180 {
		return lon
	}
	lon = math.Mod(lon+180, 360)
	if lon < 0 {
		lon += 360
	}
	return lon - 180
}

func finiteBound(b orb.Bound) bool {
	for _, v := range [4]float64{b.Min[0], b.Min[1], b.Max[0], b.Max[1]} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}
