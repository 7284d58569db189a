package theme

import "testing"

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
