package geo

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
)

// RFC 7946 §5.2: a bounding box crossing the antimeridian has west > east;
// its example is [177.0, -20.0, -178.0, -16.0] (Fiji-like islands). The
// smallest arc covering a set of longitude intervals is the circle less the
// largest gap between them (common practice for extents on the circle).

func box(w, s, e, n float64) orb.Bound {
	return orb.Bound{Min: orb.Point{w, s}, Max: orb.Point{e, n}}
}

func TestExtentOf(t *testing.T) {
	cases := []struct {
		name                     string
		bounds                   []orb.Bound
		west, south, east, north float64
		width, centreLon         float64
		wraps                    bool
	}{
		// RFC 7946 §3.1.9 parts cut at ±180 and §5.2's box.
		{"RFC 7946 §5.2 box from cut parts", []orb.Bound{box(177, -20, 180, -16), box(-180, -19, -178, -17)},
			177, -20, -178, -16, 5, 179.5, true},
		// A country with islands past the antimeridian: mainland -125..-66,
		// far islands -179.1..-130 and 172..179.8 (shapes invented).
		{"mainland with far islands", []orb.Bound{box(-125, 24, -66, 49), box(-179.1, 51, -130, 72), box(172, 52, 179.8, 53)},
			172, 24, -66, 72, 360 - 172 - 66, 172 + (360-172-66)/2 - 360, true},
		{"no wrap", []orb.Bound{box(-10, 35, 5, 44), box(8, 36, 19, 47)},
			-10, 35, 19, 47, 29, 4.5, false},
		{"world", []orb.Bound{box(-180, -90, 180, 84)}, -180, -90, 180, 84, 360, 0, false},
		{"around the circle in pieces", []orb.Bound{box(-180, 0, -60, 1), box(-70, 0, 60, 1), box(50, 0, 180, 1)},
			-180, 0, 180, 1, 360, 0, false},
		{"unwrapped part past 180", []orb.Bound{box(170, -5, 190, 5)}, 170, -5, -170, 5, 20, 180 - 360, true},
		{"single point", []orb.Bound{box(179, 1, 179, 1)}, 179, 1, 179, 1, 0, 179, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			e, ok := ExtentOf(c.bounds...)
			if !ok {
				t.Fatal("not ok")
			}
			near := func(a, b float64) bool { return math.Abs(a-b) < 1e-9 }
			if !near(e.West, c.west) || !near(e.South, c.south) || !near(e.East, c.east) || !near(e.North, c.north) {
				t.Fatalf("extent %v, want [%g, %g, %g, %g]", e, c.west, c.south, c.east, c.north)
			}
			if !near(e.Width(), c.width) || !near(e.Centre()[0], c.centreLon) {
				t.Errorf("width %g centre %v, want %g and lon %g", e.Width(), e.Centre(), c.width, c.centreLon)
			}
			if (e.West > e.East) != c.wraps {
				t.Errorf("wraps = %v, want %v", e.West > e.East, c.wraps)
			}
			// Every corner of every bound is contained.
			for _, b := range c.bounds {
				for _, p := range []orb.Point{b.Min, b.Max, {b.Min[0], b.Max[1]}, {b.Max[0], b.Min[1]}} {
					if !e.Contains(p[0], p[1]) {
						t.Errorf("Contains(%v) false", p)
					}
				}
			}
		})
	}
}

// TestExtentAleutians: bounds like a country whose islands reach past the
// antimeridian (parts at -179.1…-66 and 172…179.8, as the shared US
// counties' README describes 02016 and the layer extent) give west ≈ 172,
// east ≈ -66, and a centre in the middle of the country, not in Africa.
func TestExtentAleutians(t *testing.T) {
	e, _ := ExtentOf(box(-179.1, 18.9, -66, 71.4), box(172, 51.2, 179.8, 53))
	if e.West != 172 || e.East != -66 {
		t.Fatalf("extent %v, want west 172, east -66", e)
	}
	if c := e.Centre()[0]; !(c > -130 && c < -90) {
		t.Errorf("centre longitude %g, want between -130 and -90", c)
	}
	if got, want := e.String(), "[172, 18.9, -66, 71.4]"; got != want {
		t.Errorf("String %q, want %q (RFC 7946 §5 order west, south, east, north)", got, want)
	}
}

func TestExtentContainsAndUnion(t *testing.T) {
	wrap := Extent{West: 170, South: -10, East: -170, North: 10}
	for _, c := range []struct {
		lon, lat float64
		want     bool
	}{
		{180, 0, true}, {-180, 0, true}, {175, 5, true}, {-175, -5, true}, {540, 0, true},
		{0, 0, false}, {169, 0, false}, {-169, 0, false}, {175, 11, false},
	} {
		if got := wrap.Contains(c.lon, c.lat); got != c.want {
			t.Errorf("%v.Contains(%g, %g) = %v, want %v", wrap, c.lon, c.lat, got, c.want)
		}
	}
	plain := Extent{West: 100, South: 0, East: 180, North: 5}
	if !plain.Contains(-180, 1) || !plain.Contains(180, 1) {
		t.Error("180 and -180 are the same meridian")
	}
	// Union across the antimeridian keeps the short way round.
	u := Extent{West: 160, South: 0, East: 175, North: 1}.Union(Extent{West: -175, South: -3, East: -150, North: 2})
	if u.West != 160 || u.East != -150 || u.South != -3 || u.North != 2 || u.Width() != 50 {
		t.Errorf("union %v, want [160, -3, -150, 2] 50° wide", u)
	}
	if c := u.Centre()[0]; c != -175 {
		t.Errorf("union centre %g, want -175", c)
	}
	// Union of a wrapping extent with one filling its gap is the world.
	w := wrap.Union(Extent{West: -170, South: 0, East: 170, North: 1})
	if !w.Full() || w.Width() != 360 {
		t.Errorf("union %v, want the full circle", w)
	}
	if _, ok := ExtentOf(box(math.NaN(), 0, 1, 1)); ok {
		t.Error("NaN bound gave an extent")
	}
}
