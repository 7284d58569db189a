package sample

import (
	"encoding/binary"
	"math"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// FuzzFeature feeds arbitrary rings (any coordinates, including NaN, ±Inf,
// huge values, repeats and crossings) to the sampler: it must return, not
// panic, account for every dot, and put every dot inside the shape by its
// own test or on the outline of a shape without area.
func FuzzFeature(f *testing.F) {
	enc := func(pts ...float64) []byte {
		b := make([]byte, 0, 8*len(pts))
		for _, v := range pts {
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
		}
		return b
	}
	f.Add(enc(0, 0, 1, 0, 1, 1, 0, 1), uint8(1))
	f.Add(enc(0, 0, 1, 1, 1, 0, 0, 1), uint8(1))
	f.Add(enc(179, 0, -179, 0, -179, 1, 179, 1), uint8(1))
	f.Add(enc(0, 0, 2, 0, 2, 2, 0, 2, 0.5, 0.5, 0.5, 1, 1, 1, 1, 0.5), uint8(2))
	f.Add(enc(0, 0, math.NaN(), 1, 1e300, -1e300, 0, 0), uint8(1))
	f.Fuzz(func(t *testing.T, data []byte, split uint8) {
		var pts []orb.Point
		for len(data) >= 16 && len(pts) < 400 {
			x := math.Float64frombits(binary.LittleEndian.Uint64(data))
			y := math.Float64frombits(binary.LittleEndian.Uint64(data[8:]))
			pts = append(pts, orb.Point{x, y})
			data = data[16:]
		}
		// Cut the points into rings of one polygon.
		var poly orb.Polygon
		step := 3 + int(split)%8
		for i := 0; i < len(pts); i += step {
			r := orb.Ring(append([]orb.Point(nil), pts[i:min(len(pts), i+step)]...))
			if len(r) > 0 {
				r = append(r, r[0])
			}
			poly = append(poly, r)
		}
		g := orb.MultiPolygon{poly}
		feat := &geo.Feature{ID: "fuzz", Geometry: g}
		s := NewShape(g)
		n := 0
		r := FeatureN(feat, []int{20}, Options{Seed: 1, MaxAttempts: 2000}, func(_ int, p orb.Point) {
			n++
			if math.IsNaN(p[0]) || math.IsNaN(p[1]) || p[0] < -180 || p[0] > 180 {
				t.Fatalf("dot %v", p)
			}
			if !r0(s, g, p) {
				t.Fatalf("dot %v outside %v", p, g)
			}
		})
		if r.Dots[0]+r.Lost[0] != 20 || n != r.Dots[0] {
			t.Fatalf("%+v, %d emitted", r, n)
		}
	})
}

func r0(s *Shape, g orb.MultiPolygon, p orb.Point) bool {
	for _, poly := range g {
		for _, r := range poly {
			for _, q := range r {
				if math.Abs(q[0]) > 540 {
					// Not a longitude: wrapping loses the digits that
					// would place the dot back in the ring.
					return true
				}
			}
		}
	}
	if s.Area() == 0 || s.Contains(p) {
		return true // outline dots are checked in TestZeroAreaFeatures
	}
	// Dot positions are rounded (and round-trip through asin/sin): allow
	// points within rounding of the boundary, relative to their size.
	x, y := toPlane(p)
	tol := 1e-12 * (math.Abs(x) + math.Abs(y) + 1e-300)
	for _, pt := range s.parts {
		for _, r := range pt.rings {
			for i := 0; i+3 < len(r); i += 2 {
				for _, sx := range []float64{0, 360, -360} {
					if segDist(r[i], r[i+1], r[i+2], r[i+3], x+sx, y) <= tol*(1+math.Abs(sx)) {
						return true
					}
				}
			}
		}
	}
	return false
}

// segDist is the distance from (px, py) to segment ab.
func segDist(ax, ay, bx, by, px, py float64) float64 {
	dx, dy := bx-ax, by-ay
	t := 0.0
	if l := dx*dx + dy*dy; l > 0 {
		t = math.Max(0, math.Min(1, ((px-ax)*dx+(py-ay)*dy)/l))
	}
	return math.Hypot(px-(ax+t*dx), py-(ay+t*dy))
}
