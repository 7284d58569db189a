package sample

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// plainEvenOdd is the reference for the index: the obvious loop over every
// edge of every ring with the rule stated in contain.go.
func plainEvenOdd(rings [][]float64, x, y float64) bool {
	in := false
	for _, r := range rings {
		for i := 0; i+3 < len(r); i += 2 {
			x0, y0, x1, y1 := r[i], r[i+1], r[i+2], r[i+3]
			if (y0 > y) != (y1 > y) && x < x0+(y-y0)*(x1-x0)/(y1-y0) {
				in = !in
			}
		}
	}
	return in
}

// TestEdgeIndexMatchesPlainLoop compares the slab index with the plain loop
// value for value, on random points and on points placed exactly at vertex
// ordinates, on vertices and on edges, where the half-open rule matters.
func TestEdgeIndexMatchesPlainLoop(t *testing.T) {
	seed := uint64(11)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 5))
	shapes := map[string][][]float64{
		"coastline": planeRings(coastline(rng, 50000)),
		"holes100":  planeRings(withHoles(100)),
	}
	for n := 0; n < 30; n++ {
		for k, poly := range randomFeature(rng, n%2 == 1) {
			shapes[strings.Repeat("r", 1+n)+string(rune('a'+k))] = planeRings(poly)
		}
	}
	for name, rings := range shapes {
		ix := newEdgeIndex(rings)
		x0, y0, x1, y1 := bounds(rings)
		var pts [][2]float64
		for i := 0; i < 3000; i++ {
			pts = append(pts, [2]float64{x0 + (x1-x0)*(1.2*rng.Float64()-0.1), y0 + (y1-y0)*(1.2*rng.Float64()-0.1)})
		}
		for _, r := range rings {
			for i := 0; i+3 < len(r) && i < 4000; i += 2 {
				t := rng.Float64()
				pts = append(pts,
					[2]float64{r[i], r[i+1]},
					[2]float64{x0 + (x1-x0)*rng.Float64(), r[i+1]},
					[2]float64{r[i] + t*(r[i+2]-r[i]), r[i+1] + t*(r[i+3]-r[i+1])})
			}
		}
		in := 0
		for _, p := range pts {
			a, b := ix.contains(p[0], p[1]), plainEvenOdd(rings, p[0], p[1])
			if a != b {
				t.Fatalf("%s: index says %v, plain loop %v at (%v, %v)", name, a, b, p[0], p[1])
			}
			if a {
				in++
			}
		}
		if in == 0 || in == len(pts) {
			t.Errorf("%s: %d of %d points inside; the comparison tests nothing", name, in, len(pts))
		}
	}
}

// TestTriangulationCoversPolygon: the triangles of generated polygons with
// holes add up to the polygon's area, and a random point of the box is in
// exactly one triangle when it is inside the polygon (by the go-geom
// reference) and in none when outside.
func TestTriangulationCoversPolygon(t *testing.T) {
	seed := uint64(12)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 6))
	polys := []orb.Polygon{withHoles(100), coastline(rng, 3000), comb(40)}
	for n := 0; n < 40; n++ {
		polys = append(polys, randomFeature(rng, false)...)
	}
	for n, poly := range polys {
		rings := planeRings(poly)
		if c := checkRings(rings); c != ringsSimple {
			t.Fatalf("polygon %d: check %v, want simple", n, c)
		}
		tri, ok := triangulate(rings)
		if !ok {
			t.Fatalf("polygon %d (%d rings, %d vertices): triangulation failed", n, len(rings), len(rings[0])/2)
		}
		want := math.Abs(geo.RingArea(asRing(rings[0])))
		for _, h := range rings[1:] {
			want -= math.Abs(geo.RingArea(asRing(h)))
		}
		sum := 0.0
		for k := 0; k+5 < len(tri); k += 6 {
			a := cross(tri[k], tri[k+1], tri[k+2], tri[k+3], tri[k+4], tri[k+5]) / 2
			if a <= 0 {
				t.Fatalf("polygon %d: triangle %d has area %g", n, k/6, a)
			}
			sum += a
		}
		if math.Abs(sum-want) > 1e-9*want {
			t.Fatalf("polygon %d: triangles add up to %v, polygon area %v", n, sum, want)
		}
		x0, y0, x1, y1 := bounds(rings)
		for i := 0; i < 300; i++ {
			x, y := x0+(x1-x0)*rng.Float64(), y0+(y1-y0)*rng.Float64()
			in := refInside(poly, orb.Point{x, math.Asin(y) / degToRad})
			cover := 0
			for k := 0; k+5 < len(tri); k += 6 {
				if inTriangle(tri[k], tri[k+1], tri[k+2], tri[k+3], tri[k+4], tri[k+5], x, y) {
					cover++
				}
			}
			if (in && cover != 1) || (!in && cover != 0) {
				t.Fatalf("polygon %d: point (%v, %v) inside=%v is in %d triangles", n, x, y, in, cover)
			}
		}
	}
}

// comb is a polygon with n teeth: deep, narrow, many reflex vertices.
func comb(n int) orb.Polygon {
	ring := orb.Ring{{0, 0}, {float64(2 * n), 0}}
	for i := n - 1; i >= 0; i-- {
		x := float64(2 * i)
		ring = append(ring, orb.Point{x + 1.5, 5}, orb.Point{x + 1, 5}, orb.Point{x + 1, 0.5}, orb.Point{x + 0.5, 0.5}, orb.Point{x + 0.5, 5}, orb.Point{x, 5})
	}
	ring = append(ring[:len(ring)-1], orb.Point{0, 5}, orb.Point{0, 0})
	for i := range ring {
		ring[i][0] *= 0.01
		ring[i][1] *= 0.01
	}
	return orb.Polygon{ring}
}

// TestMaskedOnlyFeature: a feature entirely under a mask keeps its people;
// they are placed in the whole feature and the result says so.
func TestMaskedOnlyFeature(t *testing.T) {
	sq := orb.Polygon{{{10, 10}, {11, 10}, {11, 11}, {10, 11}, {10, 10}}}
	lake := NewMask([]orb.MultiPolygon{{{{{9, 9}, {12, 9}, {12, 12}, {9, 12}, {9, 9}}}}})
	f := &geo.Feature{ID: "lake", Geometry: orb.MultiPolygon{sq}}
	n := 0
	r := Feature(f, []float64{300, 30}, Options{PeoplePerDot: 10, Seed: 3, Masks: lake}, func(_ int, p orb.Point) {
		n++
		if !refInside(sq, p) {
			t.Fatalf("dot %v outside the feature", p)
		}
	})
	if !r.MaskIgnored || r.Dots[0] != 30 || r.Dots[1] != 3 || n != 33 || !strings.Contains(r.Problem, "mask") {
		t.Fatalf("result %+v, %d dots; want 33 dots placed ignoring the mask, and a problem", r, n)
	}
	// Half masked: dots only in the free half.
	half := NewMask([]orb.MultiPolygon{{{{{9, 9}, {10.5, 9}, {10.5, 12}, {9, 12}, {9, 9}}}}})
	r = Feature(f, []float64{3000}, Options{PeoplePerDot: 10, Seed: 3, Masks: half}, func(_ int, p orb.Point) {
		if p[0] < 10.5 {
			t.Fatalf("dot %v in the mask", p)
		}
	})
	if r.MaskIgnored || r.Dots[0] != 300 || r.Problem != "" {
		t.Fatalf("half-masked: %+v", r)
	}
}

// TestZeroAreaFeatures: features with people and no area keep their dots on
// their outline (or report them lost when there is no vertex), quickly.
func TestZeroAreaFeatures(t *testing.T) {
	cases := []struct {
		name string
		g    orb.MultiPolygon
		lost bool
	}{
		// Collinear in the plane: along a meridian, along a parallel.
		{"collinear meridian", orb.MultiPolygon{{{{0, 0}, {0, 1}, {0, 2}, {0, 0}}}}, false},
		{"collinear parallel", orb.MultiPolygon{{{{0, 10}, {1, 10}, {3, 10}, {0, 10}}}}, false},
		{"there and back", orb.MultiPolygon{{{{0, 0}, {1, 0}, {1, 1}, {1, 0}, {0, 0}}}}, false},
		{"one point", orb.MultiPolygon{{{{5, 5}, {5, 5}, {5, 5}, {5, 5}}}}, false},
		{"hole fills outer", orb.MultiPolygon{{{{0, 0}, {1, 0}, {1, 1}, {0, 1}, {0, 0}}, {{0, 0}, {0, 1}, {1, 1}, {1, 0}, {0, 0}}}}, false},
		{"empty", orb.MultiPolygon{}, true},
		{"NaN", orb.MultiPolygon{{{{math.NaN(), 0}, {1, math.NaN()}}}}, true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			f := &geo.Feature{ID: c.name, Geometry: c.g}
			n := 0
			r := Feature(f, []float64{100}, Options{PeoplePerDot: 1, Seed: 4}, func(_ int, p orb.Point) {
				n++
				if !onOutline(c.g, p) {
					t.Fatalf("dot %v not on the outline", p)
				}
			})
			if c.lost {
				if r.Lost[0] != 100 || n != 0 || r.Problem == "" {
					t.Fatalf("%+v: want 100 lost and a problem", r)
				}
				return
			}
			if !r.NoArea || r.Dots[0] != 100 || n != 100 || !strings.Contains(r.Problem, "no area") {
				t.Fatalf("%+v (%d emitted): want NoArea, 100 dots and a problem", r, n)
			}
		})
	}
}

// onOutline tells whether p lies on a segment of g (lon/lat), to 1e-9.
func onOutline(g orb.MultiPolygon, p orb.Point) bool {
	for _, poly := range g {
		for _, ring := range poly {
			for i := range ring {
				a, b := ring[i], ring[(i+1)%len(ring)]
				d := math.Abs(cross(a[0], a[1], b[0], b[1], p[0], p[1])) / math.Max(1e-300, math.Hypot(b[0]-a[0], b[1]-a[1]))
				if (d < 1e-9 || (a == b && p == a)) && inBox(a[0]-1e-9, a[1]-1e-9, b[0]+1e-9, b[1]+1e-9, p[0], p[1]) || p == a {
					return true
				}
			}
		}
	}
	return false
}

// TestBowtie: a self-crossing ring terminates, is reported, and its dots
// are in the even-odd filled area (both lobes, by the reference test), in
// proportion to the lobes' areas (equal here; chi-square df 1).
func TestBowtie(t *testing.T) {
	bow := orb.Polygon{{{0, 0}, {2, 1}, {2, 0}, {0, 1}, {0, 0}}}
	f := &geo.Feature{ID: "bow", Geometry: orb.MultiPolygon{bow}}
	obs := make([]int, 2)
	r := Feature(f, []float64{4000}, Options{PeoplePerDot: 1, Seed: 5}, func(_ int, p orb.Point) {
		if !refInside(bow, p) {
			t.Fatalf("dot %v outside the even-odd fill", p)
		}
		if p[0] < 1 {
			obs[0]++
		} else {
			obs[1]++
		}
	})
	if !r.EvenOdd || r.Dots[0] != 4000 || !strings.Contains(r.Problem, "even-odd") {
		t.Fatalf("%+v: want EvenOdd, 4000 dots and a problem", r)
	}
	t.Logf("seed 5")
	checkChi(t, "bowtie lobes", obs, []float64{1, 1})
}

// TestDegenerateInputsTerminate: rings with repeated points, spikes,
// collinear runs, touching holes, holes outside, nested holes, and huge or
// tiny coordinates all terminate, and every dot is inside by the reference.
func TestDegenerateInputsTerminate(t *testing.T) {
	sq := orb.Ring{{0, 0}, {1, 0}, {1, 1}, {0, 1}, {0, 0}}
	cases := map[string]orb.Polygon{
		"repeated points": {{{0, 0}, {0, 0}, {1, 0}, {1, 0}, {1, 1}, {0, 1}, {0, 1}, {0, 0}}},
		"collinear run":   {{{0, 0}, {0.25, 0}, {0.5, 0}, {0.75, 0}, {1, 0}, {1, 1}, {0.5, 1}, {0, 1}, {0, 0}}},
		"spike":           {{{0, 0}, {1, 0}, {1, 0.5}, {3, 0.5}, {1, 0.5}, {1, 1}, {0, 1}, {0, 0}}},
		"touching hole":   {sq, {{0, 0}, {0.5, 0.2}, {0.5, 0.6}, {0, 0}}},
		"hole outside":    {sq, {{2, 0}, {3, 0}, {3, 1}, {2, 0}}},
		"nested holes":    {sq, {{0.1, 0.1}, {0.9, 0.1}, {0.9, 0.9}, {0.1, 0.9}, {0.1, 0.1}}, {{0.3, 0.3}, {0.6, 0.3}, {0.6, 0.6}, {0.3, 0.3}}},
		"unclosed":        {{{0, 0}, {1, 0}, {1, 1}, {0, 1}}},
		"figure eight":    {{{0, 0}, {1, 1}, {2, 0}, {3, 1}, {3, 0}, {2, 1}, {1, 0}, {0, 1}, {0, 0}}},
		"tiny":            {{{0, 0}, {1e-9, 0}, {1e-9, 1e-9}, {0, 1e-9}, {0, 0}}},
		"sliver 1e-6":     {{{0, 0}, {10, 1}, {10, 1 + 1e-6}, {0, 1e-6}, {0, 0}}},
		"near pole":       {{{0, 89}, {10, 89}, {10, 90}, {0, 90}, {0, 89}}},
		"self-overlap":    {{{0, 0}, {2, 0}, {2, 2}, {0, 2}, {0, 0}, {1, 0}, {1, 1}, {0, 1}, {0, 0}}},
	}
	for name, poly := range cases {
		t.Run(name, func(t *testing.T) {
			f := &geo.Feature{ID: name, Geometry: orb.MultiPolygon{poly}}
			n := 0
			r := Feature(f, []float64{500}, Options{PeoplePerDot: 1, Seed: 6}, func(_ int, p orb.Point) {
				n++
				if !r0Inside(poly, p) {
					t.Fatalf("dot %v outside", p)
				}
			})
			t.Logf("%s: %v, problem %q", name, methodsOf(NewShape(f.Geometry)), r.Problem)
			if r.Dots[0]+r.Lost[0] != 500 || n != r.Dots[0] || r.Lost[0] != 0 {
				t.Fatalf("%+v", r)
			}
		})
	}
}

// r0Inside is refInside, allowing dots on the outline of zero-area shapes.
func r0Inside(poly orb.Polygon, p orb.Point) bool {
	return refInside(poly, p) || onOutline(orb.MultiPolygon{poly}, p)
}

// TestAntimeridian: an RFC 7946 §3.1.9 cut MultiPolygon (two parts at
// ±180) and the same area as one ring jumping across the antimeridian give
// dots on both sides in proportion to area (chi-square df 1), with
// longitudes in [-180, 180], inside the parts.
func TestAntimeridian(t *testing.T) {
	cut := orb.MultiPolygon{
		{{{180, 40}, {180, 50}, {170, 50}, {170, 40}, {180, 40}}},
		{{{-170, 40}, {-170, 50}, {-180, 50}, {-180, 40}, {-170, 40}}},
	}
	jump := orb.MultiPolygon{{{{170, 40}, {-170, 40}, {-170, 50}, {170, 50}, {170, 40}}}}
	for name, g := range map[string]orb.MultiPolygon{"cut": cut, "jump": jump} {
		t.Run(name, func(t *testing.T) {
			obs := make([]int, 2)
			for _, p := range draw(t, g, autoMethod, 13, name, 4000) {
				if p[0] < -180 || p[0] > 180 || p[1] < 40 || p[1] > 50 {
					t.Fatalf("dot %v out of range", p)
				}
				switch {
				case p[0] >= 170:
					obs[0]++
				case p[0] <= -170:
					obs[1]++
				default:
					t.Fatalf("dot %v on the wrong side of the globe", p)
				}
				if refInsideMulti(cut, p) < 0 {
					t.Fatalf("dot %v outside", p)
				}
			}
			t.Logf("seed 13")
			checkChi(t, name+": east and west of 180°", obs, []float64{1, 1})
		})
	}
	s := NewShape(jump)
	if a, b := s.Area(), NewShape(cut).Area(); math.Abs(a-b) > 1e-12 {
		t.Errorf("unwrapped area %v, cut area %v", a, b)
	}
	// Spherical zone area (2πR²(sin φb − sin φa) scaled by 20°/360°).
	want := 2 * math.Pi * (math.Sin(50*degToRad) - math.Sin(40*degToRad)) * 20 / 360
	if math.Abs(s.Area()-want) > 1e-12 {
		t.Errorf("area %v sr, want %v", s.Area(), want)
	}
}

// asRing must show the same points as copying the flat ring pair by pair,
// so that geo.RingArea on it is the shoelace area of the flat ring.
func TestAsRingViewsFlatRing(t *testing.T) {
	flat := []float64{-179.5, 0.25, 179.75, 0.5, 179.5, -0.125, -179.5, 0.25}
	var want orb.Ring
	for i := 0; i+1 < len(flat); i += 2 {
		want = append(want, orb.Point{flat[i], flat[i+1]})
	}
	got := asRing(flat)
	if !got.Equal(want) {
		t.Fatalf("asRing = %v; want %v", got, want)
	}
	if a, b := geo.RingArea(got), geo.RingArea(want); a != b || a == 0 {
		t.Errorf("RingArea of view %v, of copy %v", a, b)
	}
	if asRing(nil) != nil || asRing([]float64{1}) != nil {
		t.Error("asRing of fewer than one point should be nil")
	}
}

// inBox tells whether p lies within the box of ab.
func inBox(ax, ay, bx, by, px, py float64) bool {
	return math.Min(ax, bx) <= px && px <= math.Max(ax, bx) && math.Min(ay, by) <= py && py <= math.Max(ay, by)
}
