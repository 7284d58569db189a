package mapfile

import (
	"strings"
	"testing"
)

// base is a valid map file; cases add lines before or after it. Its line 1
// is "[input]", so a line put before it is line 1 and base shifts down.
const base = `[input]
file = "a.geojson"

[[category]]
key = "a"
label = "A"
color = "#0072B2"
fields = ["x"]
`

// second adds a second category starting at line 10 after base.
const second = `
[[category]]
key = "b"
label = "B"
color = "#E69F00"
fields = ["y"]
`

// Every key form of TOML v1.0.0 (toml.io, "Keys", "Table", "Inline Table",
// "Array of Tables") must give its line.
func TestParseErrorsNameFileLineAndKey(t *testing.T) {
	cases := []struct {
		name, text, want string
	}{
		{"unknown top key", "colour = 1\n" + base, `m.toml:1: key colour: unknown key`},
		{"unknown key in table", base + "[tiles]\nmin_zoom = 1\nzooms = 3\n", `m.toml:11: key tiles.zooms: unknown key`},
		{"unknown table", base + "[tile]\nmin_zoom = 1\n", `m.toml:9: key tile: unknown key`},
		{"dotted key", "tiles.zooms = 3\n" + base, `m.toml:1: key tiles.zooms: unknown key`},
		{"dotted key in table", base + "[input.extra]\n" + "a.b = 1\n", `m.toml:9: key input.extra: unknown key`},
		{"inline table", "tiles = { min_zoom = 3, bogus = 1 }\n" + base, `m.toml:1: key tiles.bogus: unknown key`},
		{"array of tables", base + second + "bogus = 2\n", `m.toml:15: key category[2].bogus: unknown key`},
		{"wrong type", "seed = \"one\"\n" + base, `m.toml:1: key seed: incompatible types: TOML value has type string; destination has type integer`},
		{"wrong type dotted", "tiles.min_zoom = \"x\"\n" + base, `m.toml:1: key tiles.min_zoom: incompatible types: TOML value has type string; destination has type integer`},
		{"wrong type inline", "tiles = { max_zoom = 2.5 }\n" + base, `m.toml:1: key tiles.max_zoom: incompatible types: TOML value has type float64; destination has type integer`},
		{"wrong type in array of tables", base + strings.Replace(second, `label = "B"`, "label = 5", 1), `m.toml:12: key category[2].label: incompatible types: TOML value has type int64; destination has type string`},
		{"syntax", "title = \"a\n" + base, `m.toml:1: key title: strings cannot contain newlines`},
		{"missing input file", "[input]\nid = \"x\"\n" + base[len("[input]\nfile = \"a.geojson\"\n"):], `m.toml:1: key input.file: missing: name the polygon file, e.g. [input] file = "areas.geojson"`},
		{"missing key in array of tables", base + "\n[[category]]\nkey = \"b\"\nlabel = \"B\"\nfields = [\"y\"]\n", `m.toml:10: key category[2].color: missing`},
		{"field twice in a category", strings.Replace(base, `fields = ["x"]`, `fields = ["x", "x"]`, 1), `m.toml:8: key category[1].fields: lists "x" twice; its people would be drawn twice`},
		{"field in two categories", base + strings.Replace(second, `fields = ["y"]`, `fields = ["y", "x"]`, 1), `m.toml:14: key category[2].fields: "x" is also a field of category 1; its people would be drawn twice`},
		{"bad value in array of tables", base + strings.Replace(second, "#E69F00", "orange", 1), `m.toml:13: key category[2].color: "orange" is not a colour; want #rrggbb`},
		{"bad value dotted", "dots.opacity = 2\n" + base, `m.toml:1: key dots.opacity: wants an opacity above 0 and at most 1`},
		{"bad value inline", "dots = { diameter = 3, min_diameter = 5 }\n" + base, `m.toml:1: key dots.min_diameter: wants a size above 0 and at most dots.diameter`},
		{"missing table key", base + "[input.table]\nkey = \"k\"\n", `m.toml:9: key input.table.file: missing: name the CSV file of counts`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Parse("m.toml", []byte(c.text))
			if err == nil || err.Error() != c.want {
				t.Errorf("error\n  %v\nwant\n  %s", err, c.want)
			}
		})
	}
}

// Floats: TOML v1.0.0 ("Float") allows inf and nan; no map key takes them.
// Integers: "seed = -3" must not wrap round to 18446744073709551613.
func TestParseRefusesNonFiniteFloatsAndNegativeSeeds(t *testing.T) {
	cases := []struct{ text, want string }{
		{"people_per_dot = inf\n", `m.toml:1: key people_per_dot: is +Inf; want a finite number`},
		{"people_per_dot = nan\n", `m.toml:1: key people_per_dot: is NaN; want a finite number`},
		{"dots.diameter = +inf\n", `m.toml:1: key dots.diameter: is +Inf; want a finite number`},
		{"dots = { min_diameter = -inf }\n", `m.toml:1: key dots.min_diameter: is -Inf; want a finite number`},
		{"[dots]\nopacity = nan\n", `m.toml:2: key dots.opacity: is NaN; want a finite number`},
		{"seed = -3\n", `m.toml:1: key seed: is -3; want a whole number from 0 up`},
		{"seed = 1.5\n", `m.toml:1: key seed: incompatible types: TOML value has type float64; destination has type integer`},
	}
	for _, c := range cases {
		// The case's table (if any) comes after base's tables would make
		// its keys part of [[category]]: put it first.
		_, err := Parse("m.toml", []byte(c.text+"\n"+base))
		if err == nil || err.Error() != c.want {
			t.Errorf("%q: error %v; want %s", c.text, err, c.want)
		}
	}
	m, err := Parse("m.toml", []byte("seed = 0\n"+base))
	if err != nil || m.Seed != 0 {
		t.Errorf("seed = 0: %v, %v; want 0", m, err)
	}
	m, err = Parse("m.toml", []byte("seed = 9223372036854775807\n"+base))
	if err != nil || m.Seed != 1<<63-1 {
		t.Errorf("largest TOML integer as seed: %v; want 9223372036854775807", err)
	}
}

func TestParseIgnoresExtentsAndKeepsDefaults(t *testing.T) {
	m, err := Parse("dir/m.toml", []byte(base+"\n[[extent]]\nslug = \"x\"\n[extent.print]\npage = \"A4\"\n"))
	if err != nil {
		t.Fatal(err)
	}
	if m.PeoplePerDot != 1 || m.Seed != 1 || m.Rounding != "random" || m.Tiles.MaxZoom != 12 || len(m.Categories) != 1 {
		t.Errorf("map = %+v", m)
	}
	if got := m.Resolve(m.Input.File); got != "dir/a.geojson" {
		t.Errorf("Resolve = %q", got)
	}
}

func TestFindLines(t *testing.T) {
	text := `title = "a = b # not a comment"  # comment
tiles = { min_zoom = 3, size = 256 }
dots.diameter = 3
notes = """
x = 1
"""
list = [
  { a = 1 },
  "[not] a header",
]
[[category]]
key = "a"
[category.extra]
deep.er = 1
[[category]]
'quoted key' = 2
`
	l := FindLines([]byte(text))
	for name, want := range map[string]int{
		"title": 1, "tiles": 2, "tiles.min_zoom": 2, "tiles.size": 2, "dots": 3, "dots.diameter": 3,
		"notes": 4, "x": 0, "list": 7, "a": 0, "not": 0,
		"category[1]": 11, "category[1].key": 12, "category[1].extra": 13, "category[1].extra.deep.er": 14,
		"category[2]": 15, "category[2].quoted key": 16,
	} {
		if got := l.Line(name); got != want {
			t.Errorf("Line(%q) = %d; want %d", name, got, want)
		}
	}
	if got := l.Near("category[2].color"); got != 15 {
		t.Errorf("Near(category[2].color) = %d; want 15", got)
	}
	if name, line := l.Find([]string{"category", "extra", "deep", "er"}); name != "category[1].extra.deep.er" || line != 14 {
		t.Errorf("Find = %q, %d", name, line)
	}
}

func TestTableKeys(t *testing.T) {
	head := "[input]\nfile = \"a.geojson\"\nid = \"code\"\n\n[input.table]\nfile = \"c.csv\"\nkey = \"area\"\n"
	cat := "\n[[category]]\nkey = \"a\"\nlabel = \"A\"\ncolor = \"#0072B2\"\nfields = [\"x\"]\n"
	for _, c := range []struct {
		keys  string
		delim rune
		pad   int
	}{
		{"", 0, 0},
		{"delimiter = \";\"\npad_zeros = 5\n", ';', 5},
		{"delimiter = \"tab\"\n", '\t', 0},
		{"delimiter = \"\\t\"\n", '\t', 0},
		{"delimiter = '\\t'\n", '\t', 0},
		{"delimiter = \"|\"\n", '|', 0},
	} {
		m, err := Parse("m.toml", []byte(head+c.keys+cat))
		if err != nil {
			t.Errorf("%q: %v", c.keys, err)
			continue
		}
		o := m.Input.Table.Options()
		if o.Delimiter != c.delim || o.PadZeros != c.pad || o.Key != "area" {
			t.Errorf("%q: options %+v; want delimiter %q, pad_zeros %d", c.keys, o, c.delim, c.pad)
		}
	}
	for _, c := range []struct{ keys, want string }{
		{"delimiter = \";;\"\n", `m.toml:8: key input.table.delimiter: ";;"; want one character such as "," or ";", or "tab"`},
		{"delimiter = '\"'\n", `m.toml:8: key input.table.delimiter: "\"" cannot separate fields; want one character such as "," or ";", or "tab"`},
		{"pad_zeros = -1\n", `m.toml:8: key input.table.pad_zeros: is -1; want a whole number from 0 up`},
		{"pad_zeros = 100\n", `m.toml:8: key input.table.pad_zeros: is 100; want at most 64 digits`},
		{"skip_rows = -2\n", `m.toml:8: key input.table.skip_rows: is -2; want a whole number from 0 up`},
		{"pad_zero = 5\n", `m.toml:8: key input.table.pad_zero: unknown key`},
	} {
		_, err := Parse("m.toml", []byte(head+c.keys+cat))
		if err == nil || err.Error() != c.want {
			t.Errorf("%q: error\n  %v\nwant\n  %s", c.keys, err, c.want)
		}
	}
}
