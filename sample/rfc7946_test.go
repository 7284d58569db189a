package sample

import (
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	gg "github.com/twpayne/go-geom"
	"github.com/twpayne/go-geom/xy"
	"github.com/twpayne/go-geom/xy/location"
)

// The polygon with a hole of RFC 7946 Appendix A.3.
var rfcA3 = orb.Polygon{
	{{100, 0}, {101, 0}, {101, 1}, {100, 1}, {100, 0}},
	{{100.8, 0.8}, {100.8, 0.2}, {100.2, 0.2}, {100.2, 0.8}, {100.8, 0.8}},
}

func TestDotsInsideRFC7946HolePolygon(t *testing.T) {
	f := &geo.Feature{ID: "A.3", Geometry: orb.MultiPolygon{rfcA3}}
	outer := ring(rfcA3[0])
	hole := ring(rfcA3[1])
	n := 0
	res := Feature(f, []float64{20000}, Options{PeoplePerDot: 1, Seed: 42}, func(cat int, p orb.Point) {
		n++
		c := gg.Coord{p[0], p[1]}
		// Independent check: go-geom's robust point-in-ring, not our code.
		if xy.LocatePointInRing(gg.XY, c, outer) != location.Interior {
			t.Fatalf("dot %v not inside the outer ring", p)
		}
		if xy.LocatePointInRing(gg.XY, c, hole) != location.Exterior {
			t.Fatalf("dot %v not outside the hole", p)
		}
	})
	if res.Dots[0] != 20000 || n != 20000 {
		t.Fatalf("drew %d dots (emitted %d); want 20000", res.Dots[0], n)
	}
}

func ring(r orb.Ring) []float64 {
	out := make([]float64, 0, 2*len(r))
	for _, p := range r {
		out = append(out, p[0], p[1])
	}
	return out
}
