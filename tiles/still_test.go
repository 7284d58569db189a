package tiles

import (
	"math"
	"testing"
)

func TestParseViewAndSize(t *testing.T) {
	for _, c := range []struct {
		in string
		ok bool
	}{
		{"11/-34.2/-128.4", true},
		{"0/0/0", true},
		{"11/86/0", false}, // beyond Web Mercator's limit, 85.0511° (EPSG:3857)
		{"11/-34.2", false},
		{"1.5/0/0", false},
		{"31/0/0", false},
		{"3/0/181", false},
		{"3/NaN/0", false},
	} {
		if _, err := ParseView(c.in); (err == nil) != c.ok {
			t.Errorf("ParseView(%q): %v", c.in, err)
		}
	}
	for _, c := range []struct {
		in   string
		w, h int
	}{
		{"1200x675", 1200, 675}, {"square", 1080, 1080}, {"Portrait", 1080, 1350},
		{"10x10", 0, 0}, {"1200", 0, 0}, {"5000x100", 0, 0},
	} {
		w, h, err := ParseStillSize(c.in)
		if w != c.w || h != c.h || (err == nil) != (c.w > 0) {
			t.Errorf("ParseStillSize(%q) = %d, %d, %v", c.in, w, h, err)
		}
	}
	// Web Mercator's latitude limit is atan(sinh π) = 85.0511287798°
	// (EPSG:3857 guidance, from memory).
	if math.Abs(MaxLat-85.0511287798) > 1e-9 {
		t.Errorf("MaxLat %v", MaxLat)
	}
}

// TestFitViewAcross180 checks that a map given west > east (across 180°)
// is centred between its edges across the antimeridian, not on the far
// side of the world.
func TestFitViewAcross180(t *testing.T) {
	md := &Metadata{Bounds: [4]float64{178, -18, -178, -16}, MinZoom: 2, MaxZoom: 12, TileSize: 256}
	v := FitView(md, 1200, 675)
	if math.Abs(math.Abs(v.Lon)-180) > 1e-9 || v.Zoom < 6 {
		t.Errorf("view %v; want the centre on 180° at a zoom that fits 4°", v)
	}
}
