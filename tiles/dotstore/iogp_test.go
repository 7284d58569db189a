package dotstore

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os/exec"
	"strconv"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/proj"
	"github.com/stipple-maps/stipple/geo/reftool"
)

// metres converts world cells back to EPSG:3857 metres (cell centre).
func metres(x, y uint32) (e, n float64) {
	const half = math.Pi * 6378137 // half extent of the square world
	e = (float64(x)+0.5)/WorldSize*2*half - half
	n = half - (float64(y)+0.5)/WorldSize*2*half
	return
}

func TestWorldMatchesIOGPWebMercatorExample(t *testing.T) {
	// IOGP Guidance Note 7-2, method 1024 (Popular Visualisation Pseudo
	// Mercator), worked example: φ = 24°22′54.433″N, λ = 100°20′00.000″W →
	// E = −11 169 055.58 m, N = 2 800 000.00 m. A world cell is 7.46 cm wide,
	// so the cell centre is within 4 cm of the exact point.
	lat := 24 + 22.0/60 + 54.433/3600
	lon := -(100 + 20.0/60)
	e, n := metres(World(lon, lat))
	if math.Abs(e-(-11169055.58)) > 0.05 || math.Abs(n-2800000.00) > 0.05 {
		t.Errorf("World(%v, %v) = E %.3f N %.3f; want E −11169055.58 N 2800000.00", lon, lat, e, n)
	}
}

// WorldFromSin on the IOGP Guidance Note 7-2 method 1024 worked examples,
// given sin φ: forward φ = 24°22′54.433″N (0.425542460 rad), λ =
// 100°20′00.000″W → E = −11 169 055.58 m, N = 2 800 000.00 m; reverse
// N = 2 810 000.00 m → φ = 0.426970023 rad, so that φ must land within
// half a cell (3.7 cm) plus the rounding of the published φ (5e-10 rad,
// 3.5 mm of northing here) of N = 2 810 000.00 m.
func TestWorldFromSinMatchesIOGPWebMercatorExample(t *testing.T) {
	lon := -(100 + 20.0/60)
	for _, c := range []struct {
		phi  float64 // radians
		e, n float64 // metres
	}{
		{(24 + 22.0/60 + 54.433/3600) * math.Pi / 180, -11169055.58, 2800000.00},
		{0.426970023, -11169055.58, 2810000.00},
	} {
		e, n := metres(WorldFromSin(lon, math.Sin(c.phi)))
		if math.Abs(e-c.e) > 0.05 || math.Abs(n-c.n) > 0.05 {
			t.Errorf("WorldFromSin(%v, sin %v) = E %.3f N %.3f; want E %.2f N %.2f", lon, c.phi, e, n, c.e, c.n)
		}
	}
}

// WorldFromSin clamps like World: the square world ends at atan(sinh π) =
// 85.0511287798066° (CHECKS.md, computed), s = ±1 are the poles.
func TestWorldFromSinClampsToSquareWorld(t *testing.T) {
	edge := math.Sin(proj.WebMercatorMaxLat * math.Pi / 180)
	for _, c := range []struct {
		s    float64
		want uint32
	}{
		{1, 0}, {math.Sin(89 * math.Pi / 180), 0}, {math.Nextafter(edge, 2), 0},
		{-1, WorldSize - 1}, {-math.Sin(89 * math.Pi / 180), WorldSize - 1}, {-math.Nextafter(edge, 2), WorldSize - 1},
		{0, WorldSize / 2}, {math.Copysign(0, -1), WorldSize / 2}, {math.NaN(), 0},
	} {
		if _, y := WorldFromSin(0, c.s); y != c.want {
			t.Errorf("WorldFromSin(0, %v): y = %d; want %d", c.s, y, c.want)
		}
	}
	// Just inside the edge (1e-13 of s is about a thousandth of a cell
	// there): the first and last rows.
	if _, y := WorldFromSin(0, edge-1e-13); y != 0 {
		t.Errorf("just south of 85.0511°N: y = %d; want 0", y)
	}
	if _, y := WorldFromSin(0, -edge+1e-13); y != WorldSize-1 {
		t.Errorf("just north of 85.0511°S: y = %d; want %d", y, WorldSize-1)
	}
}

// WorldFromSin against PROJ's cs2cs (Debian proj-bin 9.1,
// `cs2cs EPSG:4326 EPSG:3857`, which reads latitude first) on 3 000 random
// points: uniform on the sphere within the square world, within 0.01° of
// ±85.0511° and within 1e-4° of the equator. Each point is sent as the
// latitude asin(s) to 17 digits; the cell's centre must be within half a
// cell (3.73 cm) of PROJ's metres on each axis, plus 1 mm for PROJ's
// output rounding and the latitude's decimal rounding.
func TestWorldFromSinMatchesCS2CS(t *testing.T) {
	bin := reftool.Need(t, "cs2cs")
	seed := uint64(29)
	t.Logf("seed %d", seed)
	r := rand.New(rand.NewPCG(seed, 1))
	edge := math.Sin(proj.WebMercatorMaxLat * math.Pi / 180)
	type pt struct{ lon, s float64 }
	var pts []pt
	lon := func() float64 { return r.Float64()*360 - 180 }
	for i := 0; i < 1000; i++ {
		pts = append(pts, pt{lon(), (r.Float64()*2 - 1) * edge})
	}
	for i := 0; i < 1000; i++ {
		lat := proj.WebMercatorMaxLat - r.Float64()*0.01
		if i%2 == 1 {
			lat = -lat
		}
		pts = append(pts, pt{lon(), math.Sin(lat * math.Pi / 180)})
	}
	for i := 0; i < 1000; i++ {
		pts = append(pts, pt{lon(), math.Sin((r.Float64()*2 - 1) * 1e-4 * math.Pi / 180)})
	}
	var in bytes.Buffer
	for _, p := range pts {
		fmt.Fprintf(&in, "%.17g %.17g\n", math.Asin(p.s)*180/math.Pi, p.lon)
	}
	cmd := exec.Command(bin, "-f", "%.6f", "EPSG:4326", "EPSG:3857")
	cmd.Stdin = &in
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("cs2cs: %v\n%s", err, stderr.String())
	}
	lines := strings.Split(strings.TrimRight(string(out), "\n"), "\n")
	if len(lines) != len(pts) {
		t.Fatalf("cs2cs gave %d lines for %d points", len(lines), len(pts))
	}
	const tol = 0.5*2*math.Pi*6378137/WorldSize + 0.001
	worst := 0.0
	for i, l := range lines {
		f := strings.Fields(l)
		if len(f) < 2 {
			t.Fatalf("cs2cs line %d: %q", i+1, l)
		}
		we, err1 := strconv.ParseFloat(f[0], 64)
		wn, err2 := strconv.ParseFloat(f[1], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("cs2cs line %d: %q", i+1, l)
		}
		e, n := metres(WorldFromSin(pts[i].lon, pts[i].s))
		d := math.Max(math.Abs(e-we), math.Abs(n-wn))
		worst = math.Max(worst, d)
		if !(d <= tol) {
			t.Errorf("(%v, s %v): cell centre E %.4f N %.4f, cs2cs %.6f %.6f: off by %.4f m", pts[i].lon, pts[i].s, e, n, we, wn, d)
		}
	}
	t.Logf("%d points; worst difference %.4f m (tolerance %.4f m)", len(pts), worst, tol)
}

func TestWorldClampsToSquareWorld(t *testing.T) {
	// The square world ends at atan(sinh π) = 85.0511287798066° (CHECKS.md).
	if _, y := World(0, 89); y != 0 {
		t.Errorf("89°N: y = %d; want 0", y)
	}
	if _, y := World(0, -89); y != WorldSize-1 {
		t.Errorf("89°S: y = %d; want %d", y, WorldSize-1)
	}
	if x, _ := World(180, 0); x != WorldSize-1 {
		t.Errorf("180°E: x = %d; want the last cell", x)
	}
}

func TestKeyRoundTripAndTileRuns(t *testing.T) {
	for _, c := range []struct {
		x, y uint32
		cat  int
	}{{0, 0, 0}, {WorldSize - 1, WorldSize - 1, 63}, {12345678, 87654321 % WorldSize, 7}} {
		x, y, cat := Split(Key(c.x, c.y, c.cat))
		if x != c.x || y != c.y || cat != c.cat {
			t.Errorf("Split(Key(%d, %d, %d)) = (%d, %d, %d)", c.x, c.y, c.cat, x, y, cat)
		}
	}
	// A key lies in tile (z, x>>(29−z), y>>(29−z))'s range, at every zoom.
	k := Key(300000000, 200000000, 3)
	for z := 0; z <= WorldBits; z++ {
		s := uint(WorldBits - z)
		first, last := TileRange(z, int(300000000>>s), int(200000000>>s))
		if k < first || k > last {
			t.Fatalf("z%d: key %x outside its tile's range [%x, %x]", z, k, first, last)
		}
	}
}

// World keeps its own form of the Mercator northing (see its doc comment).
// It must name the same cell as proj.MercatorY (IOGP GN7-2 method 1024, the
// one shared formula) up to rounding: every 0.001° from 85°S to 85°N, the
// world positions differ by less than 1e-5 of a cell, so the cells are the
// same or, for a point on a cell edge, neighbours. CellLonLat, built on
// proj.MercatorPhi, must lead back to the same cell.
func TestWorldMatchesProjMercator(t *testing.T) {
	for k := -85000; k <= 85000; k++ {
		lat := float64(k) / 1000
		lon := float64(k%360000)/1000 - 0.0005
		x, y := World(lon, lat)
		fy := (0.5 - proj.MercatorY(lat*math.Pi/180)/(2*math.Pi)) * WorldSize
		if d := math.Abs(fy - (float64(y) + 0.5)); !(d <= 0.5+1e-5) {
			t.Fatalf("lat %.3f: World y = %d, proj.MercatorY gives %.6f cells", lat, y, fy)
		}
		if x2, y2 := World(CellLonLat(x, y)); x2 != x || y2 != y {
			t.Fatalf("lat %.3f: World(CellLonLat(%d, %d)) = (%d, %d)", lat, x, y, x2, y2)
		}
	}
}
