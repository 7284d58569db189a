package dotstore

import (
	"math"
	"testing"

	"github.com/stipple-maps/stipple/geo/proj"
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
