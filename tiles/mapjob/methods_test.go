package mapjob

import (
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/read"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// smallEdited copies testdata/small with its areas file edited as JSON:
// area "010" (null geometry) gets 50 people, so they cannot be drawn, and
// area "007"'s ring is left open, so the reader closes it and notes it.
func smallEdited(t *testing.T) (*mapfile.Map, float64) {
	t.Helper()
	dir := t.TempDir()
	raw, err := os.ReadFile("../../testdata/small/areas.geojson")
	if err != nil {
		t.Fatal(err)
	}
	var fc map[string]any
	if err := json.Unmarshal(raw, &fc); err != nil {
		t.Fatal(err)
	}
	people := 0.0
	for _, f := range fc["features"].([]any) {
		f := f.(map[string]any)
		p := f["properties"].(map[string]any)
		switch p["code"] {
		case "010":
			p["north"] = 50.0
		case "007":
			g := f["geometry"].(map[string]any)
			ring := g["coordinates"].([]any)[0].([]any)
			g["coordinates"].([]any)[0] = ring[:len(ring)-1]
		}
		for _, k := range []string{"north", "south"} {
			n, err := geo.Number(p[k])
			if err != nil {
				t.Fatal(err)
			}
			people += n
		}
	}
	out, _ := json.Marshal(fc)
	if err := os.WriteFile(filepath.Join(dir, "areas.geojson"), out, 0o644); err != nil {
		t.Fatal(err)
	}
	src, err := os.ReadFile("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "map.toml"), src, 0o644); err != nil {
		t.Fatal(err)
	}
	m, err := mapfile.Read(filepath.Join(dir, "map.toml"))
	if err != nil {
		t.Fatal(err)
	}
	m.Out = filepath.Join(dir, "out")
	return m, people
}

// TestMethodsNote renders the edited small map and reads methods.txt and
// map.json's methods block: the credit, dot value, seed and rounding rule
// from the map file, the people summed from the areas file, the 50 people
// of the area without a polygon as not drawn, the one repair (an open ring
// closed, as README's "Geometry repairs" promises) and the caution.
func TestMethodsNote(t *testing.T) {
	m, people := smallEdited(t)
	sum, err := Run(context.Background(), m, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(filepath.Join(m.Out, tiles.MetadataFile))
	if err != nil {
		t.Fatal(err)
	}
	var md struct {
		Methods tiles.Methods `json:"methods"`
	}
	if err := json.Unmarshal(raw, &md); err != nil {
		t.Fatal(err)
	}
	me := md.Methods
	dots := 0
	for _, d := range sum.Dots {
		dots += d
	}
	if me.Source != "Source: Invented test data" || me.PeoplePerDot != 5 || me.Seed != 3 || me.Rounding != "random" || me.Groups != 2 {
		t.Errorf("methods %+v", me)
	}
	if me.People != people || me.People != 5415.5 {
		t.Errorf("people %v, want %v (summed from the areas file)", me.People, people)
	}
	if me.Dots != dots {
		t.Errorf("dots %d, want the run's %d", me.Dots, dots)
	}
	if len(me.NotDrawn) != 1 || me.NotDrawn[0].People != 50 || me.NotDrawn[0].Areas != 1 {
		t.Fatalf("not drawn %+v, want 50 people in 1 area", me.NotDrawn)
	}
	res, err := read.File(m.Resolve(m.Input.File), read.Options{IDField: "code"})
	if err != nil {
		t.Fatal(err)
	}
	if me.GeometryNotes != len(res.Notes) || me.Repairs["closed_rings"] != 1 || me.Repairs["empty_features"] != 1 {
		t.Errorf("geometry notes %d, repairs %v; want the open ring closed", me.GeometryNotes, me.Repairs)
	}
	txt, err := os.ReadFile(filepath.Join(m.Out, tiles.MethodsFile))
	if err != nil {
		t.Fatal(err)
	}
	text := string(txt)
	for _, want := range []string{
		"Source: Invented test data",
		"1 dot = 5 people. The map shows 5,415.5 people in 2 groups with " + render.FormatCount(float64(dots)) + " dots.",
		"seeded with 3",
		"Rounding: each area gets its people divided by the dot value",
		"- 50 people in 1 area: " + me.NotDrawn[0].Reason,
		"Repairs: 2 repairs made while reading the area boundaries (rings closed 1, areas without a polygon 1)",
		"Caution: " + render.Caution,
	} {
		if !strings.Contains(text, want) {
			t.Errorf("methods.txt lacks %q:\n%s", want, text)
		}
	}
	if strings.Contains(text, "Source: Source:") {
		t.Error("credit prefixed twice")
	}
}
