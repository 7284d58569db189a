package sample

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// TestPolarCapAlongPoleLine: a cap round the South Pole drawn as RFC 7946
// lon/lat allows, along 70°S from -180 to 180 and back along the pole line
// (-90°), is filled as the cap: dots in latitude bands follow the zone
// areas 2πR²(sin φb − sin φa) (textbook, CHECKS.md "Sphere geometry"),
// chi-square df 9 at 0.001 (NIST/SEMATECH e-Handbook 1.3.6.7.4), and none
// lies north of 70°S.
func TestPolarCapAlongPoleLine(t *testing.T) {
	var ring orb.Ring
	for lon := -180.0; lon <= 180; lon += 30 {
		ring = append(ring, orb.Point{lon, -70})
	}
	ring = append(ring, orb.Point{180, -90}, orb.Point{-180, -90}, orb.Point{-180, -70})
	f := &geo.Feature{ID: "cap", Geometry: orb.MultiPolygon{{ring}}}
	obs := make([]int, 10)
	bad := 0
	r := FeatureN(f, []int{50000}, Options{PeoplePerDot: 1, Seed: 90}, func(_ int, p orb.Point) {
		if p[1] > -70 {
			bad++
		}
		obs[min(9, max(0, int((p[1]+90)/2)))]++
	})
	if r.Dots[0] != 50000 || r.EvenOdd || bad != 0 {
		t.Fatalf("%+v, %d dots north of 70°S", r, bad)
	}
	share := make([]float64, 10)
	for b := range share {
		lo, hi := -90+2*float64(b), -88+2*float64(b)
		share[b] = math.Sin(hi*degToRad) - math.Sin(lo*degToRad)
	}
	t.Logf("seed 90")
	checkChi(t, "polar cap by latitude band", obs, share)
}
