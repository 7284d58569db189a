package shard

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/proj"
)

// TestFillOf checks FillOf on shapes whose Web Mercator areas are known by
// hand: a lon/lat rectangle stays a rectangle (fill 1), the triangle on
// three of its corners is half of it, and a rectangular hole removes its
// width share times its share of Mercator height, y = ln tan(π/4 + φ/2)
// (IOGP GN7-2 method 1024, through proj.MercatorY). World cells are about
// 1e-7 of these shapes' width, hence the tolerance.
func TestFillOf(t *testing.T) {
	rect := func(w, s, e, n float64) orb.Ring {
		return orb.Ring{{w, s}, {e, s}, {e, n}, {w, n}, {w, s}}
	}
	y := func(lat float64) float64 { return proj.MercatorY(lat * math.Pi / 180) }
	hole := 1 - 0.5*(y(8)-y(2))/(y(10)-y(0))
	for _, c := range []struct {
		name string
		mp   orb.MultiPolygon
		want float64
	}{
		{"rectangle", orb.MultiPolygon{{rect(10, 0, 20, 10)}}, 1},
		{"triangle on three corners", orb.MultiPolygon{{{{10, 0}, {20, 0}, {20, 10}, {10, 0}}}}, 0.5},
		{"rectangle with a hole", orb.MultiPolygon{{rect(10, 0, 20, 10), rect(12, 2, 17, 8)}}, hole},
		{"degenerate bound", orb.MultiPolygon{{{{10, 0}, {20, 0}, {15, 0}, {10, 0}}}}, 1},
	} {
		if got := FillOf(c.mp); math.Abs(got-c.want) > 1e-6 {
			t.Errorf("%s: FillOf = %.9f, want %.9f", c.name, got, c.want)
		}
	}
}
