package shapefile

import (
	"reflect"
	"strings"
	"testing"
)

// Values of N/F/D/L fields (dBASE layout per the Technical Description's
// dBASE notes in ../shared/CHECKS.md: N and F are ASCII, right-justified;
// D is YYYYMMDD).
func TestDBFValues(t *testing.T) {
	fields := []tField{{"n0", 'N', 22, 0}, {"n2", 'N', 12, 2}, {"f0", 'F', 12, 0}, {"d", 'D', 8, 0}, {"l", 'L', 1, 0}, {"c", 'C', 6, 0}}
	cases := []struct {
		row  []string
		want map[string]any
		err  string
	}{
		{[]string{"  -0012", "3.50", "7", "20240229", "Y", "  ab  "}, map[string]any{"n0": int64(-12), "n2": 3.5, "f0": int64(7), "d": "2024-02-29", "l": true, "c": "  ab"}, ""},
		{[]string{"9223372036854775807", "", "1e3", "00000000", "N", ""}, map[string]any{"n0": int64(9223372036854775807), "n2": nil, "f0": 1000.0, "d": nil, "l": false, "c": ""}, ""},
		{[]string{"9223372036854775808", "**********", "+.5", "", "?", "x"}, map[string]any{"n0": 9223372036854775808.0, "n2": nil, "f0": 0.5, "d": nil, "l": nil, "c": "x"}, ""},
		{[]string{"1.5", "-0", "-7.", "19991231", "t", "é"}, map[string]any{"n0": 1.5, "n2": 0.0, "f0": -7.0, "d": "1999-12-31", "l": true, "c": "é"}, ""},
		{[]string{"inf", "", "", "", "", ""}, nil, `field "n0": "inf" is not a finite number`},
		{[]string{"", "NaN", "", "", "", ""}, nil, `field "n2": "NaN" is not a finite number`},
		{[]string{"", "", "0x10", "", "", ""}, nil, `field "f0": "0x10" is not a number`},
		{[]string{"1_000", "", "", "", "", ""}, nil, `field "n0": "1_000" is not a number`},
		{[]string{"1e999", "", "", "", "", ""}, nil, `field "n0": "1e999" is too large for a number`},
		{[]string{"", "", "", "20241301", "", ""}, nil, `field "d": date "20241301" is not YYYYMMDD`},
		{[]string{"", "", "", "", "X", ""}, nil, `field "l": logical "X" is none of T, F, Y, N, ?`},
		{[]string{"1 2", "", "", "", "", ""}, nil, `field "n0": "1 2" is not a number`},
	}
	for i, c := range cases {
		dbf := buildDBF(0, fields, [][]string{c.row}, nil)
		tab, err := openDBF(part{name: "v.dbf", r: strings.NewReader(string(dbf)), size: int64(len(dbf))}, 10, &textDecoder{name: "UTF-8"})
		if err != nil {
			t.Fatal(err)
		}
		rec, _, err := tab.next()
		if err != nil {
			t.Fatal(err)
		}
		props := map[string]any{}
		err = tab.decodeRecord(rec, props, make([]string, len(fields)), make([]bool, len(fields)))
		if c.err != "" {
			if err == nil || err.Error() != c.err {
				t.Errorf("case %d: error %v, want %s", i, err, c.err)
			}
			continue
		}
		if err != nil || !reflect.DeepEqual(props, c.want) {
			t.Errorf("case %d: %#v %v\nwant %#v", i, props, err, c.want)
		}
	}
}

func TestCPGNames(t *testing.T) {
	for text, want := range map[string]string{
		"UTF-8": "UTF-8", "utf8\n": "UTF-8", "65001": "UTF-8",
		"ISO-8859-1": "ISO-8859-1", "latin1": "ISO-8859-1", "88591": "ISO-8859-1", "ISO 88591": "ISO-8859-1",
		"Windows-1252": "Windows-1252", "1252": "Windows-1252", "cp1252": "Windows-1252", "ANSI 1252": "Windows-1252",
		"\ufeffCP1251\r\n": "Windows-1251",
	} {
		d, ok, err := decoderForCPG(text, "x.cpg")
		if err != nil || !ok || d.name != want {
			t.Errorf("%q: %v %v %v, want %s", text, d, ok, err, want)
		}
	}
	if _, ok, err := decoderForCPG(" \n", "x.cpg"); ok || err != nil {
		t.Errorf("blank .cpg: %v %v", ok, err)
	}
	// Latin-1 vs Windows-1252 differ at 0x80..0x9F (0x80 is € in 1252, a C1
	// control in ISO-8859-1).
	l1, _, _ := decoderForCPG("88591", "")
	w, _, _ := decoderForCPG("1252", "")
	if s, _ := l1.decode([]byte{0x80, 0xD1}); s != "\u0080Ñ" {
		t.Errorf("latin1 %q", s)
	}
	if s, _ := w.decode([]byte{0x80, 0xD1}); s != "€Ñ" {
		t.Errorf("1252 %q", s)
	}
}

// Text problems are warnings, once per field, naming the first record.
func TestTextWarnings(t *testing.T) {
	fields := []tField{{"name", 'C', 8, 0}, {"memo", 'M', 10, 0}}
	rows := [][]string{{"ok", "1"}, {"Caf\xe9", "2"}}
	shp, shx := buildSHP(typePolygon, []tShape{{typ: typePolygon, parts: triangle}, {typ: typePolygon, parts: triangle}})
	files := map[string][]byte{".shp": shp, ".shx": shx, ".dbf": buildDBF(0, fields, rows, nil)}

	// No .cpg and language driver 0: 0xE9 is not UTF-8, read as Windows-1252.
	l, warns, err := decode(memSource("t", files), Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{
		`shapefile: t.dbf: field "memo": field type 'M' is not supported: values read as null`,
		`shapefile: t.dbf: field "name": no code page declared and text that is not UTF-8 (first in record 2): read as Windows-1252`,
	}
	if got := warningTexts(warns); !reflect.DeepEqual(got, want) {
		t.Errorf("warnings %q\nwant %q", got, want)
	}
	if l.Features[1].Props["name"] != "Café" || l.Features[1].Props["memo"] != nil {
		t.Errorf("props %v", l.Features[1].Props)
	}

	// A .cpg says UTF-8: the byte is replaced by U+FFFD.
	files[".cpg"] = []byte("UTF-8")
	l, warns, err = decode(memSource("t", files), Options{})
	if err != nil {
		t.Fatal(err)
	}
	want[1] = `shapefile: t.dbf: field "name": text that is not valid UTF-8 (first in record 2): invalid bytes replaced by U+FFFD`
	if got := warningTexts(warns); !reflect.DeepEqual(got, want) || l.Features[1].Props["name"] != "Caf\uFFFD" {
		t.Errorf("warnings %q, name %q", got, l.Features[1].Props["name"])
	}
}

func warningTexts(ws []Warning) []string {
	var out []string
	for _, w := range ws {
		out = append(out, w.String())
	}
	return out
}

func TestOptions(t *testing.T) {
	files := baseSet()
	// Case-insensitive id field match, ids as stored.
	l, _, err := decode(memSource("o", files), Options{IDField: "ID"})
	if err != nil || l.Features[0].ID != "a" || l.Features[1].ID != "b" {
		t.Fatalf("%v %v", l, err)
	}
	// Numeric id field keeps its text.
	l, _, err = decode(memSource("o", files), Options{IDField: "share"})
	if err != nil || l.Features[0].ID != "0.500" {
		t.Fatalf("id %q %v", l.Features[0].ID, err)
	}
	for _, c := range []struct {
		opt  Options
		want string
	}{
		{Options{IDField: "code"}, `shapefile: o.dbf: id field "code" not found (fields: id, pop, share)`},
		// 10 + 4 vertices in the two records.
		{Options{MaxVertices: 13}, `shapefile: o.shp: feature 1: record 2: NumPoints 4 exceeds the 3 vertices left under Options.MaxVertices`},
		{Options{MaxFeatures: 1}, `shapefile: o.shx: 2 records, more than the limit of 1 (Options.MaxFeatures)`},
	} {
		_, _, err := decode(memSource("o", files), c.opt)
		if err == nil || err.Error() != c.want {
			t.Errorf("%+v: %v\nwant %s", c.opt, err, c.want)
		}
	}
	if _, _, err := decode(memSource("o", files), Options{MaxVertices: 14}); err != nil {
		t.Errorf("exact vertex limit: %v", err)
	}
}
