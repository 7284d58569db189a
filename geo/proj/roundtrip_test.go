package proj

import (
	"math"
	"testing"
)

// Inverse(Forward(p)) must give p back to 1e-9° (the package contract) on
// every grid of the cross-check, plus rows close to the poles, the central
// meridian's antipode and the antimeridian.
func TestRoundTrip(t *testing.T) {
	extraLats := []float64{-90, -89.9999999, -89.9999, -89.99, -89.9, 89.9, 89.99, 89.9999, 89.9999999, 90}
	for _, c := range crossCases(t) {
		t.Run(c.name, func(t *testing.T) {
			pts := append([][2]float64(nil), c.pts...)
			for _, lat := range extraLats {
				for lon := -180.0; lon <= 180; lon += 7.5 {
					pts = append(pts, [2]float64{lon, lat})
				}
			}
			_, isAlbers := c.p.(*Albers)
			_, isLAEA := c.p.(*LAEA)
			var worst float64
			var n int
			for _, pt := range pts {
				if isAlbers && math.Abs(pt[1]) > 89.9 {
					// A cone maps a pole to an arc, where h → 0: a rounding
					// of 1e-16 in ρ moves the latitude by 1e-8 rad. Those
					// rows are checked in metres below.
					continue
				}
				if _, ok := c.p.(WebMercator); ok && math.Abs(pt[1]) > WebMercatorMaxLat {
					continue // clamped on purpose
				}
				if l, ok := c.p.(*LAEA); ok && angle(pt[0], pt[1], l.lon0, l.lat0) > 179 {
					// The antipode maps to the rim circle, where h → 0 as
					// at a cone's pole; checked in metres below.
					continue
				}
				x, y := c.p.Forward(pt[0], pt[1])
				if math.IsNaN(x) {
					continue // the antipode itself
				}
				lon, lat := c.p.Inverse(x, y)
				d := arcDiff(lon, lat, pt[0], pt[1])
				worst = math.Max(worst, d)
				n++
				if d > 1e-9 {
					t.Errorf("%v → (%.6f, %.6f) → (%.12f, %.12f): off by %.3g°", pt, x, y, lon, lat, d)
				}
			}
			if isAlbers || isLAEA {
				// Near the poles a cone, and near its rim an azimuthal map,
				// round-trip in map metres.
				for _, lat := range extraLats {
					x, y := c.p.Forward(10, lat)
					if math.IsNaN(x) {
						continue
					}
					x2, y2 := c.p.Forward(c.p.Inverse(x, y))
					if d := math.Hypot(x2-x, y2-y); !(d < 1e-6) {
						t.Errorf("lat %v: (%.6f, %.6f) round-trips to (%.6f, %.6f)", lat, x, y, x2, y2)
					}
				}
			}
			t.Logf("%d points, worst %.2g°", n, worst)
		})
	}
}

// Points outside the projected area, and bad input, give NaN, not a panic
// or a wrong point.
func TestOutsideGivesNaN(t *testing.T) {
	laea, _ := NewLAEA(WGS84, 52, 10, 0, 0)
	polar, _ := NewLAEA(WGS84, 90, 0, 0, 0)
	albers, _ := NewAlbers(WGS84, 23, -96, 29.5, 45.5, 0, 0)
	nan := math.NaN()
	for _, c := range []struct {
		name    string
		p       Projection
		inverse bool
		a, b    float64
	}{
		{"laea antipode", laea, false, -170, -52},
		{"laea beyond the rim", laea, true, 0, 2.1 * 6378137},
		{"polar opposite pole", polar, false, 0, -90},
		{"polar beyond the rim", polar, true, 1.3e7, 1e6},
		{"albers outside the fan", albers, true, -3e7, 9e6},
		{"albers lat 91", albers, false, 0, 91},
		{"albers NaN", albers, false, nan, 10},
		{"web mercator NaN", WebMercator{}, false, 0, nan},
		{"web mercator inverse NaN", WebMercator{}, true, nan, 0},
		{"plate carrée beyond the pole", PlateCarree{}, true, 0, 1.1e7},
		{"laea inverse inf", laea, true, math.Inf(1), 0},
	} {
		var u, v float64
		if c.inverse {
			u, v = c.p.Inverse(c.a, c.b)
		} else {
			u, v = c.p.Forward(c.a, c.b)
		}
		if !math.IsNaN(u) || !math.IsNaN(v) {
			t.Errorf("%s: got (%v, %v), want NaN", c.name, u, v)
		}
	}
}

// angle returns the great-circle angle in degrees between two points on
// the sphere (spherical law of cosines; good enough to pick test points).
func angle(lon1, lat1, lon2, lat2 float64) float64 {
	s1, c1 := math.Sincos(lat1 * deg)
	s2, c2 := math.Sincos(lat2 * deg)
	v := s1*s2 + c1*c2*math.Cos((lon1-lon2)*deg)
	return math.Acos(math.Max(-1, math.Min(1, v))) / deg
}
