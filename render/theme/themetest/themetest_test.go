package themetest

import (
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/render/theme"
)

func TestMarked(t *testing.T) {
	tx := Marked("«xx»")
	if key, err := tx.Check(); err != nil {
		t.Fatalf("the marked text fails Check at %s: %v", key, err)
	}
	for _, c := range []struct{ key, want string }{
		{"not_drawn", "«xx» {people} PEOPLE ({dots} DOTS) ARE NOT DRAWN; MAP.JSON LISTS THE AREAS AND WHY."},
		{"latitude_north", "«xx» {degrees}°N"},
		{"methods_totals", "«xx» {dot_note}. THE MAP SHOWS {people} PEOPLE IN {groups} WITH {dots} DOTS."},
		{"viewer_language", "en"},
	} {
		if got := Get(tx, c.key); got != c.want {
			t.Errorf("%s = %q; want %q", c.key, got, c.want)
		}
	}
	// Every text of the marked theme lacks the English of every key.
	all := strings.Join(slices.Collect(func(yield func(string) bool) {
		for _, k := range Keys() {
			if !yield(Get(tx, k)) {
				return
			}
		}
	}), "\n")
	if e := English(all); len(e) != 0 {
		t.Errorf("the marked text holds English: %q", e)
	}
	if e := English(theme.DefaultText.NotDrawn); !slices.Contains(e, "not_drawn: dots) are not drawn; map.json lists the areas and why.") {
		t.Errorf("English finds %q in the default not-drawn sentence", e)
	}
}

func TestPiecesAndMissing(t *testing.T) {
	if got := Pieces("{people} people ({dots} dots)\n are  not drawn."); !reflect.DeepEqual(got, []string{"people (", "dots) are not drawn."}) {
		t.Errorf("Pieces = %q", got)
	}
	tx := Marked("«xx»")
	out := "«xx» 12 PEOPLE (3 DOTS) ARE NOT\nDRAWN; MAP.JSON LISTS THE AREAS AND WHY."
	if m := Missing(out, tx, "not_drawn"); len(m) != 0 {
		t.Errorf("Missing(not_drawn) = %q; want none (wrapped lines join)", m)
	}
	if m := Missing(out, tx, "dot_note"); !reflect.DeepEqual(m, []string{"dot_note: «xx» 1 DOT ="}) {
		t.Errorf("Missing(dot_note) = %q", m)
	}
}

func TestTOML(t *testing.T) {
	tx := theme.DefaultText
	tx.Caution = `A "quoted" \ word`
	got := TOML(tx)
	if !strings.HasPrefix(got, "[theme.text]\ncredit_prefix = \"Source: \"\n") || !strings.Contains(got, "\ncaution = \"A \\\"quoted\\\" \\\\ word\"\n") {
		t.Errorf("TOML:\n%s", got)
	}
	if n := strings.Count(got, "\n"); n != 1+len(Keys()) {
		t.Errorf("TOML has %d lines; want a header and %d keys", n, len(Keys()))
	}
}
