package sample

import (
	"math"
	"sort"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
	"github.com/stipple-maps/stipple/geo"
)

// Edges are straight in longitude/latitude (RFC 7946 §3.1.1: positions are
// connected by straight lines in the coordinate space). The tests here use
// orb/planar.PolygonContains on the lon/lat polygon as the independent
// containment test, not the sampler's own.

// lonLatTriangle is the triangle of issue 14: taken with edges straight in
// the equal-area plane, about a tenth of its dots fell outside it.
var lonLatTriangle = orb.Polygon{{{0, 50}, {10, 70}, {0, 70}, {0, 50}}}

// bandShares integrates the true area (∫ width(φ)·cos φ dφ, Simpson's rule,
// 200 steps per band) of a polygon whose longitude span at latitude φ is
// width(φ), over equal latitude bands from lat0 to lat1.
func bandShares(width func(lat float64) float64, lat0, lat1 float64, bands int) []float64 {
	out := make([]float64, bands)
	const steps = 200
	for b := range out {
		a := lat0 + (lat1-lat0)*float64(b)/float64(bands)
		h := (lat1 - lat0) / float64(bands) / steps
		f := func(lat float64) float64 { return width(lat) * math.Cos(lat*degToRad) }
		s := f(a) + f(a+steps*h)
		for i := 1; i < steps; i++ {
			w := 2.0
			if i%2 == 1 {
				w = 4
			}
			s += w * f(a+float64(i)*h)
		}
		out[b] = s * h / 3
	}
	return out
}

// TestLonLatEdgesTriangle: 100 000 dots in the triangle (0,50),(10,70),(0,70)
// all lie inside it by orb/planar.PolygonContains, and their latitude bands
// follow the true area of the lon/lat triangle (chi-square, df 9, critical
// value from NIST/SEMATECH e-Handbook 1.3.6.7.4).
func TestLonLatEdgesTriangle(t *testing.T) {
	const n = 100000
	f := &geo.Feature{ID: "tri", Geometry: orb.MultiPolygon{lonLatTriangle}}
	obs := make([]int, 10)
	outside := 0
	r := FeatureN(f, []int{n}, Options{PeoplePerDot: 1, Seed: 14}, func(_ int, p orb.Point) {
		if !planar.PolygonContains(lonLatTriangle, p) {
			outside++
		}
		obs[min(9, max(0, int((p[1]-50)/2)))]++
	})
	t.Logf("seed 14")
	if r.Dots[0] != n {
		t.Fatalf("%d dots, want %d", r.Dots[0], n)
	}
	if outside != 0 {
		t.Fatalf("%d of %d dots outside the lon/lat triangle", outside, n)
	}
	// The diagonal runs from (0,50) to (10,70): width (φ−50)/2 degrees.
	share := bandShares(func(lat float64) float64 { return (lat - 50) / 2 }, 50, 70, 10)
	checkChi(t, "lon/lat triangle by latitude band", obs, share)
}

// star60 is a 100-vertex star centred at 20°E 60°N whose edges run
// diagonally over up to 10° of latitude.
func star60() orb.Polygon {
	var ring orb.Ring
	for k := 0; k < 100; k++ {
		a := 2 * math.Pi * float64(k) / 100
		r := 12.0
		if k%2 == 1 {
			r = 3
		}
		ring = append(ring, orb.Point{20 + 2*r*math.Cos(a), 60 + 0.8*r*math.Sin(a)})
	}
	return orb.Polygon{append(ring, ring[0])}
}

// TestLonLatEdgesStar: a 100-vertex polygon at 60°N with long diagonal
// edges, by every method: no dot outside by orb/planar.PolygonContains.
func TestLonLatEdgesStar(t *testing.T) {
	star := star60()
	for _, m := range []method{autoMethod, byBox, byTriangles, byGrid} {
		t.Run(m.String(), func(t *testing.T) {
			pts := draw(t, orb.MultiPolygon{star}, m, 60, "star", 30000)
			out := 0
			for _, p := range pts {
				if !planar.PolygonContains(star, p) {
					out++
				}
			}
			if out != 0 {
				t.Fatalf("%d of %d dots outside the lon/lat star", out, len(pts))
			}
		})
	}
}

// TestLonLatEdgesMask: a mask is the lon/lat polygon too. Dots of the box
// (0..10°E, 50..70°N) never fall in the triangle mask by
// orb/planar.PolygonContains, and Mask.Contains agrees with it.
func TestLonLatEdgesMask(t *testing.T) {
	m := NewMask([]orb.MultiPolygon{{lonLatTriangle}})
	box := orb.Polygon{{{0, 50}, {10, 50}, {10, 70}, {0, 70}, {0, 50}}}
	f := &geo.Feature{ID: "box", Geometry: orb.MultiPolygon{box}}
	masked := 0
	r := FeatureN(f, []int{50000}, Options{PeoplePerDot: 1, Seed: 3, Masks: m}, func(_ int, p orb.Point) {
		if planar.PolygonContains(lonLatTriangle, p) {
			masked++
		}
	})
	if r.Dots[0] != 50000 || r.MaskIgnored || masked != 0 {
		t.Fatalf("%+v: %d dots in the mask", r, masked)
	}
	// Points just either side of the diagonal at 60°N (lon 5 on the edge).
	for _, c := range []struct {
		p    orb.Point
		want bool
	}{
		{orb.Point{4.99, 60}, true},
		{orb.Point{5.01, 60}, false},
		{orb.Point{2.5, 55.01}, true},
		{orb.Point{2.51, 55}, false},
	} {
		if got, ref := m.Contains(c.p), planar.PolygonContains(lonLatTriangle, c.p); got != c.want || ref != c.want {
			t.Errorf("Contains(%v) = %v, orb/planar %v, want %v", c.p, got, ref, c.want)
		}
	}
}

// TestDensifyTolerance measures, along edges up to the poles, the largest
// north–south distance between an edge straight in lon/lat and the plane
// polyline densify makes of it (at the same longitude, the latitude of the
// chord is asin of its y): it must stay within EdgeTolerance, and the chord
// alone (no densification) must not, so the measure can fail.
func TestDensifyTolerance(t *testing.T) {
	cases := []struct {
		name                 string
		x0, lat0, x1, lat1   float64
		chordAloneOutsideTol bool
	}{
		{"issue triangle diagonal", 0, 50, 10, 70, true},
		{"equator to 60N", -30, 0, 40, 60, true},
		{"to the north pole", 0, 0, 10, 90, true},
		{"near the south pole", 100, -80, 170, -89.99, true},
		{"across the antimeridian unwrapped", 175, 10, 185, -10, true},
		{"county-sized edge", -90, 40, -89.99, 40.01, false},
		{"meridian", 5, -60, 5, 60, false},
		{"parallel", -170, 45, 170, 45, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			xs := []float64{c.x0}
			ys := []float64{math.Sin(c.lat0 * degToRad)}
			densify(c.x0, c.lat0, c.x1, c.lat1, func(x, y float64) { xs = append(xs, x); ys = append(ys, y) })
			xs = append(xs, c.x1)
			ys = append(ys, math.Sin(c.lat1*degToRad))
			sign := 1.0
			if c.x1 < c.x0 {
				sign = -1
			}
			for i := 1; i < len(xs); i++ {
				if sign*(xs[i]-xs[i-1]) < 0 {
					t.Fatalf("densified x not monotone at %d", i)
				}
			}
			worst := func(xs, ys []float64) float64 {
				w := 0.0
				const samples = 200000
				for k := 0; k <= samples; k++ {
					u := float64(k) / samples
					x := c.x0 + u*(c.x1-c.x0)
					lat := c.lat0 + u*(c.lat1-c.lat0)
					if c.x0 == c.x1 {
						continue // a meridian: the plane segment is the edge
					}
					i := sort.Search(len(xs), func(i int) bool { return sign*(xs[i]-x) >= 0 })
					i = max(1, min(i, len(xs)-1))
					s := (x - xs[i-1]) / (xs[i] - xs[i-1])
					y := ys[i-1] + s*(ys[i]-ys[i-1])
					d := math.Abs(math.Asin(math.Max(-1, math.Min(1, y)))-lat*degToRad) * earthRadius
					w = math.Max(w, d)
				}
				return w
			}
			got := worst(xs, ys)
			alone := worst([]float64{c.x0, c.x1}, []float64{ys[0], ys[len(ys)-1]})
			t.Logf("%d points added; worst %.4f m (chord alone %.1f m)", len(xs)-2, got, alone)
			if got > EdgeTolerance {
				t.Errorf("densified edge strays %.4f m, tolerance %v m", got, EdgeTolerance)
			}
			if (alone > EdgeTolerance) != c.chordAloneOutsideTol {
				t.Errorf("chord alone strays %.4f m: the case does not test what it says", alone)
			}
		})
	}
}
