package demo

import (
	"math"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// place is an invented place name at grid position (u, v) with its rank
// (1 the city, 2 districts and the bay, 3 neighbourhoods and parks).
type place struct {
	name string
	rank int
	u, v float64
}

var places = []place{
	{"Quillmere", 1, 0.56, 0.56},
	{"Gull Bay", 2, 0.80, 0.36},
	{"Lanternwood Park", 3, 0.32, 0.70},
	{"Corran Bridge", 3, 0.45, 0.44},
	{"Fishgate", 3, 0.70, 0.46},
	{"Ashby Cross", 3, 0.20, 0.22},
	{"Millbrook", 3, 0.40, 0.12},
	{"Pennywort", 3, 0.58, 0.20},
	{"Sorrel Green", 3, 0.14, 0.60},
	{"Hollin Lane", 3, 0.48, 0.84},
	{"Bramble Yard", 3, 0.64, 0.70},
	{"Cinder Quay", 3, 0.76, 0.58},
	{"Thistle Bank", 3, 0.30, 0.40},
	{"Oxlip End", 3, 0.10, 0.40},
	{"Wrenfold", 3, 0.72, 0.86},
	{"Copperwell", 3, 0.26, 0.90},
	{"Dunmere Row", 3, 0.66, 0.30},
	{"Sedge Corner", 3, 0.52, 0.30},
}

// Places returns the demo's invented place names as points with the
// fields "name" and "rank": the city, its eight districts (rank 2, at
// their blocks' centres) and invented neighbourhoods.
func Places() *geo.Layer {
	l := &geo.Layer{Path: "quillmere places (built-in demo)", Name: "places", Fields: []string{"name", "rank"}}
	all := append([]place(nil), places...)
	for k, d := range Districts {
		u := (float64(k%4) + 0.5) / 4
		v := 0.27
		if k >= 4 {
			v = 0.77
		}
		all = append(all, place{d, 2, u*0.85 + 0.03, v})
	}
	for _, p := range all {
		if !onLand(p.u, p.v) && p.name != "Gull Bay" {
			continue
		}
		l.Features = append(l.Features, geo.Feature{
			Index:  len(l.Features),
			ID:     p.name,
			Points: orb.MultiPoint{lonLat(p.u, p.v)},
			Props:  map[string]any{"name": p.name, "rank": int64(p.rank)},
		})
	}
	return l
}

// Roads returns invented roads as lines with a "class" field ("main" or
// "street"): two avenues along the river, streets north and south over
// the bridges, each cut where it leaves the land.
func Roads() *geo.Layer {
	l := &geo.Layer{Path: "quillmere roads (built-in demo)", Name: "roads", Fields: []string{"class", "name"}}
	add := func(name, class string, f func(t float64) (u, v float64)) {
		var cur orb.LineString
		flush := func() {
			if len(cur) >= 2 {
				l.Features = append(l.Features, geo.Feature{
					Index: len(l.Features), ID: name, Lines: orb.MultiLineString{cur},
					Props: map[string]any{"class": class, "name": name},
				})
			}
			cur = nil
		}
		for k := 0; k <= 120; k++ {
			u, v := f(float64(k) / 120)
			if onLand(u, v) || (v > riverLow-0.01 && v < riverHigh+0.01 && onLand(u, 0.44)) {
				cur = append(cur, lonLat(u, v))
			} else {
				flush()
			}
		}
		flush()
	}
	add("South Avenue", "main", func(t float64) (float64, float64) { return t, 0.30 + 0.03*math.Sin(6*t) })
	add("North Avenue", "main", func(t float64) (float64, float64) { return t, 0.68 - 0.03*math.Sin(5*t) })
	add("Corran Street", "street", func(t float64) (float64, float64) { return 0.45 + 0.04*math.Sin(3*t), t })
	add("Tannery Street", "street", func(t float64) (float64, float64) { return 0.22 + 0.03*t, t })
	add("Quay Street", "street", func(t float64) (float64, float64) { return 0.66 - 0.05*t, t })
	return l
}

// Water returns the river, between the banks the areas leave open, as
// one polygon with a "name" field.
func Water() *geo.Layer {
	l := &geo.Layer{Path: "quillmere water (built-in demo)", Name: "water", Fields: []string{"name"}}
	var ring orb.Ring
	const n = 60
	end := 0.0
	for k := 0; k <= n; k++ { // the river runs out to the coast
		u := float64(k) / n
		if !onLand(u, riverLow-0.002) && u > 0.5 {
			break
		}
		end = u
	}
	for k := 0; k <= n; k++ {
		ring = append(ring, lonLat(end*float64(k)/n, riverLow))
	}
	for k := n; k >= 0; k-- {
		ring = append(ring, lonLat(end*float64(k)/n, riverHigh))
	}
	ring = append(ring, ring[0])
	l.Features = append(l.Features, geo.Feature{
		ID: "Quill", Geometry: orb.MultiPolygon{{ring}}, Props: map[string]any{"name": "River Quill"},
	})
	return l
}
