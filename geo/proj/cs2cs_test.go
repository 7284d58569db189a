package proj

import (
	"bytes"
	"fmt"
	"math"
	"os/exec"
	"strconv"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/reftool"
)

// grid returns the points lon0, lon0+dlon, … × lat0, lat0+dlat, … up to
// and including lon1, lat1.
func grid(lon0, lon1, dlon, lat0, lat1, dlat float64) [][2]float64 {
	var pts [][2]float64
	for i := 0; ; i++ {
		lat := lat0 + float64(i)*dlat
		if lat > lat1+1e-9 {
			break
		}
		for j := 0; ; j++ {
			lon := lon0 + float64(j)*dlon
			if lon > lon1+1e-9 {
				break
			}
			pts = append(pts, [2]float64{lon, lat})
		}
	}
	return pts
}

// cs2cs pipes pts through one cs2cs call with the given CRS arguments and
// output format; points cs2cs cannot convert come back as NaN.
func cs2cs(t *testing.T, bin string, args []string, format string, pts [][2]float64) [][2]float64 {
	t.Helper()
	var in bytes.Buffer
	for _, p := range pts {
		fmt.Fprintf(&in, "%.15g %.15g\n", p[0], p[1])
	}
	cmd := exec.Command(bin, append([]string{"-f", format}, args...)...)
	cmd.Stdin = &in
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("cs2cs %s: %v\n%s", strings.Join(args, " "), err, stderr.String())
	}
	lines := strings.Split(strings.TrimRight(string(out), "\n"), "\n")
	if len(lines) != len(pts) {
		t.Fatalf("cs2cs gave %d lines for %d points", len(lines), len(pts))
	}
	res := make([][2]float64, len(pts))
	for i, l := range lines {
		f := strings.Fields(l)
		if len(f) < 2 {
			t.Fatalf("cs2cs line %d: %q", i+1, l)
		}
		for k := 0; k < 2; k++ {
			if f[k] == "*" {
				res[i][k] = math.NaN()
				continue
			}
			v, err := strconv.ParseFloat(f[k], 64)
			if err != nil {
				t.Fatalf("cs2cs line %d: %q: %v", i+1, l, err)
			}
			res[i][k] = v
		}
	}
	return res
}

type crossCase struct {
	name string
	p    Projection
	pts  [][2]float64
}

func crossCases(t *testing.T) []crossCase {
	t.Helper()
	must := func(p Projection, err error) Projection {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
		return p
	}
	albers := func(e Ellipsoid, lat0, lon0, lat1, lat2, fe, fn float64) Projection {
		return must(NewAlbers(e, lat0, lon0, lat1, lat2, fe, fn))
	}
	laea := func(e Ellipsoid, lat0, lon0, fe, fn float64) Projection {
		return must(NewLAEA(e, lat0, lon0, fe, fn))
	}
	return []crossCase{
		{"albers WGS84 conus", albers(WGS84, 23, -96, 29.5, 45.5, 1e6, -5e5), grid(-130, -60, 2, 15, 60, 1.5)},
		{"albers GRS80 australia", albers(GRS80, 0, 132, -18, -36, 0, 0), grid(100, 170, 2, -50, -5, 1.5)},
		{"albers GRS80 tangent", albers(GRS80, 60, 25, 62, 62, 0, 0), grid(-10, 60, 2, 40, 90, 1.5)},
		{"albers clarke1866 snyder", albers(Clarke1866, 23, -96, 29.5, 45.5, 0, 0), grid(-150, -40, 3, -20, 80, 3)},
		{"albers sphere", albers(Sphere(6370997), 40, 10, 30, 50, 0, 0), grid(-60, 80, 4, -30, 90, 3)},
		{"laea GRS80 oblique etrs89", laea(GRS80, 52, 10, 4321000, 3210000), grid(-40, 60, 2.5, 20, 85, 2.5)},
		{"laea WGS84 north polar", laea(WGS84, 90, -100, 0, 0), grid(-180, 170, 10, -85, 90, 2.5)},
		{"laea WGS84 south polar", laea(WGS84, -90, 0, 0, 0), grid(-180, 170, 10, -90, 85, 2.5)},
		{"laea WGS84 equatorial", laea(WGS84, 0, 20, 0, 0), grid(-60, 100, 4, -88, 88, 4)},
		{"laea WGS84 oblique southern", laea(WGS84, -35, 145, 500000, 0), grid(90, 200, 3, -89, 10, 3)},
		{"laea sphere oblique", laea(Sphere(6370997), 45, -100, 0, 0), grid(-170, -30, 4, -10, 90, 3)},
		{"web mercator", WebMercator{}, grid(-180, 180, 10, -85, 85, 5)},
		{"plate carrée", PlateCarree{}, grid(-180, 180, 10, -90, 90, 5)},
	}
}

// Cross-check against PROJ's cs2cs (Debian proj-bin 9.1): forward to 1 mm
// on ≥ 1000 points per projection, one cs2cs call each, with the
// projection's own String() as the PROJ definition; then PROJ's inverse
// of PROJ's output against ours.
func TestCrossCheckCS2CS(t *testing.T) {
	bin := reftool.Need(t, "cs2cs")
	for _, c := range crossCases(t) {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel() // cs2cs waits mostly on PROJ's database
			if len(c.pts) < 1000 {
				t.Fatalf("only %d points", len(c.pts))
			}
			target := strings.Fields(c.p.String())
			geo := []string{"+proj=longlat", "+datum=WGS84"}
			fwd := cs2cs(t, bin, append(append(geo[:2:2], "+to"), target...), "%.6f", c.pts)
			var compared int
			var worst float64
			for i, pt := range c.pts {
				x, y := c.p.Forward(pt[0], pt[1])
				want := fwd[i]
				if math.IsNaN(want[0]) || math.IsNaN(x) {
					if math.IsNaN(want[0]) != math.IsNaN(x) {
						t.Errorf("%v: got (%v, %v), cs2cs %v", pt, x, y, want)
					}
					continue
				}
				d := math.Max(math.Abs(x-want[0]), math.Abs(y-want[1]))
				worst = math.Max(worst, d)
				if d > 0.001 {
					t.Errorf("%v: got (%.6f, %.6f), cs2cs (%.6f, %.6f): off by %.4f m", pt, x, y, want[0], want[1], d)
				}
				compared++
			}
			if compared < 1000 {
				t.Errorf("only %d points compared", compared)
			}
			// Inverse of cs2cs's projected points: ours must give back the
			// grid point to 1e-9° (our bound; cs2cs's 1e-6 m output
			// rounding is 1e-11°). cs2cs's own inverse is held to 2e-8° of
			// arc (2 mm): PROJ 9.1 inverts the authalic latitude of LAEA by
			// a series truncated after e⁶, which is off by up to 1.4e-8°
			// (measured here on the ETRS89-LAEA grid), so it cannot be held
			// to 1e-9°.
			inv := cs2cs(t, bin, append(append(target, "+to"), geo...), "%.12f", fwd)
			var worstInv, worstProj float64
			for i, xy := range fwd {
				if math.IsNaN(xy[0]) || math.Abs(c.pts[i][1]) == 90 {
					// At a pole that a cone maps to an arc, a micrometre
					// of cs2cs's output rounding moves the latitude 1e-5°;
					// TestRoundTrip covers the poles without rounding.
					continue
				}
				lon, lat := c.p.Inverse(xy[0], xy[1])
				pt := c.pts[i]
				d := arcDiff(lon, lat, pt[0], pt[1])
				worstInv = math.Max(worstInv, d)
				if d > 1e-9 {
					t.Errorf("inverse (%.6f, %.6f): got (%.12f, %.12f), want %v", xy[0], xy[1], lon, lat, pt)
				}
				dp := arcDiff(lon, lat, inv[i][0], inv[i][1])
				worstProj = math.Max(worstProj, dp)
				if dp > 2e-8 {
					t.Errorf("inverse (%.6f, %.6f): got (%.12f, %.12f), cs2cs (%.12f, %.12f)", xy[0], xy[1], lon, lat, inv[i][0], inv[i][1])
				}
			}
			t.Logf("%d points; worst forward difference %.2g m; inverse: worst %.2g° from the grid, %.2g° from cs2cs", compared, worst, worstInv, worstProj)
		})
	}
}

// arcDiff returns the larger of the latitude difference and the longitude
// difference scaled by cos φ, in degrees of arc; longitude is ignored at
// the poles, where it is arbitrary.
func arcDiff(lon1, lat1, lon2, lat2 float64) float64 {
	if math.IsNaN(lon1) || math.IsNaN(lat1) || math.IsNaN(lon2) || math.IsNaN(lat2) {
		return math.Inf(1)
	}
	dlon := math.Abs(wrapDeg(lon1-lon2)) * math.Cos(lat2*deg)
	if math.Abs(lat2) == 90 {
		dlon = 0
	}
	return math.Max(dlon, math.Abs(lat1-lat2))
}
