package theme

import (
	"reflect"
	"regexp"
	"slices"
	"strings"
	"testing"
)

func TestCheckPlaceholders(t *testing.T) {
	for _, c := range []struct {
		text    Text
		wantKey string
	}{
		{DefaultText, ""},
		{Text{DotNote: "1 dot = many"}, "dot_note"},
		{Text{NotDrawn: "{people} people are not drawn"}, "not_drawn"},
		{Text{Scale: "Scale 1 : {denominator}"}, "scale"},
		{Text{People: "Personen"}, ""},
		{Text{ViewerShare: "de tous"}, "viewer_share"},
		{Text{ViewerShare: "{share} de tous"}, ""},
		// Language tags: RFC 5646, section 2.1 (langtag: subtags of 1-8
		// letters or digits joined by "-").
		{Text{ViewerLanguage: "fr-CA"}, ""},
		{Text{ViewerLanguage: "de-CH-1901"}, ""},
		{Text{ViewerLanguage: "en\" onload=\"x"}, "viewer_language"},
		{Text{ViewerLanguage: "fr_FR"}, "viewer_language"},
		// The keys of the alt text, methods note and print notes.
		{Text{AltCovers: "Die Karte reicht von {west} bis {east}."}, "alt_covers"},
		{Text{AltCovers: "Von {west} bis {east}, von {south} bis {north}."}, ""},
		{Text{MethodsRepairs: "Reparaturen: {repairs}; {notes}."}, "methods_repairs"},
		{Text{MethodsRepairsNoKinds: "Reparaturen: {repairs}; {notes}."}, ""},
		{Text{LatitudeNorth: "N"}, "latitude_north"},
		{Text{PrintFramePeople: "{dots} Punkte × {n}"}, "print_frame_people"},
		{Text{ProjectionAlbers: "Albers, {parallel1}"}, "projection_albers"},
		{Text{MethodsMadeWith: "Mit stipple gemacht."}, "methods_made_with"},
		{Text{MethodsTitle: "Über die Karte: {title}", AltUntitled: "ohne Titel"}, ""},
	} {
		key, err := c.text.Check()
		if key != c.wantKey || (err == nil) != (c.wantKey == "") {
			t.Errorf("Check(%+v) = %q, %v; want key %q", c.text, key, err, c.wantKey)
		}
	}
	// Every default text keeps its placeholders, and Fill replaces them all.
	got := Fill(DefaultText.NotDrawn, "people", "1,200", "dots", "120")
	if got != "1,200 people (120 dots) are not drawn; map.json lists the areas and why." {
		t.Errorf("Fill = %q", got)
	}
	if (*Theme)(nil).DotNote(1) != "1 dot = 1 person" || (*Theme)(nil).DotNote(2.5) != "1 dot = 2.5 people" {
		t.Errorf("nil theme dot notes wrong")
	}
}

// TestFieldsCoverText: every field of Text is a string with its own
// snake_case TOML key, in the list that Merge and Check walk, pointing at
// that field, and has a default.
func TestFieldsCoverText(t *testing.T) {
	var tx Text
	v := reflect.ValueOf(&tx).Elem()
	snake := regexp.MustCompile(`^[a-z]+(_[a-z0-9]+)*$`)
	seen := map[string]string{}
	for i := range v.NumField() {
		f := v.Type().Field(i)
		key := strings.Split(f.Tag.Get("toml"), ",")[0]
		if f.Type.Kind() != reflect.String || !snake.MatchString(key) {
			t.Errorf("field %s: %s with TOML key %q; want a string with a snake_case key", f.Name, f.Type, key)
			continue
		}
		if other, ok := seen[key]; ok {
			t.Errorf("fields %s and %s share the key %q", other, f.Name, key)
		}
		seen[key] = f.Name
		if tx.field(key) != v.Field(i).Addr().Interface().(*string) {
			t.Errorf("field %s: key %q points elsewhere", f.Name, key)
		}
		if reflect.ValueOf(DefaultText).Field(i).String() == "" {
			t.Errorf("field %s has no default", f.Name)
		}
		if got := (Text{}).Merge(Text{}.withField(key, "x")); *got.field(key) != "x" {
			t.Errorf("Merge drops %s", key)
		}
	}
}

// TestPlaceholdersListed: Placeholders names, for every key, exactly the
// placeholders of its default text, so Check refuses a translation that
// drops a number or a name; only the viewer's map label and still alt may
// leave out the title. Every key of Placeholders is a key of Text.
func TestPlaceholdersListed(t *testing.T) {
	optional := map[string]bool{"viewer_map_label": true, "viewer_still_alt": true}
	ph := regexp.MustCompile(`\{[a-z0-9_]+\}`)
	keys := map[string]bool{}
	for _, f := range DefaultText.fields() {
		keys[f.key] = true
		got := ph.FindAllString(*f.p, -1)
		slices.Sort(got)
		want := slices.Clone(Placeholders[f.key])
		slices.Sort(want)
		if optional[f.key] {
			if len(want) != 0 || len(got) == 0 {
				t.Errorf("%s: placeholders %v, listed %v; want its title optional", f.key, got, want)
			}
			continue
		}
		if !slices.Equal(got, want) {
			t.Errorf("%s: the default %q holds %v; Placeholders lists %v", f.key, *f.p, got, want)
		}
	}
	for k := range Placeholders {
		if !keys[k] {
			t.Errorf("Placeholders lists %q, which Text has not", k)
		}
	}
}

func (t Text) withField(key, v string) Text {
	*t.field(key) = v
	return t
}
