package proj

import (
	"math"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/reftool"
)

// eqEarthPoints spread over the globe, the poles, the equator and both
// edges of the map included.
var eqEarthPoints = [][2]float64{
	{0, 0}, {10, 45}, {-75, 35}, {179.9, -80}, {-180, 0}, {180, 10},
	{120, -33.5}, {-45, 62}, {30, 89.999}, {-150, -89.5}, {60, 90}, {-60, -90},
	{5.5, 1e-6}, {-100, 23.4}, {135, 66.6},
}

// TestEqualEarthValues: forward values from PROJ's cs2cs (Debian proj-bin,
// Rel. 9.1.1), measured 2026-12-04 and recorded in ../shared/CHECKS.md
// ("World and interrupted-extent projections"), to the centimetre as given.
func TestEqualEarthValues(t *testing.T) {
	sphere, _ := NewEqualEarth(Sphere(6371008.7714), 0, 0, 0)
	wgs, _ := NewEqualEarth(WGS84, 0, 0, 0)
	for _, c := range []struct {
		name string
		p    *EqualEarth
		x, y float64
	}{
		{"sphere R 6371008.7714", sphere, 821049.24, 5480539.79},
		{"WGS 84 (authalic latitude)", wgs, 821804.15, 5466867.76},
	} {
		x, y := c.p.Forward(10, 45)
		if math.Abs(x-c.x) > 0.006 || math.Abs(y-c.y) > 0.006 {
			t.Errorf("%s: (10, 45) → (%.3f, %.3f), cs2cs %.2f %.2f", c.name, x, y, c.x, c.y)
		}
	}
}

// TestEqualEarthCs2cs compares Forward with cs2cs's +proj=eqearth on the
// sphere and on WGS 84 to 1 mm at every point of eqEarthPoints, with a
// central meridian and false origin too.
func TestEqualEarthCs2cs(t *testing.T) {
	bin := reftool.Need(t, "cs2cs")
	sphere, _ := NewEqualEarth(Sphere(6371008.7714), 0, 0, 0)
	wgs, _ := NewEqualEarth(WGS84, 0, 0, 0)
	shifted, _ := NewEqualEarth(WGS84, 150, 1000, -2000)
	for _, c := range []struct {
		p   *EqualEarth
		geo []string
	}{
		{sphere, []string{"+proj=longlat", "+R=6371008.7714"}},
		{wgs, []string{"+proj=longlat", "+datum=WGS84"}},
		{shifted, []string{"+proj=longlat", "+datum=WGS84"}},
	} {
		t.Run(c.p.String(), func(t *testing.T) {
			args := append(append(c.geo, "+to"), strings.Fields(c.p.String())...)
			want := cs2cs(t, bin, args, "%.6f", eqEarthPoints)
			for i, pt := range eqEarthPoints {
				x, y := c.p.Forward(pt[0], pt[1])
				if math.Abs(x-want[i][0]) > 0.001 || math.Abs(y-want[i][1]) > 0.001 {
					t.Errorf("%v → (%.6f, %.6f), cs2cs (%.6f, %.6f)", pt, x, y, want[i][0], want[i][1])
				}
			}
		})
	}
}

// TestEqualEarthRoundTrip: Inverse(Forward(p)) = p to 1e-9° below 85° of
// latitude, and to 2e-6° (0.2 m) above: near the pole lines y varies with
// the square of the colatitude, so a rounding of y in the last bit moves
// the latitude by about its square root. Longitude is not tested at the
// poles, where it is undefined. Points outside the outline give NaN.
func TestEqualEarthRoundTrip(t *testing.T) {
	for _, e := range []Ellipsoid{Sphere(6371008.7714), WGS84, GRS80} {
		p, err := NewEqualEarth(e, -30, 500, 700)
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for lat := -90.0; lat <= 90; lat += 2.5 {
			for lon := -180.0; lon <= 180; lon += 7.5 {
				x, y := p.Forward(lon, lat)
				gl, gp := p.Inverse(x, y)
				d := math.Abs(gp - lat)
				if math.Abs(lat) < 90 {
					dl := math.Abs(math.Remainder(gl-lon, 360))
					d = math.Max(d, dl)
				}
				worst = math.Max(worst, d)
				tol := 1e-9
				if math.Abs(lat) > 85 {
					tol = 2e-6
				}
				if !(d < tol) {
					t.Fatalf("%v: (%g, %g) → (%g, %g) → (%g, %g)", e, lon, lat, x, y, gl, gp)
				}
			}
		}
		t.Logf("%v: worst round trip %.2g°", e, worst)
		xe, _ := p.Forward(p.lon0+180, 0)
		if lon, lat := p.Inverse(xe+2*(xe-500)*1e-6+1, 700); !math.IsNaN(lon) || !math.IsNaN(lat) {
			t.Errorf("%v: point east of the outline gave (%g, %g)", e, lon, lat)
		}
		_, yn := p.Forward(0, 90)
		if lon, lat := p.Inverse(500, yn+1); !math.IsNaN(lon) || !math.IsNaN(lat) {
			t.Errorf("%v: point north of the pole line gave (%g, %g)", e, lon, lat)
		}
	}
	if _, err := NewEqualEarth(WGS84, 200, 0, 0); err == nil {
		t.Error("central meridian 200 accepted")
	}
}
