package sample

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// FeatureNSin hands on the sine the sampler drew: on every path (box,
// triangles, grid, masks, masks ignored, outline of a feature without
// area, near the poles and across the antimeridian) its dots are
// FeatureN's, in the same order, and each dot's latitude is the arcsine of
// the sinLat it comes with, bit for bit; outline dots (drawn in lon/lat)
// come with math.Sin of their latitude.
func TestFeatureNSinHandsOnTheDrawnSine(t *testing.T) {
	square := orb.Polygon{{{10, 50}, {10.2, 50}, {10.2, 50.2}, {10, 50.2}, {10, 50}}}
	sliver := orb.Polygon{{{0, 0}, {20, 0.1}, {20, 0.2}, {0, 0}}}
	crossing := orb.Polygon{{{0, 0}, {1, 1}, {1, 0}, {0, 1}, {0, 0}}} // a bow tie: grid, even-odd
	var cap orb.Ring
	for lon := -180.0; lon <= 180; lon += 30 {
		cap = append(cap, orb.Point{lon, 80})
	}
	cap = append(cap, orb.Point{180, 90}, orb.Point{-180, 90}, orb.Point{-180, 80})
	across := orb.Polygon{{{179, -17}, {-179, -17}, {-179, -16}, {179, -16}, {179, -17}}}
	line := orb.Polygon{{{5, 5}, {6, 6}, {5, 5}}}
	lake := NewMask([]orb.MultiPolygon{{{{{10.05, 50.05}, {10.15, 50.05}, {10.15, 50.15}, {10.05, 50.15}, {10.05, 50.05}}}}})
	all := NewMask([]orb.MultiPolygon{{{{{9, 49}, {11, 49}, {11, 51}, {9, 51}, {9, 49}}}}})
	for _, c := range []struct {
		name      string
		g         orb.MultiPolygon
		masks     *Mask
		check     func(t *testing.T, r Result)
		onOutline bool
	}{
		{"box", orb.MultiPolygon{square}, nil, nil, false},
		{"triangles", orb.MultiPolygon{sliver}, nil, nil, false},
		{"grid", orb.MultiPolygon{crossing}, nil, func(t *testing.T, r Result) {
			if !r.EvenOdd {
				t.Errorf("bow tie not filled by the even-odd rule")
			}
		}, false},
		{"polar cap", orb.MultiPolygon{{cap}}, nil, nil, false},
		{"across the antimeridian", orb.MultiPolygon{across}, nil, nil, false},
		{"masked", orb.MultiPolygon{square}, lake, func(t *testing.T, r Result) {
			if r.MaskIgnored {
				t.Errorf("the lake covers a quarter of the square; masks ignored")
			}
		}, false},
		{"masks ignored", orb.MultiPolygon{square}, all, func(t *testing.T, r Result) {
			if !r.MaskIgnored {
				t.Errorf("the mask covers the square; masks not ignored")
			}
		}, false},
		{"outline", orb.MultiPolygon{line}, nil, func(t *testing.T, r Result) {
			if !r.NoArea {
				t.Errorf("a line has no area; NoArea not set")
			}
		}, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			f := &geo.Feature{ID: c.name, Geometry: c.g}
			if m := c.name; m == "box" || m == "triangles" || m == "grid" {
				if got := NewShape(c.g).parts[0].method.String(); got != m {
					t.Fatalf("the part is sampled by %s, not %s", got, m)
				}
			}
			opt := Options{PeoplePerDot: 1, Seed: 11, Masks: c.masks}
			dots := []int{700, 300}
			type dot struct {
				cat int
				p   orb.Point
			}
			var want []dot
			rn := FeatureN(f, dots, opt, func(cat int, p orb.Point) { want = append(want, dot{cat, p}) })
			i := 0
			r := FeatureNSin(f, dots, opt, func(cat int, p orb.Point, sinLat float64) {
				if i >= len(want) || want[i].cat != cat || want[i].p != p {
					t.Fatalf("dot %d: FeatureNSin (%d, %v), FeatureN %v", i, cat, p, want[min(i, len(want)-1)])
				}
				i++
				if !(sinLat >= -1 && sinLat <= 1) {
					t.Fatalf("dot %v: sinLat %v", p, sinLat)
				}
				if c.onOutline {
					if sinLat != math.Sin(p[1]*degToRad) {
						t.Fatalf("outline dot %v: sinLat %v, sin of its latitude %v", p, sinLat, math.Sin(p[1]*degToRad))
					}
					return
				}
				if lat := math.Asin(sinLat) / degToRad; lat != p[1] {
					t.Fatalf("dot %v: asin(sinLat %v) = %v°, not its latitude", p, sinLat, lat)
				}
				// The draw and the sine of the rounded latitude agree to
				// rounding (φ's rounding, 1.1e-16 rad relative, scaled by
				// cos φ, plus sin's own).
				if d := math.Abs(sinLat - math.Sin(p[1]*degToRad)); d > 1e-15 {
					t.Fatalf("dot %v: sinLat %v is %.3g from sin(latitude)", p, sinLat, d)
				}
			})
			if i != len(want) || r.Dots[0]+r.Dots[1] != 1000 || rn.Problem != r.Problem {
				t.Fatalf("FeatureNSin gave %d dots (%v, %q), FeatureN %d (%v, %q)", i, r.Dots, r.Problem, len(want), rn.Dots, rn.Problem)
			}
			if c.check != nil {
				c.check(t, r)
			}
		})
	}
}
