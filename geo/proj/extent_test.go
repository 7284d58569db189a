package proj

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
)

// ForExtent's choices (rules in its doc comment; the one-sixth rule for
// standard parallels is common practice).
func TestForExtent(t *testing.T) {
	nan := math.NaN()
	for _, c := range []struct {
		name                   string
		b                      orb.Bound
		kind                   string // "aea", "laea" or "eqearth"
		lat0, lon0, lat1, lat2 float64
	}{
		{"city", bound(-77.2, 38.8, -76.9, 39.0), "aea", 38.9, -77.05, 38.8 + 0.2/6, 39 - 0.2/6},
		{"continent-sized, northern", bound(-125, 24, -66, 50), "aea", 37, -95.5, 24 + 26.0/6, 50 - 26.0/6},
		{"southern", bound(113, -44, 154, -10), "aea", -27, 133.5, -44 + 34.0/6, -10 - 34.0/6},
		{"touches the equator from the north", bound(30, -1, 40, 30), "aea", 14.5, 35, -1 + 31.0/6, 30 - 31.0/6},
		{"crosses the antimeridian", bound(170, -20, -170, -10), "aea", -15, 180, -20 + 10.0/6, -10 - 10.0/6},
		{"exactly 90° wide", bound(0, 40, 90, 60), "aea", 50, 45, 40 + 20.0/6, 60 - 20.0/6},
		{"near the north pole", bound(-30, 60, 40, 82), "laea", 71, 5, 0, 0},
		{"near the south pole", bound(-70, -85, -50, -60), "laea", -72.5, -60, 0, 0},
		{"reaches the north pole", bound(-10, 50, 10, 90), "laea", 90, 0, 0, 0},
		{"around the north pole", bound(-180, 70, 180, 85), "laea", 90, 0, 0, 0},
		{"antarctic", bound(-180, -90, 180, -60), "laea", -90, 0, 0, 0},
		{"latitude clamped to the pole", bound(-10, 50, 10, 95), "laea", 90, 0, 0, 0},
		{"wider than 90°", bound(-170, 20, -50, 70), "laea", 45, -110, 0, 0},
		{"straddles the equator widely", bound(-80, -20, -40, 10), "laea", -5, -60, 0, 0},
		{"small, on the equator", bound(30, -0.3, 30.5, 0.3), "laea", 0, 30.25, 0, 0},
		{"a point on the equator", bound(12, 0, 12, 0), "laea", 0, 12, 0, 0},
		{"world", bound(-180, -90, 180, 90), "eqearth", 0, 0, 0, 0},
		{"a hemisphere wide, no pole", bound(-170, -40, 0, 60), "eqearth", 0, -85, 0, 0},
		{"the US with the Aleutians, across 180°", bound(172.4, 18.9, -66.9, 71.4), "laea", 45.15, -127.25, 0, 0},
		{"NaN", bound(nan, 0, 10, 10), "laea", 0, 0, 0, 0},
	} {
		p := ForExtent(c.b)
		switch q := p.(type) {
		case *Albers:
			if c.kind != "aea" {
				t.Errorf("%s: got %v, want %s", c.name, p, c.kind)
				continue
			}
			if q.ell != WGS84 || !approx(q.lat0, c.lat0) || !approx(q.lon0, c.lon0) || !approx(q.lat1, c.lat1) || !approx(q.lat2, c.lat2) {
				t.Errorf("%s: got %v, want lat0 %v lon0 %v lat1 %v lat2 %v", c.name, p, c.lat0, c.lon0, c.lat1, c.lat2)
			}
		case *LAEA:
			if c.kind != "laea" || q.ell != WGS84 || !approx(q.lat0, c.lat0) || !approx(q.lon0, c.lon0) {
				t.Errorf("%s: got %v, want %s lat0 %v lon0 %v", c.name, p, c.kind, c.lat0, c.lon0)
			}
		case *EqualEarth:
			if c.kind != "eqearth" || !approx(q.lon0, c.lon0) {
				t.Errorf("%s: got %v, want %s lon0 %v", c.name, p, c.kind, c.lon0)
			}
		default:
			t.Errorf("%s: got %T %v", c.name, p, p)
		}
	}
}

// Whatever ForExtent picks is equal-area and close to true scale at the
// extent's centre: h·k = 1 (Snyder §14, §24) and k within 2 % of 1.
func TestForExtentScaleAtCentre(t *testing.T) {
	for _, b := range []orb.Bound{
		bound(-77.2, 38.8, -76.9, 39.0), bound(-125, 24, -66, 50), bound(113, -44, 154, -10),
		bound(-30, 60, 40, 82), bound(-80, -20, -40, 10), bound(170, -20, -170, -10),
	} {
		p := ForExtent(b)
		lon, lat := (b.Min[0]+b.Max[0])/2, (b.Min[1]+b.Max[1])/2
		if b.Min[0] > b.Max[0] {
			lon = wrapDeg(lon + 180)
		}
		h, k := ScaleAt(p, lon, lat)
		if !approx(h*k, 1) || math.Abs(k-1) > 0.02 {
			t.Errorf("%v: %v at centre (%v, %v): h = %v, k = %v", b, p, lon, lat, h, k)
		}
	}
}

func bound(w, s, e, n float64) orb.Bound {
	return orb.Bound{Min: orb.Point{w, s}, Max: orb.Point{e, n}}
}

func approx(a, b float64) bool { return math.Abs(a-b) < 1e-9 }
