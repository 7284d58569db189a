package tiles

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
)

// slippy is the tile-number formula of the OpenStreetMap wiki, "Slippy map
// tilenames": x = floor(n(lon+180)/360), y = floor(n(1 − ln(tan φ + sec φ)/π)/2).
func slippy(lon, lat float64, z int) (int, int) {
	n := math.Exp2(float64(z))
	phi := lat * math.Pi / 180
	x := math.Floor(n * (lon + 180) / 360)
	y := math.Floor(n * (1 - math.Log(math.Tan(phi)+1/math.Cos(phi))/math.Pi) / 2)
	return int(x), int(y)
}

func TestAtMatchesSlippyFormula(t *testing.T) {
	// Worked examples computed from the OSM wiki formula (CHECKS.md).
	cases := []struct {
		name       string
		lon, lat   float64
		z          Zoom
		wantX, wnY uint32
	}{
		{"z10 75W 35N", -75, 35, 10, 298, 405},
		{"z1 origin", 0, 0, 1, 1, 1},
		{"z0 anywhere", 12.3, -45.6, 0, 0, 0},
		{"z3 southwest", -179.9, -84, 3, 0, 7},
		{"lon 180 is the last column", 180, 10, 4, 15, 7},
	}
	for _, c := range cases {
		got := At(c.lon, c.lat, c.z)
		if got.X != c.wantX || got.Y != c.wnY || got.Z != c.z {
			t.Errorf("%s: At = %v; want (%d, %d, %d)", c.name, got, c.wantX, c.wnY, c.z)
		}
	}
	// And a grid against the formula itself.
	for z := 0; z <= 18; z += 3 {
		for lon := -179.5; lon < 180; lon += 7.3 {
			for lat := -84.0; lat <= 84; lat += 6.1 {
				x, y := slippy(lon, lat, z)
				got := At(lon, lat, Zoom(z))
				if int(got.X) != x || int(got.Y) != y {
					t.Fatalf("At(%v, %v, %d) = (%d, %d); formula gives (%d, %d)", lon, lat, z, got.X, got.Y, x, y)
				}
			}
		}
	}
}

func TestTileCornerWorkedExample(t *testing.T) {
	// OSM wiki: NW corner lon = x/n·360 − 180, lat = atan(sinh(π(1 − 2y/n))).
	// Tile (298, 405) at z10 → (−75.234375, 35.173808) (CHECKS.md, computed).
	b := At(-75, 35, 10).Bound()
	if math.Abs(b.Min[0]-(-75.234375)) > 1e-9 || math.Abs(b.Max[1]-35.173808) > 1e-6 {
		t.Errorf("NW corner = (%v, %v); want (−75.234375, 35.173808)", b.Min[0], b.Max[1])
	}
}

func TestCover(t *testing.T) {
	b := orb.Bound{Min: orb.Point{-75.3, 34.9}, Max: orb.Point{-74.9, 35.1}}
	got := Cover(b, 10)
	x0, y0 := slippy(-75.3, 35.1, 10)
	x1, y1 := slippy(-74.9, 34.9, 10)
	if want := (x1 - x0 + 1) * (y1 - y0 + 1); len(got) != want {
		t.Fatalf("Cover gave %d tiles; want %d", len(got), want)
	}
	if int(got[0].X) != x0 || int(got[0].Y) != y0 {
		t.Errorf("first tile %v; want (%d, %d)", got[0], x0, y0)
	}
}

func TestMetresPerPixel(t *testing.T) {
	// Microsoft, "Bing Maps Tile System": level 1 = 78 271.5170 m/px at the
	// equator; level 0 = 156 543.03392804 m/px (computed).
	if got := MetresPerPixel(0, 1, 256); math.Abs(got-78271.5170) > 1e-4 {
		t.Errorf("level 1: %v m/px; want 78271.5170", got)
	}
	if got := MetresPerPixel(0, 0, 256); math.Abs(got-156543.03392804) > 1e-6 {
		t.Errorf("level 0: %v m/px; want 156543.03392804", got)
	}
	if got, want := MetresPerPixel(60, 0, 256), 156543.03392804/2; math.Abs(got-want) > 1e-6 {
		t.Errorf("60°N: %v; want cos 60° × level 0 = %v", got, want)
	}
}
