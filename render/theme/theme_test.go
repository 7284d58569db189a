package theme

import (
	"reflect"
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

// TestFieldsCoverText: every field of Text has its TOML key in the list
// that Merge and Check walk, pointing at that field, and a default.
func TestFieldsCoverText(t *testing.T) {
	var tx Text
	v := reflect.ValueOf(&tx).Elem()
	for i := range v.NumField() {
		f := v.Type().Field(i)
		key := strings.Split(f.Tag.Get("toml"), ",")[0]
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

func (t Text) withField(key, v string) Text {
	*t.field(key) = v
	return t
}
