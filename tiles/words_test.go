package tiles

import (
	"os"
	"slices"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/render/theme"
	"github.com/stipple-maps/stipple/render/theme/themetest"
)

// TestAltAndMethodsTakeTheThemesWords: with a theme whose every text is
// marked («xx», upper-cased), alt.txt and methods.txt of maps that reach
// every branch of both hold each marked text they use, and none of the
// English sentences; between them the cases use every alt_, methods_,
// latitude_ and longitude_ key.
func TestAltAndMethodsTakeTheThemesWords(t *testing.T) {
	tx := themetest.Marked("«xx»")
	th := theme.Default()
	th.Text = tx
	f := func(v float64) *float64 { return &v }
	rich := &Metadata{
		Title: "Home languages of an invented town", Credit: "Invented counts", Version: "9.9.9", Theme: th,
		Bounds: [4]float64{-128.56, -34.36, -128.26, -34.09}, PeoplePerDot: 10, Seed: 7, Caution: tx.Caution,
		Categories: []Category{{Label: "Orvesh", People: 750}, {Label: "Tamsic", People: 250}},
		NotDrawn:   NotDrawn{People: 20, RowsWithoutArea: 5, BeyondTileLimit: 30},
		Measures: &Measures{H: f(0.25), M: f(0.1), AreaTable: "areas.csv",
			Intervals: &MeasureIntervals{Level: 0.9, Draws: 200, Seed: 4, H: [2]*float64{f(0.2), f(0.3)}}},
		Methods: &Methods{Source: th.CreditLine("Invented counts"), PeoplePerDot: 10, Seed: 7, Rounding: "random",
			RoundingRule: tx.MethodsRoundingRandom, People: 1000, Dots: 100, Groups: 2,
			NotDrawn: []MethodsNotDrawn{{Reason: "the feature has people but no area", Areas: 2, People: 20},
				{Reason: tx.MethodsBeyondLimit, People: 30}, {Reason: tx.MethodsRowsWithoutArea, People: 5}},
			GeometryNotes: 9, Repairs: map[string]int{"closed_rings": 1, "dropped_points": 2, "dropped_rings": 3,
				"self_intersecting": 4, "antimeridian": 5, "polar_rings": 6, "empty_features": 7}, Caution: tx.Caution},
	}
	bare := &Metadata{
		Theme: th, Bounds: [4]float64{12.5, 45.25, 12.75, 45.5}, PeoplePerDot: 1, Caution: tx.Caution,
		Categories: []Category{{Label: "Everyone", People: 40}},
		Methods:    &Methods{PeoplePerDot: 1, Rounding: "exact", RoundingRule: tx.MethodsRoundingExact, People: 40, Dots: 40, Groups: 1, Caution: tx.Caution},
	}
	one := *bare
	one.Layer, one.LayerLabel = "2031", "Count of 2031"
	one.Methods = &Methods{PeoplePerDot: 1, Groups: 3, NotDrawn: []MethodsNotDrawn{{Reason: "the feature has people but no area", Areas: 1, People: 4}},
		GeometryNotes: 1, Repairs: map[string]int{"closed_rings": 1}, Caution: tx.Caution}
	two := one
	two.Layer, two.LayerLabel = "", ""
	two.Methods = &Methods{PeoplePerDot: 1, Groups: 3, GeometryNotes: 2, Repairs: map[string]int{}, Caution: tx.Caution}
	for _, c := range []struct {
		name          string
		maps          []*Metadata
		alt, methods  []string // keys whose marked text each must hold
		methodsOfMaps int      // which map the methods note is of
	}{
		{"rich", []*Metadata{rich},
			[]string{"alt_title", "alt_dots", "alt_groups", "alt_group", "alt_not_drawn", "alt_beyond_limit", "alt_theil_h",
				"alt_mutual_information", "alt_interval", "alt_covers", "longitude_west", "latitude_south", "caution", "credit_prefix"},
			[]string{"methods_title", "credit_prefix", "methods_totals", "dot_note", "methods_groups", "methods_placement",
				"methods_rounding", "methods_rounding_random", "methods_not_drawn", "methods_not_drawn_in", "methods_areas",
				"methods_not_drawn_row", "methods_beyond_limit", "methods_rows_without_area", "methods_repairs",
				"methods_repairs_count", "methods_notes_count", "methods_repair_closed_rings", "methods_repair_dropped_points",
				"methods_repair_dropped_rings", "methods_repair_self_intersecting", "methods_repair_antimeridian",
				"methods_repair_polar_rings", "methods_repair_empty_features", "methods_measures", "methods_theil_h",
				"methods_mutual_information", "methods_interval", "methods_evenness", "methods_caution", "caution", "methods_made_with"}, 0},
		{"untitled, one person a dot, one group", []*Metadata{bare},
			[]string{"alt_title", "alt_untitled", "alt_dots_one", "alt_one_group", "alt_covers", "longitude_east", "latitude_north"},
			[]string{"methods_title", "methods_untitled", "methods_no_source", "methods_totals", "dot_note_one", "methods_groups_one",
				"methods_rounding", "methods_rounding_exact", "methods_all_drawn", "methods_no_repairs", "methods_caution"}, 0},
		{"viewer of two, one repair", []*Metadata{&one, &two},
			[]string{"alt_viewer", "alt_map_number_named", "alt_map_number", "alt_title", "alt_dots_one"},
			[]string{"methods_not_drawn_in", "methods_areas_one", "methods_repairs", "methods_repairs_count_one",
				"methods_notes_count_one", "methods_repair_closed_rings"}, 0},
		{"notes without repairs", []*Metadata{&two}, nil,
			[]string{"methods_repairs_no_kinds", "methods_repairs_count", "methods_notes_count"}, 0},
	} {
		alt := AltText(c.maps...)
		methods := MethodsText(c.maps[c.methodsOfMaps])
		for _, o := range []struct {
			file, text string
			keys       []string
		}{{AltFile, alt, c.alt}, {MethodsFile, methods, c.methods}} {
			if m := themetest.Missing(o.text, tx, o.keys...); len(m) != 0 {
				t.Errorf("%s: %s lacks %q:\n%s", c.name, o.file, m, o.text)
			}
			if e := themetest.English(o.text); len(e) != 0 {
				t.Errorf("%s: %s holds English %q:\n%s", c.name, o.file, e, o.text)
			}
		}
	}
	// The figures sit where the marked words put them.
	alt, methods := AltText(rich), MethodsText(rich)
	for _, want := range []string{
		"«xx» DOT-DENSITY MAP: Home languages of an invented town.",
		"«xx» 2 GROUPS, 1,000 PEOPLE IN ALL: «xx» Orvesh, 750 PEOPLE (75.0%); «xx» Tamsic, 250 PEOPLE (25.0%).",
		"«xx» THE MAP COVERS LONGITUDES «xx» 128.56°W TO «xx» 128.26°W AND LATITUDES «xx» 34.36°S TO «xx» 34.09°S.",
		"MARGINS OF ERROR, 90% OF THE VALUES OF H LIE BETWEEN 0.200 AND 0.300.",
		"«xx» SOURCE: Invented counts.",
	} {
		if !strings.Contains(alt, want) {
			t.Errorf("alt.txt lacks %q:\n%s", want, alt)
		}
	}
	for _, want := range []string{
		"«xx» ABOUT THE MAP: Home languages of an invented town\n\n«xx» SOURCE: Invented counts\n\n",
		"«xx» «xx» 1 DOT = 10 PEOPLE. THE MAP SHOWS 1,000 PEOPLE IN «xx» 2 GROUPS WITH 100 DOTS.\n",
		"- «xx» 20 PEOPLE IN «xx» 2 AREAS: the feature has people but no area\n",
		"(«xx» RINGS CLOSED 1, «xx» REPEATED POINTS DROPPED 2, ",
		"\n«xx» MADE WITH STIPPLE 9.9.9.\n",
	} {
		if !strings.Contains(methods, want) {
			t.Errorf("methods.txt lacks %q:\n%s", want, methods)
		}
	}
}

// TestWordsCasesCoverTheKeys keeps the table above whole: every key of
// the alt text and methods note, and the four hemisphere forms, is in
// some case's list.
func TestWordsCasesCoverTheKeys(t *testing.T) {
	src, err := os.ReadFile("words_test.go")
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range themetest.Keys() {
		if !slices.ContainsFunc([]string{"alt_", "methods_", "latitude_", "longitude_"}, func(p string) bool { return strings.HasPrefix(k, p) }) {
			continue
		}
		if !strings.Contains(string(src), `"`+k+`"`) {
			t.Errorf("no case of TestAltAndMethodsTakeTheThemesWords uses %s", k)
		}
	}
}

// TestTileJSONCreditTakesTheThemesPrefix: tilejson.json's attribution is
// the credit after the theme's prefix, and so is the one publish writes
// from map.json (which keeps no theme but the methods block's source).
func TestTileJSONCreditTakesTheThemesPrefix(t *testing.T) {
	th := theme.Default()
	th.Text.CreditPrefix = "Quelle: "
	m := &Metadata{Title: "T", Credit: "Amt & Co", Tiles: TilesTemplate, Theme: th}
	if got := TileJSONOf(m, "").Attribution; got != "Quelle: Amt &amp; Co" {
		t.Errorf("attribution %q; want the theme's prefix, escaped", got)
	}
	m.Methods = &Methods{Source: th.CreditLine(m.Credit)}
	m.Theme = nil
	if got := TileJSONOf(m, "").Attribution; got != "Quelle: Amt &amp; Co" {
		t.Errorf("attribution from map.json %q; want the methods source", got)
	}
	m.Methods = nil
	if got := TileJSONOf(m, "").Attribution; got != "Source: Amt &amp; Co" {
		t.Errorf("attribution without theme or methods %q; want the English prefix", got)
	}
}
