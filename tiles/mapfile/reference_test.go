package mapfile

import (
	"strings"
	"testing"
)

// refs is two [[reference]] tables after base (8 lines): the first header
// is line 10, the second line 16.
const refs = `
[[reference]]
file = "places.geojson"
kind = "labels"
name = "name"
rank = "rank"

[[reference]]
file = "roads.geojson"
kind = "lines"
color = "#777777"
width = 2
above = true
`

func TestParseReferences(t *testing.T) {
	m, err := Parse("m.toml", []byte(base+refs))
	if err != nil {
		t.Fatal(err)
	}
	if len(m.References) != 2 {
		t.Fatalf("%d references; want 2", len(m.References))
	}
	p, r := m.References[0], m.References[1]
	if !p.RefAbove() || p.RefColor() != RefDefaults[RefLabels].Color || p.Name != "name" || p.Rank != "rank" {
		t.Errorf("labels: above %v colour %q name %q rank %q; want above, the default colour, name, rank", p.RefAbove(), p.RefColor(), p.Name, p.Rank)
	}
	if !r.RefAbove() || r.RefColor() != "#777777" || r.RefWidth() != 2 {
		t.Errorf("lines: above %v colour %q width %v; want true, #777777, 2", r.RefAbove(), r.RefColor(), r.RefWidth())
	}
	areas := Reference{Kind: RefAreas}
	lines := Reference{Kind: RefLines}
	if areas.RefAbove() || lines.RefAbove() || lines.RefWidth() != RefDefaults[RefLines].Width {
		t.Errorf("defaults: areas above %v, lines above %v width %v; want under, under, %v", areas.RefAbove(), lines.RefAbove(), lines.RefWidth(), RefDefaults[RefLines].Width)
	}
}

// Errors name the file, the line and the key.
func TestReferenceErrors(t *testing.T) {
	cases := []struct{ name, text, want string }{
		{"no file", base + strings.Replace(refs, `file = "roads.geojson"`, ``, 1), `m.toml:16: key reference[2].file: missing`},
		{"bad type", base + strings.Replace(refs, `roads.geojson`, `roads.kml`, 1), `m.toml:17: key reference[2].file: "roads.kml": unknown file type`},
		{"no kind", base + strings.Replace(refs, `kind = "lines"`, ``, 1), `m.toml:16: key reference[2].kind: missing`},
		{"bad kind", base + strings.Replace(refs, `kind = "lines"`, `kind = "roads"`, 1), `m.toml:18: key reference[2].kind: "roads"; want "labels", "lines" or "areas"`},
		{"no name", base + strings.Replace(refs, `name = "name"`, ``, 1), `m.toml:10: key reference[1].name: missing`},
		{"no rank", base + strings.Replace(refs, `rank = "rank"`, ``, 1), `m.toml:10: key reference[1].rank: missing`},
		{"name on lines", base + strings.Replace(refs, `width = 2`, `name = "n"`, 1), `m.toml:20: key reference[2].name: is for labels`},
		{"colour", base + strings.Replace(refs, `#777777`, `grey`, 1), `m.toml:19: key reference[2].color: "grey"; want #RRGGBB`},
		{"width", base + strings.Replace(refs, `width = 2`, `width = 40`, 1), `m.toml:20: key reference[2].width: is 40; want a width in pixels from 0 to 20`},
		{"label width", base + strings.Replace(refs, `rank = "rank"`, "rank = \"rank\"\nwidth = 1", 1), `m.toml:15: key reference[1].width: is for lines and areas`},
		{"unknown", base + strings.Replace(refs, `above = true`, `size = 3`, 1), `m.toml:21: key reference[2].size: unknown key`},
		{"above type", base + strings.Replace(refs, `above = true`, `above = "yes"`, 1), `m.toml:21: key reference[2].above:`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Parse("m.toml", []byte(c.text))
			if err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %v; want %q", err, c.want)
			}
		})
	}
}
