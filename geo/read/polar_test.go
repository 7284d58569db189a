package read

import (
	"math"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/reftool"
)

// polarRing is an invented ring round the South Pole along 70°S, every 30°
// of longitude, closed straight back from 150° to -180° the way some files
// ship polar rings (no stretch along the pole line).
func polarRing() orb.Ring {
	var r orb.Ring
	for lon := -180.0; lon < 180; lon += 30 {
		r = append(r, orb.Point{lon, -70})
	}
	return append(r, r[0])
}

// TestPolarRingClosedAlongPole: the ring is cut at ±180 and closed along
// -90°, so it holds the polar cap south of 70°S, whose area is
// 2πR²(1 − sin 70°) (zone area on the sphere, textbook; CHECKS.md
// "Sphere geometry"); the note says how much area moved.
func TestPolarRingClosedAlongPole(t *testing.T) {
	res := &Result{Layer: &geo.Layer{Path: "polar.geojson", Features: []geo.Feature{
		{Index: 0, ID: "cap", Geometry: orb.MultiPolygon{{polarRing()}}},
	}}}
	Repair(res)
	if res.Repairs.PolarRings != 1 || res.Repairs.Antimeridian != 0 || res.Repairs.SelfIntersecting != 0 {
		t.Fatalf("repairs %+v, notes %q", res.Repairs, res.Notes)
	}
	r := res.Layer.Features[0].Geometry[0][0]
	cap := 2 * math.Pi * authalicR * authalicR * (1 - math.Sin(70*math.Pi/180))
	if got := planeArea(r); math.Abs(got-cap) > 1e-6*cap {
		t.Errorf("repaired ring holds %.0f km², polar cap %.0f km²: %v", got, cap, r)
	}
	for _, p := range r {
		if p[0] < -180 || p[0] > 180 {
			t.Fatalf("longitude %g outside [-180, 180]: %v", p[0], r)
		}
	}
	if jumps(r) {
		t.Error("the repaired ring still jumps")
	}
	// As given, the even-odd fill of the ring is the thin sliver between the
	// 30° chords and the closing edge: almost none of the cap.
	given := planeArea(polarRing())
	note := strings.Join(res.Notes, "\n")
	want := "closed along -90° latitude, which moved"
	if !strings.Contains(note, "south pole") || !strings.Contains(note, want) || !strings.Contains(note, "km²") {
		t.Fatalf("note %q lacks %q", note, want)
	}
	t.Logf("as given %.0f km², repaired %.0f km²: %s", given, planeArea(r), note)
}

// TestPoleLineIsNoJump: a ring that already runs along the pole line from
// 180 to -180 (RFC 7946 leaves the pole as a line in lon/lat) is valid and
// not reported as crossing the antimeridian; the shared world-110m
// Antarctica (closed along -90°, ../shared/data/README.md) neither.
func TestPoleLineIsNoJump(t *testing.T) {
	r := orb.Ring{{-180, -70}, {0, -65}, {180, -70}, {180, -90}, {-180, -90}, {-180, -70}}
	if jumps(r) {
		t.Error("edge along the pole line reported as a jump")
	}
	if _, _, ok := closeAtPole(r); ok {
		t.Error("ring closed along the pole repaired again")
	}
	res, err := File(reftool.SharedData(t, "world-110m.geojson"), Options{IDField: "name"})
	if err != nil {
		t.Fatal(err)
	}
	for _, n := range res.Notes {
		if strings.Contains(n, "Antarctica") {
			t.Errorf("note on Antarctica: %s", n)
		}
	}
	found := false
	for _, f := range res.Layer.Features {
		if f.ID == "Antarctica" {
			found = len(f.Geometry) > 0
		}
	}
	if !found {
		t.Error("Antarctica missing or empty")
	}
}
