package mapfile

import (
	"path/filepath"
	"strings"
	"testing"
)

const twoYears = `
[[layer]]
key = "new"
label = "Newer count"

[[layer]]
key = "old"
label = "Older count"
people_per_dot = 5
[layer.input]
file = "old.geojson"
id = "code"
[layer.crosswalk]
file = "old-new.csv"
source = "old"
target = "new"
weight = "w"
trim = true
`

func TestParseLayers(t *testing.T) {
	m, err := Parse(filepath.Join("dir", "m.toml"), []byte("out = \"o\"\n"+base+twoYears))
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Layers) != 2 {
		t.Fatalf("%d layers; want 2", len(m.Layers))
	}
	old := m.LayerMap(1)
	if old.Out != filepath.Join("o", "old") || old.PeoplePerDot != 5 || old.Layers != nil || len(old.Categories) != 1 {
		t.Errorf("layer map: out %q, per dot %v, layers %v, %d categories", old.Out, old.PeoplePerDot, old.Layers, len(old.Categories))
	}
	if m.LayerLabel(1) != "Older count" || m.Layers[1].Crosswalk.Source != "old" || !m.Layers[1].Crosswalk.Options().Trim {
		t.Errorf("layer 2: label %q crosswalk %+v", m.LayerLabel(1), m.Layers[1].Crosswalk)
	}
	if nw := m.LayerMap(0); nw.PeoplePerDot != 1 || nw.Out != filepath.Join("o", "new") {
		t.Errorf("layer 1: per dot %v out %q; want the map's 1 and o/new", nw.PeoplePerDot, nw.Out)
	}
	if b := (&Map{Out: "s3://bucket/maps?region=x", Layers: []Layer{{Key: "a"}}}).LayerMap(0); b.Out != "s3://bucket/maps?region=x/a" && !strings.HasSuffix(b.Out, "/a") {
		t.Errorf("bucket layer out %q", b.Out)
	}
}

// The errors name the file, the line and the key (lines counted from the
// text as given: base is 8 lines, twoYears starts with a blank line 9, its second key line is 15).
func TestLayerErrors(t *testing.T) {
	cases := []struct{ name, text, want string }{
		{"one layer", base + "\n[[layer]]\nkey = \"a\"\n", `m.toml:10: key layer: one [[layer]]`},
		{"dup key", base + strings.Replace(twoYears, `key = "old"`, `key = "new"`, 1), `m.toml:15: key layer[2].key: "new" is also the key of layer 1`},
		{"bad key", base + strings.Replace(twoYears, `key = "old"`, `key = "../x"`, 1), `m.toml:15: key layer[2].key: "../x"; want letters`},
		{"no key", base + strings.Replace(twoYears, `key = "old"`, `label2 = 1`, 1), `key layer[2].label2: unknown key`},
		{"mask", base + strings.Replace(twoYears, `id = "code"`, "id = \"code\"\nmask = [\"w.geojson\"]", 1), `key layer[2].input.mask: masks are the map's`},
		{"crosswalk without areas", base + strings.Replace(twoYears, "[layer.input]\nfile = \"old.geojson\"\nid = \"code\"\n", "", 1), `key layer[2].crosswalk: a crosswalk carries counts`},
		{"crosswalk column", base + strings.Replace(twoYears, "weight = \"w\"\n", "", 1), `key layer[2].crosswalk.weight: missing`},
		{"per dot", base + strings.Replace(twoYears, "people_per_dot = 5", "people_per_dot = -1", 1), `key layer[2].people_per_dot: is -1`},
		{"layer category", base + twoYears + "[[layer.category]]\nkey = \"a\"\nlabel = \"A\"\ncolor = \"blue\"\nfields = [\"x\"]\n", `m.toml:30: key layer[2].category[1].color: "blue" is not a colour`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Parse("m.toml", []byte(c.text))
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error\n  %v\nwant one with\n  %s", err, c.want)
			}
		})
	}
}
