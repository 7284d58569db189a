package tiles

import (
	"context"
	"encoding/json"
	"math"
	"regexp"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/tiles/sink"
)

// semver is the version syntax of semver.org 2.0.0 (major.minor.patch
// with optional pre-release and build parts), which TileJSON 3.0.0 §3.1
// and §3.17 ask for.
var semver = regexp.MustCompile(`^(0|[1-9]\d*)\.(0|[1-9]\d*)\.(0|[1-9]\d*)(-[0-9A-Za-z.-]+)?(\+[0-9A-Za-z.-]+)?$`)

// checkTileJSON checks a descriptor against the TileJSON 3.0.0
// specification (github.com/mapbox/tilejson-spec, 3.0.0/README.md; the
// section numbers and wording from memory): the required members and the
// type and range of every member stipple writes.
func checkTileJSON(t *testing.T, raw []byte) map[string]any {
	t.Helper()
	var j map[string]any
	if err := json.Unmarshal(raw, &j); err != nil {
		t.Fatalf("not JSON: %v", err)
	}
	str := func(key string, required bool) string {
		v, ok := j[key]
		if !ok {
			if required {
				t.Errorf("%s: required member missing", key)
			}
			return ""
		}
		s, ok := v.(string)
		if !ok {
			t.Errorf("%s: %T, want a string", key, v)
		}
		return s
	}
	num := func(key string) float64 {
		v, ok := j[key].(float64)
		if !ok {
			t.Errorf("%s: %T, want a number", key, j[key])
		}
		return v
	}
	nums := func(key string, n int) []float64 {
		a, ok := j[key].([]any)
		if !ok || len(a) != n {
			t.Errorf("%s: %v, want an array of %d numbers", key, j[key], n)
			return make([]float64, n)
		}
		out := make([]float64, n)
		for i, v := range a {
			if out[i], ok = v.(float64); !ok {
				t.Errorf("%s[%d]: %T, want a number", key, i, v)
			}
		}
		return out
	}
	// §3.1 tilejson: REQUIRED, a semver string naming the spec version.
	if v := str("tilejson", true); !semver.MatchString(v) || v != "3.0.0" {
		t.Errorf("tilejson %q, want the semver string 3.0.0", v)
	}
	// §3.2 tiles: REQUIRED, an array of at least one endpoint string;
	// {z}, {x}, {y} are replaced by integers.
	ts, ok := j["tiles"].([]any)
	if !ok || len(ts) == 0 {
		t.Fatalf("tiles: %v, want an array of at least one string", j["tiles"])
	}
	for _, v := range ts {
		s, ok := v.(string)
		if !ok || !strings.Contains(s, "{z}") || !strings.Contains(s, "{x}") || !strings.Contains(s, "{y}") {
			t.Errorf("tiles: endpoint %v lacks {z}/{x}/{y}", v)
		}
	}
	// §3.3 vector_layers is required for vector tiles only; these are
	// raster tiles, so it must not claim any.
	if _, ok := j["vector_layers"]; ok {
		t.Error("vector_layers written for raster tiles")
	}
	// §3.13, §3.12 minzoom and maxzoom: integers 0–30, minzoom ≤ maxzoom.
	minz, maxz := num("minzoom"), num("maxzoom")
	for _, z := range []float64{minz, maxz} {
		if z != math.Trunc(z) || z < 0 || z > 30 {
			t.Errorf("zoom %v: want an integer 0–30", z)
		}
	}
	if minz > maxz {
		t.Errorf("minzoom %v > maxzoom %v", minz, maxz)
	}
	// §3.5 bounds: left, bottom, right, top in WGS 84 degrees, longitudes
	// within ±180 and latitudes within ±90, not wrapping around the
	// antimeridian (so left ≤ right).
	b := nums("bounds", 4)
	if b[0] < -180 || b[2] > 180 || b[1] < -90 || b[3] > 90 || b[0] > b[2] || b[1] > b[3] {
		t.Errorf("bounds %v: want left ≤ right within ±180, bottom ≤ top within ±90", b)
	}
	// §3.6 center: longitude, latitude, integer zoom; the point within the
	// bounds and the zoom between minzoom and maxzoom.
	c := nums("center", 3)
	if c[0] < b[0] || c[0] > b[2] || c[1] < b[1] || c[1] > b[3] {
		t.Errorf("center %v outside bounds %v", c, b)
	}
	if c[2] != math.Trunc(c[2]) || c[2] < minz || c[2] > maxz {
		t.Errorf("center zoom %v: want an integer in [%v, %v]", c[2], minz, maxz)
	}
	// §3.15 scheme: "xyz" or "tms"; §3.17 version: semver.
	if s := str("scheme", false); s != "xyz" {
		t.Errorf("scheme %q, want xyz (stipple's tiles count y from the north)", s)
	}
	if v := str("version", false); !semver.MatchString(v) {
		t.Errorf("version %q is not semver", v)
	}
	// §3.4 attribution, §3.8 description, §3.14 name: strings.
	str("attribution", false)
	str("description", false)
	str("name", false)
	return j
}

func TestTileJSONFollowsTheSpec(t *testing.T) {
	base := Metadata{
		Title: "Invented <i>map</i>", Credit: "Invented data & more", Tiles: TilesTemplate,
		MinZoom: 3, MaxZoom: 9, Bounds: [4]float64{-140.1, -30.2, -139.9, -29.8},
		Center: [3]float64{-140, -30, 7}, Note: "1 dot = 5 people", Caution: "a caution",
	}
	for _, tc := range []struct {
		name       string
		edit       func(m *Metadata)
		base       string
		wantBounds [4]float64
		wantTile   string
	}{
		{"plain", func(*Metadata) {}, "", [4]float64{-140.1, -30.2, -139.9, -29.8}, "{z}/{x}/{y}.png"},
		{"absolute endpoint", func(*Metadata) {}, "https://maps.example.org/lang/", [4]float64{-140.1, -30.2, -139.9, -29.8}, "https://maps.example.org/lang/{z}/{x}/{y}.png"},
		// A map across 180° given west > east: §3.5 forbids wrapping, so
		// it spans every longitude.
		{"across 180", func(m *Metadata) {
			m.Bounds = [4]float64{178.5, -18, -179.2, -16}
			m.Center = [3]float64{179.65, -17, 8}
		}, "", [4]float64{-180, -18, 180, -16}, "{z}/{x}/{y}.png"},
		// A centre zoom outside the zooms is pulled in (§3.6).
		{"centre zoom clamped", func(m *Metadata) { m.Center[2] = 12 }, "", [4]float64{-140.1, -30.2, -139.9, -29.8}, "{z}/{x}/{y}.png"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m := base
			tc.edit(&m)
			out := sink.NewDir(t.TempDir())
			if err := PutTileJSONAt(context.Background(), out, &m, tc.base); err != nil {
				t.Fatal(err)
			}
			raw, err := out.Get(context.Background(), TileJSONFile)
			if err != nil {
				t.Fatal(err)
			}
			j := checkTileJSON(t, raw)
			var got TileJSON
			if err := json.Unmarshal(raw, &got); err != nil {
				t.Fatal(err)
			}
			if got.Bounds != tc.wantBounds {
				t.Errorf("bounds %v, want %v", got.Bounds, tc.wantBounds)
			}
			if got.Tiles[0] != tc.wantTile {
				t.Errorf("tiles %q, want %q", got.Tiles[0], tc.wantTile)
			}
			// §3.4: the attribution may be shown as HTML, so markup in the
			// credit arrives escaped.
			if a := j["attribution"]; a != "Source: Invented data &amp; more" {
				t.Errorf("attribution %q", a)
			}
			if got.Name != m.Title || got.MinZoom != 3 || got.MaxZoom != 9 {
				t.Errorf("name %q zooms %d–%d", got.Name, got.MinZoom, got.MaxZoom)
			}
		})
	}
}
