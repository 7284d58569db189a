package demo

import (
	"fmt"
	"math"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/crosswalk"
)

// GrowthDistricts are the districts where the invented newer count is
// higher than the older one (by a quarter); everywhere else the two counts
// are the same, so a before/after swipe of the demo changes only there
// and where boundaries moved.
var GrowthDistricts = []string{"Saltmarsh", "Marram Point"}

// Older returns an invented older count of Quillmere on slightly different
// boundaries, and an invented crosswalk from its areas to City(seed)'s:
//
//   - most older areas are a newer area under another code (weight 1);
//   - some pairs of neighbouring newer areas were one older area, later
//     split: the older area's people go to each in proportion to its
//     area (weights from crosswalk.Area, summing to 1);
//   - some newer areas were two older triangles, later merged (weight 1
//     each).
//
// Older counts are the newer ones, four fifths of them in GrowthDistricts.
// Nothing here is real.
func Older(seed uint64) (*geo.Layer, []crosswalk.Pair) {
	city := City(seed)
	growth := map[string]bool{}
	for _, d := range GrowthDistricts {
		growth[d] = true
	}
	older := func(f *geo.Feature, k int) int64 {
		v := f.Props[Groups[k].Field].(int64)
		if growth[f.Props["district"].(string)] {
			return int64(math.Round(float64(v) * 0.8))
		}
		return v
	}
	l := &geo.Layer{Path: "quillmere older count (built-in demo)", Name: "quillmere-older", Fields: []string{"code"}}
	for _, g := range Groups {
		l.Fields = append(l.Fields, g.Field)
	}
	var pairs []crosswalk.Pair
	add := func(g orb.MultiPolygon, counts []int64) string {
		code := fmt.Sprintf("QO%04d", len(l.Features)+1)
		f := geo.Feature{Index: len(l.Features), ID: code, Geometry: g, Props: map[string]any{"code": code}}
		for k, gr := range Groups {
			f.Props[gr.Field] = counts[k]
		}
		l.Features = append(l.Features, f)
		return code
	}
	counts := func(fs ...*geo.Feature) []int64 {
		out := make([]int64, len(Groups))
		for _, f := range fs {
			for k := range Groups {
				out[k] += older(f, k)
			}
		}
		return out
	}
	fs := city.Features
	for i := 0; i < len(fs); i++ {
		f := &fs[i]
		ring := f.Geometry[0][0]
		simple := len(f.Geometry) == 1 && len(f.Geometry[0]) == 1 && len(ring) == 5
		switch {
		case simple && i%19 == 4 && i+1 < len(fs) && neighbours(ring, fs[i+1].Geometry):
			// Split since: one older area, two newer ones.
			n := &fs[i+1]
			code := add(append(orb.MultiPolygon{}, f.Geometry[0], n.Geometry[0]), counts(f, n))
			a, b := crosswalk.Area(f.Geometry), crosswalk.Area(n.Geometry)
			pairs = append(pairs, crosswalk.Pair{Source: code, Target: f.ID, Weight: a / (a + b)},
				crosswalk.Pair{Source: code, Target: n.ID, Weight: b / (a + b)})
			i++
		case simple && i%23 == 11:
			// Merged since: two older triangles, one newer area.
			c := counts(f)
			half := make([]int64, len(c))
			rest := make([]int64, len(c))
			for k := range c {
				half[k] = c[k] / 2
				rest[k] = c[k] - half[k]
			}
			t1 := add(orb.MultiPolygon{{{ring[0], ring[1], ring[2], ring[0]}}}, half)
			t2 := add(orb.MultiPolygon{{{ring[0], ring[2], ring[3], ring[0]}}}, rest)
			pairs = append(pairs, crosswalk.Pair{Source: t1, Target: f.ID, Weight: 1}, crosswalk.Pair{Source: t2, Target: f.ID, Weight: 1})
		default:
			code := add(f.Geometry, counts(f))
			pairs = append(pairs, crosswalk.Pair{Source: code, Target: f.ID, Weight: 1})
		}
	}
	return l, pairs
}

// neighbours reports whether quad ring r and the next area share r's
// east edge (the grid's next cell in the same row).
func neighbours(r orb.Ring, next orb.MultiPolygon) bool {
	if len(next) != 1 || len(next[0]) != 1 || len(next[0][0]) != 5 {
		return false
	}
	n := next[0][0]
	return n[0] == r[1] && n[3] == r[2]
}
