package batch

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestParseErrorsNameFileLineAndKey(t *testing.T) {
	dir := t.TempDir()
	base := demoMap(t)
	head := fmt.Sprintf("map = %q\n", base)
	ext := "[[extent]]\nslug = \"a\"\ntitle = \"A\"\nbbox = [0, 0, 1, 1]\n"
	for _, c := range []struct {
		name, text, want string
	}{
		{"no map", "out = \"x\"\n" + ext, `B: key map: missing: name the base map file, e.g. map = "city.toml"`},
		{"bad map", "map = \"nope.toml\"\n" + ext, `B:1: key map: mapfile: open ` + filepath.Join(dir, "nope.toml") + `: no such file or directory`},
		{"no extents", head, `B: key extent: missing: add at least one [[extent]] with slug, title and one of bbox, ids or field`},
		{"unknown top key", head + "colour = 1\n" + ext, `B:2: key colour: unknown key`},
		{"unknown extent key", head + ext + "zoom = 3\n", `B:6: key extent[1].zoom: unknown key`},
		{"syntax", head + "[[extent]\n", `B:3: expected end of table array name delimiter ']', but got '\n' instead`},
		{"missing slug", head + "[[extent]]\ntitle = \"A\"\nbbox = [0, 0, 1, 1]\n", `B:2: key extent[1].slug: missing: name the extent's folder, e.g. slug = "north-bell"`},
		{"bad slug", head + "[[extent]]\nslug = \"North Bell\"\ntitle = \"A\"\nbbox = [0, 0, 1, 1]\n",
			`B:3: key extent[1].slug: "North Bell": want 1 to 64 lower-case letters, digits, - or _, starting with a letter or digit`},
		{"duplicate slug", head + ext + ext, `B:7: key extent[2].slug: "a" is also the slug of extent 1`},
		{"missing title", head + "[[extent]]\nslug = \"a\"\nbbox = [0, 0, 1, 1]\n", `B:2: key extent[1].title: missing: give the extent's map a title`},
		{"no selection", head + "[[extent]]\nslug = \"a\"\ntitle = \"A\"\n", `B:2: key extent[1]: missing: give bbox = [west, south, east, north], ids = [...] or field = "..." with values = [...]`},
		{"two selections", head + ext + "ids = [\"x\"]\n", `B:6: key extent[1].ids: give one of bbox, ids or field (with values), not several`},
		{"box without width", head + "[[extent]]\nslug = \"a\"\ntitle = \"A\"\nbbox = [1, 0, 1, 1]\n", `B:5: key extent[1].bbox: west and east are both 1; the box has no width`},
		{"box size", head + "[[extent]]\nslug = \"a\"\ntitle = \"A\"\nbbox = [1, 0, 2]\n", `B:5: key extent[1].bbox: has 3 numbers; want [west, south, east, north] in degrees`},
		{"empty ids", head + "[[extent]]\nslug = \"a\"\ntitle = \"A\"\nids = []\n", `B:5: key extent[1].ids: is empty; list the ids of the extent's areas`},
		{"twice id", head + "[[extent]]\nslug = \"a\"\ntitle = \"A\"\nids = [\"x\", \"x\"]\n", `B:5: key extent[1].ids: id "x" is listed twice`},
		{"values without field", head + "[[extent]]\nslug = \"a\"\ntitle = \"A\"\nvalues = [\"x\"]\n", `B:2: key extent[1].field: missing: with values, name the field they are matched against`},
		{"zooms", head + ext + "min_zoom = 12\nmax_zoom = 10\n", `B:7: key extent[1].max_zoom: zoom range 12–10; want 0 ≤ min_zoom ≤ max_zoom ≤ 22`},
		{"per dot", head + ext + "people_per_dot = 0\n", `B:6: key extent[1].people_per_dot: is 0; want a number of people per dot of at least 0.01`},
		{"margin", head + "margin = -1\n" + ext, `B:2: key margin: is -1; want a share of the extent's size from 0 to 10 (0.1 = 10 % on each side)`},
		{"sample", head + "sample = \"some\"\n" + ext, `B:2: key sample: "some"; want "all" (every area's dots) or "near" (only areas near an extent)`},
		{"print page", head + "[print]\npage = \"B7\"\n" + ext, `B:2: key print: page: size "B7": want a name (a2, a3, a4, a5, ledger, legal, letter, tabloid) or WxH with a unit, e.g. 300x200mm or 11x17in`},
		{"extent print", head + ext + "[extent.print]\ndpi = 5\n", `B:6: key extent[1].print: dpi 5: want 36 to 1200`},
		{"extent print key", head + ext + "[extent.print]\npaper = \"A4\"\n", `B:7: key extent[1].print.paper: unknown key`},
		{"print kind", head + ext + "print = 3\n", `B:6: key extent[1].print: want true, false or a table of page settings ([extent.print])`},
	} {
		t.Run(c.name, func(t *testing.T) {
			path := filepath.Join(dir, "b.toml")
			_, err := Parse(path, []byte(c.text))
			if err == nil {
				t.Fatalf("no error; want %q", c.want)
			}
			want := strings.Replace(c.want, "B", path, 1)
			if err.Error() != want {
				t.Errorf("error\n  %s\nwant\n  %s", err, want)
			}
		})
	}
}

func TestParseDefaultsAndOverrides(t *testing.T) {
	dir := t.TempDir()
	text := fmt.Sprintf(`map = %q
out = "maps"
margin = 0.2
[print]
page = "A3"
dpi = 150

[[extent]]
slug = "a"
title = "A"
field = "district"
values = ["Old Quay"]
print = true

[[extent]]
slug = "b"
title = "B"
ids = ["QM0001"]
min_zoom = 11
max_zoom = 13
people_per_dot = 2.5
margin = 0
[extent.print]
orientation = "landscape"
format = ["pdf"]
`, demoMap(t))
	path := filepath.Join(dir, "b.toml")
	f, err := Parse(path, []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	if f.Out != filepath.Join(dir, "maps") || f.Margin != 0.2 || f.MapPath != demoMap(t) {
		t.Errorf("out %q margin %v map %q", f.Out, f.Margin, f.MapPath)
	}
	a, b := f.Extents[0], f.Extents[1]
	if a.Select != ByField || a.Field != "district" || a.MinZoom != 9 || a.MaxZoom != 15 || a.PeoplePerDot != 10 || a.Margin != 0.2 || a.Line != 8 {
		t.Errorf("a: %+v", a)
	}
	if a.Print == nil || a.Print.Page != "A3" || a.Print.DPI != 150 || a.Print.DotMM != 0.35 || len(a.Print.Formats) != 2 {
		t.Errorf("a.print: %+v", a.Print)
	}
	if b.Select != ByIDs || b.MinZoom != 11 || b.MaxZoom != 13 || b.PeoplePerDot != 2.5 || b.Margin != 0 || b.N != 2 {
		t.Errorf("b: %+v", b)
	}
	if b.Print == nil || b.Print.Page != "A3" || b.Print.Orientation != "landscape" || fmt.Sprint(b.Print.Formats) != "[pdf]" {
		t.Errorf("b.print: %+v", b.Print)
	}
}

// A map file with [[extent]] tables is its own batch: the map is its base,
// the extents go to its out folder, and map-file errors keep their lines.
func TestMapFileWithExtents(t *testing.T) {
	dir := t.TempDir()
	src, err := os.ReadFile(demoMap(t))
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(src), `file = "quillmere.geojson"`, fmt.Sprintf("file = %q", filepath.Join(filepath.Dir(demoMap(t)), "quillmere.geojson")), 1)
	text = strings.Replace(text, `out = ".."`, `out = "rendered"`, 1)
	text += "\n[[extent]]\nslug = \"oq\"\ntitle = \"Old Quay\"\nfield = \"district\"\nvalues = [\"Old Quay\"]\n[extent.print]\ndpi = 100\n"
	path := filepath.Join(dir, "map.toml")
	f, err := Parse(path, []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	if f.MapPath != path || f.Out != filepath.Join(dir, "rendered", "extents") || len(f.Extents) != 1 || f.Extents[0].Print.DPI != 100 || len(f.Map.Categories) != 5 {
		t.Errorf("map file batch: out %q, %d extents, map %q", f.Out, len(f.Extents), f.MapPath)
	}
	bad := strings.Replace(text, "people_per_dot = 10", "people_per_dot = -1", 1)
	_, err = Parse(path, []byte(bad))
	line := 0
	for i, l := range strings.Split(bad, "\n") {
		if strings.HasPrefix(l, "people_per_dot") {
			line = i + 1
		}
	}
	if want := fmt.Sprintf("%s:%d: key people_per_dot: is -1; want a number of people per dot of at least 0.01", path, line); err == nil || err.Error() != want {
		t.Errorf("error %v; want %s", err, want)
	}
}
