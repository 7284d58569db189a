package table

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/reftool"
)

// countsOpts reads testdata/counts.csv: keys like "1400000US01001" (strip
// the prefix) and "0500000US01005" (keep the last 5 characters), and one
// description row under the header.
var countsOpts = Options{Key: "GEO_ID", SkipRows: 1, Trim: true, StripPrefix: "1400000US", KeepLast: 5}

// invented layer: keys as text with leading zeros, one int64 and one whole
// float64 key, and one key with no row.
func testLayer() *geo.Layer {
	keys := []any{"01001", "01003", " 01005 ", int64(2001), float64(2003), "01009"}
	l := &geo.Layer{Path: "areas.geojson", Fields: []string{"code", "pop_a"}}
	for i, k := range keys {
		l.Features = append(l.Features, geo.Feature{Index: i, ID: string(rune('a' + i)),
			Props: map[string]any{"code": k, "pop_a": "stale"}})
	}
	return l
}

func TestNormalize(t *testing.T) {
	for _, tc := range []struct {
		opt      Options
		in, want string
	}{
		{Options{}, " 01001 ", " 01001 "},
		{Options{Trim: true}, " 01001 ", "01001"},
		{Options{StripPrefix: "1400000US"}, "1400000US01001", "01001"},
		{Options{StripPrefix: "1400000US"}, "0500000US01001", "0500000US01001"},
		{Options{KeepLast: 5}, "0500000US01001", "01001"},
		{Options{KeepLast: 5}, "1001", "1001"},
		{Options{KeepLast: 2}, "zoné", "né"}, // characters, not bytes
		{Options{Trim: true, StripPrefix: "US", KeepLast: 3}, " US0042 ", "042"},
		{Options{StripPrefix: "US"}, "USUS1", "US1"}, // stripped once
	} {
		if got := tc.opt.Normalize(tc.in); got != tc.want {
			t.Errorf("%+v.Normalize(%q) = %q, want %q", tc.opt, tc.in, got, tc.want)
		}
	}
}

func TestRead(t *testing.T) {
	tb, err := Read("testdata/counts.csv", countsOpts)
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"GEO_ID", "NAME", "pop_a", "pop_b"}; !reflect.DeepEqual(tb.Header, want) {
		t.Errorf("header %v", tb.Header)
	}
	if want := []string{"01001", "01003", "01005", "2001", "2003", "09999"}; !reflect.DeepEqual(tb.Keys, want) {
		t.Errorf("keys %q, want %q", tb.Keys, want)
	}
	if want := []int{3, 4, 5, 6, 7, 8}; !reflect.DeepEqual(tb.Lines, want) {
		t.Errorf("lines %v, want %v", tb.Lines, want)
	}
	if tb.Records[0][1] != "Tarrow, North" {
		t.Errorf("quoted field %q", tb.Records[0][1])
	}
	if i, ok := tb.Index("1400000US2003"); !ok || i != 4 {
		t.Errorf("Index = %d, %v", i, ok)
	}
	if v, err := tb.Number(0, "pop_a"); err != nil || v != 120 {
		t.Errorf("Number(0, pop_a) = %v, %v", v, err)
	}
	_, err = tb.Number(1, "pop_b")
	want := `table: testdata/counts.csv: line 4: column "pop_b": "(X)" is not a number (a placeholder for no value: set null_as_zero = true in [input.table] to count it as 0)`
	if err == nil || err.Error() != want {
		t.Errorf("got %v\nwant %s", err, want)
	}
	var te *Error
	if !errors.As(err, &te) || te.Line != 4 || te.Column != "pop_b" {
		t.Errorf("errors.As: %+v", te)
	}
	_, err = tb.Number(0, "pop_c")
	want = `table: testdata/counts.csv: column "pop_c": no such column (columns: GEO_ID, NAME, pop_a, pop_b)`
	if err == nil || err.Error() != want {
		t.Errorf("got %v\nwant %s", err, want)
	}
	// Without SkipRows the description row is data, and its pop_a fails.
	tb2, err := Read("testdata/counts.csv", Options{Key: "GEO_ID"})
	if err != nil {
		t.Fatal(err)
	}
	_, _, err = tb2.Column("pop_a")
	want = `table: testdata/counts.csv: line 2: column "pop_a": "Group A people" is not a number`
	if err == nil || err.Error() != want {
		t.Errorf("got %v\nwant %s", err, want)
	}
}

func TestBOMAndDelimiter(t *testing.T) {
	p := filepath.Join(t.TempDir(), "bom.csv")
	os.WriteFile(p, []byte("\xEF\xBB\xBF\"zone\";\"people\"\r\n\"007\";12\r\n010;3.5\r\n"), 0o644)
	tb, err := Read(p, Options{Key: "zone", Delimiter: ';'})
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(tb.Header, []string{"zone", "people"}) || !reflect.DeepEqual(tb.Keys, []string{"007", "010"}) {
		t.Errorf("header %q keys %q", tb.Header, tb.Keys)
	}
	v, z, err := tb.Column("people")
	if err != nil || !reflect.DeepEqual(v, []float64{12, 3.5}) || z != 0 {
		t.Errorf("Column = %v %d %v", v, z, err)
	}
}

func TestNumber(t *testing.T) {
	for _, tc := range []struct {
		cell string
		want float64
		err  string // "" = accepted
	}{
		{"0", 0, ""},
		{"012", 12, ""},
		{" 42 ", 42, ""},
		{"+7", 7, ""},
		{"12.25", 12.25, ""},
		{".5", 0.5, ""},
		{"1.5e3", 1500, ""},
		{"2E-1", 0.2, ""},
		{"1e-400", 0, ""},
		{"-3", 0, `"-3" is negative; counts must be 0 or more`},
		{"-0.5", 0, `"-0.5" is negative; counts must be 0 or more`},
		{"NaN", 0, `"NaN" is not a finite number`},
		{"inf", 0, `"inf" is not a finite number`},
		{"-Infinity", 0, `"-Infinity" is not a finite number`},
		{"1e400", 0, `"1e400" is too large for a number`},
		{"1,234", 0, `"1,234": commas are not accepted in numbers (thousands separator or decimal comma); write digits with an optional "." decimal point`},
		{"0x10", 0, `"0x10" is not a number`},
		{"1_000", 0, `"1_000" is not a number`},
		{"12 people", 0, `"12 people" is not a number`},
		{"1.2.3", 0, `"1.2.3" is not a number`},
		{"e5", 0, `"e5" is not a number`},
		{"(X)", 0, `"(X)" is not a number (a placeholder for no value: set null_as_zero = true in [input.table] to count it as 0)`},
		{"", 0, `"" is not a number (a placeholder for no value: set null_as_zero = true in [input.table] to count it as 0)`},
	} {
		tb := &Table{Path: "t.csv", Header: []string{"k", "n"}, Records: [][]string{{"a", tc.cell}}, Lines: []int{2},
			cols: map[string]int{"k": 0, "n": 1}}
		v, err := tb.Number(0, "n")
		if tc.err == "" {
			if err != nil || v != tc.want {
				t.Errorf("%q: got %v, %v; want %v", tc.cell, v, err, tc.want)
			}
			continue
		}
		if want := `table: t.csv: line 2: column "n": ` + tc.err; err == nil || err.Error() != want {
			t.Errorf("%q: got %v\nwant %s", tc.cell, err, want)
		}
	}
	for _, s := range []string{"-", "--", "(X)", "x", "N", "NA", "n/a", "(NA)", "null", "NULL", "None", "*", "***", ".", "..", "...", "", "  "} {
		if !IsPlaceholder(s) {
			t.Errorf("IsPlaceholder(%q) = false", s)
		}
	}
	for _, s := range []string{"0", "NaN", "nil", "X1", "-1", "*1"} {
		if IsPlaceholder(s) {
			t.Errorf("IsPlaceholder(%q) = true", s)
		}
	}
}

func TestJoin(t *testing.T) {
	// Default: the placeholders are an error naming line and column.
	tb, err := Read("testdata/counts.csv", countsOpts)
	if err != nil {
		t.Fatal(err)
	}
	layer := testLayer()
	_, err = Join(layer, "code", tb, []string{"pop_a", "pop_b"})
	// Every bad cell is listed, not only the first.
	want := "table: testdata/counts.csv: 2 cells are not counts:\n" +
		`  line 4: column "pop_b": "(X)" is not a number (a placeholder for no value: set null_as_zero = true in [input.table] to count it as 0)` + "\n" +
		`  line 6: column "pop_b": "-" is not a number (a placeholder for no value: set null_as_zero = true in [input.table] to count it as 0)`
	if err == nil || err.Error() != want {
		t.Fatalf("got %v\nwant %s", err, want)
	}
	if !reflect.DeepEqual(layer, testLayer()) {
		t.Errorf("failed Join changed the layer")
	}

	opt := countsOpts
	opt.NullAsZero = true
	tb, err = Read("testdata/counts.csv", opt)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := Join(layer, "code", tb, []string{"pop_a", "pop_b"})
	if err != nil {
		t.Fatal(err)
	}
	wantRep := &Report{
		Table: "testdata/counts.csv", KeyColumn: "GEO_ID", KeyField: "code", Features: 6, Rows: 6,
		Columns: []string{"pop_a", "pop_b"}, Matched: 5,
		FeaturesWithoutRow:     Keys{"01009"},
		RowsWithoutFeature:     Keys{"09999"},
		PeopleInUnmatchedRows:  map[string]float64{"pop_a": 300, "pop_b": 25},
		PeopleInUnmatchedTotal: 325,
		ZeroedCells:            map[string]int{"pop_a": 0, "pop_b": 2},
	}
	if !reflect.DeepEqual(rep, wantRep) {
		t.Errorf("report %+v\nwant %+v", rep, wantRep)
	}
	wantText := `testdata/counts.csv: column "GEO_ID" joined to feature field "code": 5 of 6 features matched; 5 of 6 rows used
features without a row (1): "01009"
rows without a feature (1): "09999"
people in rows without a feature: 325 (pop_a 300, pop_b 25)
placeholder cells read as 0: pop_b 2
`
	if got := rep.String(); got != wantText {
		t.Errorf("String:\n%s\nwant:\n%s", got, wantText)
	}
	wantProps := []map[string]any{
		{"code": "01001", "pop_a": 120.0, "pop_b": 30.0},
		{"code": "01003", "pop_a": 85.0, "pop_b": 0.0},
		{"code": " 01005 ", "pop_a": 40.0, "pop_b": 2.0},
		{"code": int64(2001), "pop_a": 7.0, "pop_b": 0.0},
		{"code": float64(2003), "pop_a": 15.0, "pop_b": 5.0},
		{"code": "01009", "pop_a": nil, "pop_b": nil}, // unmatched: the stale value is gone
	}
	for i, f := range layer.Features {
		if !reflect.DeepEqual(f.Props, wantProps[i]) {
			t.Errorf("feature %d props %v, want %v", i, f.Props, wantProps[i])
		}
	}
	if want := []string{"code", "pop_a", "pop_b"}; !reflect.DeepEqual(layer.Fields, want) {
		t.Errorf("fields %v, want %v", layer.Fields, want)
	}
}

func TestJoinErrors(t *testing.T) {
	_, err := Read("testdata/duplicate.csv", countsOpts)
	want := `table: testdata/duplicate.csv: line 4: column "GEO_ID": key "0500000US01001" (as "01001") is also on line 3`
	if err == nil || err.Error() != want {
		t.Errorf("got %v\nwant %s", err, want)
	}

	tb, err := Read("testdata/counts.csv", Options{Key: "GEO_ID", SkipRows: 1, NullAsZero: true})
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name    string
		layer   func() *geo.Layer
		field   string
		columns []string
		want    string
	}{
		{"missing column", testLayer, "code", []string{"pop_a", "pop_c"},
			`table: testdata/counts.csv: column "pop_c": no such column (columns: GEO_ID, NAME, pop_a, pop_b)`},
		{"column twice", testLayer, "code", []string{"pop_a", "pop_a"},
			`table: testdata/counts.csv: column "pop_a": column requested twice`},
		{"key column is text", testLayer, "code", []string{"NAME"},
			"table: testdata/counts.csv: 6 cells are not counts:\n" +
				`  line 3: column "NAME": "Tarrow, North" is not a number` + "\n" +
				`  line 4: column "NAME": "Tarrow South" is not a number` + "\n" +
				`  line 5: column "NAME": "Fenwick" is not a number` + "\n" +
				`  line 6: column "NAME": "Quay" is not a number` + "\n" +
				`  line 7: column "NAME": "Marl End" is not a number` + "\n" +
				`  line 8: column "NAME": "Nowhere Rise" is not a number`},
		{"missing field", testLayer, "GEOID", []string{"pop_a"},
			`table: areas.geojson: field "GEOID": no such field to join on (fields: code, pop_a)`},
		{"duplicate feature key", func() *geo.Layer {
			l := testLayer()
			l.Features[3].Props["code"] = "01001"
			return l
		}, "code", []string{"pop_a"},
			`table: areas.geojson: feature 3 (id "d"): field "code": key "01001" is also the key of feature 0 (id "a"): each row may feed one feature only`},
		{"null key", func() *geo.Layer {
			l := testLayer()
			l.Features[2].Props["code"] = nil
			return l
		}, "code", []string{"pop_a"},
			`table: areas.geojson: feature 2 (id "c"): field "code": no key value (null)`},
		{"bool key", func() *geo.Layer {
			l := testLayer()
			l.Features[1].Props["code"] = true
			return l
		}, "code", []string{"pop_a"},
			`table: areas.geojson: feature 1 (id "b"): field "code": key value true (bool) cannot be used as a key`},
		{"absent key", func() *geo.Layer {
			l := testLayer()
			delete(l.Features[5].Props, "code")
			return l
		}, "code", []string{"pop_a"},
			`table: areas.geojson: feature 5 (id "f"): field "code": no key value (field missing)`},
	} {
		l := tc.layer()
		_, err := Join(l, tc.field, tb, tc.columns)
		if err == nil || err.Error() != tc.want {
			t.Errorf("%s: got %v\nwant %s", tc.name, err, tc.want)
		}
		if !reflect.DeepEqual(l, tc.layer()) {
			t.Errorf("%s: failed Join changed the layer", tc.name)
		}
	}
	var ge *geo.Error
	l := testLayer()
	l.Features[2].Props["code"] = nil
	if _, err := Join(l, "code", tb, nil); !errors.As(err, &ge) || ge.Index != 2 || ge.Field != "code" {
		t.Errorf("errors.As(%v) = %+v", err, ge)
	}
}

func TestKeysHead(t *testing.T) {
	var k Keys
	if got := k.Head(10); got != "none" {
		t.Errorf("empty: %q", got)
	}
	for i := 0; i < 12; i++ {
		k = append(k, string(rune('a'+i)))
	}
	if got, want := k.Head(10), `"a", "b", "c", "d", "e", "f", "g", "h", "i", "j" and 2 more`; got != want {
		t.Errorf("Head = %s, want %s", got, want)
	}
	if got, want := k[:2].Head(10), `"a", "b"`; got != want {
		t.Errorf("Head = %s, want %s", got, want)
	}
	for v, want := range map[float64]string{0: "0", 999: "999", 1000: "1,000", 308745538: "308,745,538", 1234.5: "1,234.5"} {
		if got := formatCount(v); got != want {
			t.Errorf("formatCount(%v) = %q, want %q", v, got, want)
		}
	}
}

func TestBadInputs(t *testing.T) {
	dir := "../../testdata/bad/table"
	for _, tc := range []struct {
		file, want string
		nullZero   bool
	}{
		{"ragged.csv", `table: ../../testdata/bad/table/ragged.csv: line 3: row has a different number of fields than the header's 2`, false},
		{"unterminated-quote.csv", `table: ../../testdata/bad/table/unterminated-quote.csv: line 3: quoted field opened here has a missing or stray closing quote (found on line 4)`, false},
		{"bare-quote.csv", `table: ../../testdata/bad/table/bare-quote.csv: line 2: bare " in non-quoted-field (column 3 of line 2)`, false},
		{"no-header.csv", `table: ../../testdata/bad/table/no-header.csv: line 1: key column "geoid" is not in the header (columns: 01001, 5); the first line looks like data: a header row is required`, false},
		{"empty.csv", `table: ../../testdata/bad/table/empty.csv: empty file: a header row naming the columns is required`, false},
		{"missing.csv", `table: open ../../testdata/bad/table/missing.csv: no such file or directory`, false},
		{"key-missing.csv", `table: ../../testdata/bad/table/key-missing.csv: line 1: key column "geoid" is not in the header (columns: fips, pop)`, false},
		{"duplicate-column.csv", `table: ../../testdata/bad/table/duplicate-column.csv: line 1: column "geoid": header names this column twice (columns 1 and 2)`, false},
		{"duplicate-key.csv", `table: ../../testdata/bad/table/duplicate-key.csv: line 3: column "geoid": key "01001" (as "01001") is also on line 2`, false},
		{"empty-key.csv", `table: ../../testdata/bad/table/empty-key.csv: line 3: column "geoid": empty key`, false},
		{"nan.csv", `table: ../../testdata/bad/table/nan.csv: line 3: column "pop": "NaN" is not a finite number`, true},
		{"negative.csv", `table: ../../testdata/bad/table/negative.csv: line 3: column "pop": "-5" is negative; counts must be 0 or more`, true},
		{"huge.csv", `table: ../../testdata/bad/table/huge.csv: line 2: column "pop": "1e400" is too large for a number`, true},
		{"thousands.csv", `table: ../../testdata/bad/table/thousands.csv: line 2: column "pop": "1,234": commas are not accepted in numbers (thousands separator or decimal comma); write digits with an optional "." decimal point`, true},
		{"hex.csv", `table: ../../testdata/bad/table/hex.csv: line 2: column "pop": "0x1p4" is not a number`, true},
		{"placeholder.csv", `table: ../../testdata/bad/table/placeholder.csv: line 3: column "pop": "N" is not a number (a placeholder for no value: set null_as_zero = true in [input.table] to count it as 0)`, false},
	} {
		tb, err := Read(filepath.Join(dir, tc.file), Options{Key: "geoid", NullAsZero: tc.nullZero})
		if err == nil {
			_, _, err = tb.Column("pop")
		}
		if err == nil || err.Error() != tc.want {
			t.Errorf("%s:\n got %v\nwant %s", tc.file, err, tc.want)
		}
	}
	// placeholder.csv is fine with NullAsZero: one cell zeroed.
	tb, err := Read(filepath.Join(dir, "placeholder.csv"), Options{Key: "geoid", NullAsZero: true})
	if err != nil {
		t.Fatal(err)
	}
	if v, z, err := tb.Column("pop"); err != nil || !reflect.DeepEqual(v, []float64{5, 0}) || z != 1 {
		t.Errorf("Column = %v %d %v", v, z, err)
	}
	_, err = Read(filepath.Join(dir, "ragged.csv"), Options{Key: "geoid", MaxRows: 0, SkipRows: -1})
	if want := `table: ../../testdata/bad/table/ragged.csv: SkipRows, KeepLast, PadZeros and MaxRows must not be negative`; err == nil || err.Error() != want {
		t.Errorf("got %v", err)
	}
	p := filepath.Join(t.TempDir(), "many.csv")
	os.WriteFile(p, []byte("geoid,pop\n1,1\n2,2\n3,3\n"), 0o644)
	if _, err := Read(p, Options{Key: "geoid", MaxRows: 2}); err == nil || !strings.HasSuffix(err.Error(), ": line 4: more than 2 data rows (MaxRows)") {
		t.Errorf("MaxRows: %v", err)
	}
}

// TestUSCounties joins the shared synthetic county counts onto the shared
// county GeoJSON, both parsed independently (the GeoJSON with
// encoding/json here). Expected values: shared/data/README.md.
func TestUSCounties(t *testing.T) {
	gj, csvPath := reftool.SharedData(t, "us-counties.geojson"), reftool.SharedData(t, "us-counties-counts.csv")
	b, err := os.ReadFile(gj)
	if err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []struct {
			Properties map[string]any
		}
	}
	if err := json.Unmarshal(b, &fc); err != nil {
		t.Fatal(err)
	}
	layer := &geo.Layer{Path: gj, Fields: []string{"geoid", "name"}}
	for i, f := range fc.Features {
		layer.Features = append(layer.Features, geo.Feature{Index: i, ID: f.Properties["geoid"].(string),
			Props: map[string]any{"geoid": f.Properties["geoid"], "name": f.Properties["name"]}})
	}
	cols := []string{"grp_a", "grp_b", "grp_c", "grp_d", "grp_e"}
	tb, err := Read(csvPath, Options{Key: "geoid"})
	if err != nil {
		t.Fatal(err)
	}
	rep, err := Join(layer, "geoid", tb, cols)
	if err != nil {
		t.Fatal(err)
	}
	if rep.Matched != 3230 || len(rep.FeaturesWithoutRow) != 0 || len(rep.RowsWithoutFeature) != 0 || rep.PeopleInUnmatchedTotal != 0 {
		t.Errorf("report:\n%s", rep)
	}
	want := map[string]float64{"grp_a": 147131475, "grp_b": 72430557, "grp_c": 43001654, "grp_d": 29667411, "grp_e": 16514441}
	got := map[string]float64{}
	var total float64
	for i, f := range layer.Features {
		for _, c := range cols {
			v := f.Props[c].(float64)
			got[c] += v
			total += v
			// The CSV and the GeoJSON agree row by row (README.md).
			if v != fc.Features[i].Properties[c].(float64) {
				t.Fatalf("%s %s: joined %v, GeoJSON %v", f.ID, c, v, fc.Features[i].Properties[c])
			}
		}
	}
	if !reflect.DeepEqual(got, want) || total != 308745538 {
		t.Errorf("totals %v (%v), want %v (308745538)", got, total, want)
	}
}

// FuzzRead feeds arbitrary bytes to the CSV reader with and without
// NullAsZero. It must not panic, and what it accepts must be consistent:
// rows as wide as the header, unique keys found again by Index, line
// numbers increasing, and counts finite and non-negative.
func FuzzRead(f *testing.F) {
	for _, s := range []string{
		"geoid,pop\n01001,5\n01003,(X)\n",
		"\xEF\xBB\xBFgeoid,pop\r\n\"01001\",\"1\"\r\n",
		"geoid,pop\ndescription,people\n01001,1e3\n",
		"geoid,pop\n\"a\nb\",2\n",
		"geoid,pop\n01001,5\n01001,6\n",
		"geoid,pop\n01001,5\n\"01003,6\n",
		"geoid\n",
		"",
		"geoid,pop\n01001,-1\n01002,NaN\n01003,1e400\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		for _, nz := range []bool{false, true} {
			tb, err := read(bytes.NewReader(b), "fuzz.csv", Options{Key: "geoid", Trim: true, NullAsZero: nz, SkipRows: int(len(b) % 2)})
			if err != nil {
				if !strings.HasPrefix(err.Error(), "table: fuzz.csv: ") {
					t.Fatalf("error without prefix: %v", err)
				}
				continue
			}
			if len(tb.Records) != len(tb.Lines) || len(tb.Records) != len(tb.Keys) {
				t.Fatalf("%d records, %d lines, %d keys", len(tb.Records), len(tb.Lines), len(tb.Keys))
			}
			for i, r := range tb.Records {
				if len(r) != len(tb.Header) {
					t.Fatalf("record %d has %d fields, header %d", i, len(r), len(tb.Header))
				}
				if j, ok := tb.Index(tb.Keys[i]); !ok || j != i {
					t.Fatalf("Index(%q) = %d, %v; want %d", tb.Keys[i], j, ok, i)
				}
				if i > 0 && tb.Lines[i] <= tb.Lines[i-1] {
					t.Fatalf("lines %v not increasing", tb.Lines)
				}
			}
			if _, ok := tb.cols["pop"]; ok {
				v, _, err := tb.Column("pop")
				for _, x := range v {
					if x < 0 || math.IsNaN(x) || math.IsInf(x, 0) {
						t.Fatalf("count %v accepted", x)
					}
				}
				if err != nil && !strings.HasPrefix(err.Error(), "table: fuzz.csv: line ") && !strings.Contains(err.Error(), " cells are not counts:\n  line ") {
					t.Fatalf("number error without line: %v", err)
				}
			}
		}
	})
}

func BenchmarkReadAndJoinCounties(b *testing.B) {
	csvPath := reftool.SharedData(b, "us-counties-counts.csv")
	tb, err := Read(csvPath, Options{Key: "geoid"})
	if err != nil {
		b.Fatal(err)
	}
	layer := &geo.Layer{Path: "counties", Fields: []string{"geoid"}}
	for i, k := range tb.Keys {
		layer.Features = append(layer.Features, geo.Feature{Index: i, ID: k, Props: map[string]any{"geoid": k}})
	}
	cols := []string{"grp_a", "grp_b", "grp_c", "grp_d", "grp_e"}
	b.ReportAllocs()
	for b.Loop() {
		tb, err := Read(csvPath, Options{Key: "geoid"})
		if err != nil {
			b.Fatal(err)
		}
		if _, err := Join(layer, "geoid", tb, cols); err != nil {
			b.Fatal(err)
		}
	}
}

// zeroLayer has five-digit keys, as text, where dropped-zeros.csv lost the
// leading zero of four of them (a spreadsheet that read "01001" as the
// number 1001).
func zeroLayer() *geo.Layer {
	l := &geo.Layer{Path: "areas.geojson", Fields: []string{"code"}}
	for i, k := range []string{"01001", "01003", "01005", "01007", "02010", "99999"} {
		l.Features = append(l.Features, geo.Feature{Index: i, ID: k, Props: map[string]any{"code": k}})
	}
	return l
}

func TestPadZerosHintAndJoin(t *testing.T) {
	tb, err := Read("testdata/dropped-zeros.csv", Options{Key: "area"})
	if err != nil {
		t.Fatal(err)
	}
	rep, err := Join(zeroLayer(), "code", tb, []string{"people"})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Matched != 0 {
		t.Errorf("matched %d without padding; want 0", rep.Matched)
	}
	if want := []string{"5 keys would match with pad_zeros = 5"}; !reflect.DeepEqual(rep.Hints, want) {
		t.Errorf("hints %q; want %q", rep.Hints, want)
	}
	if !strings.HasSuffix(rep.String(), "\nhint: 5 keys would match with pad_zeros = 5\n") {
		t.Errorf("report lacks the hint:\n%s", rep)
	}

	tb, err = Read("testdata/dropped-zeros.csv", Options{Key: "area", PadZeros: 5})
	if err != nil {
		t.Fatal(err)
	}
	layer := zeroLayer()
	rep, err = Join(layer, "code", tb, []string{"people"})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Matched != 5 || len(rep.Hints) != 0 || !reflect.DeepEqual(rep.FeaturesWithoutRow, Keys{"99999"}) {
		t.Errorf("padded join: matched %d, hints %q, unmatched %q", rep.Matched, rep.Hints, rep.FeaturesWithoutRow)
	}
	if got := layer.Features[4].Props["people"]; got != 7.0 {
		t.Errorf("02010 got %v; want 7 from row 2010", got)
	}
}

func TestPadZerosBothSides(t *testing.T) {
	o := Options{PadZeros: 5}
	for in, want := range map[string]string{"1001": "01001", "01001": "01001", "7": "00007", "123456": "123456", "A12": "A12", "": "", "12.5": "12.5"} {
		if got := o.Normalize(in); got != want {
			t.Errorf("Normalize(%q) = %q; want %q", in, got, want)
		}
	}
	// A whole float key from a numeric field pads like its text.
	if got := (Options{PadZeros: 5, Trim: true}).Normalize(" 1001 "); got != "01001" {
		t.Errorf("trim then pad = %q", got)
	}
}

func TestTrimHint(t *testing.T) {
	tb, err := Read("testdata/spaced-keys.csv", Options{Key: "area"})
	if err != nil {
		t.Fatal(err)
	}
	rep, err := Join(zeroLayer(), "code", tb, []string{"people"})
	if err != nil {
		t.Fatal(err)
	}
	// " 01001" and "01003 " match after trimming; 01005 matches as it is.
	if want := []string{"2 keys would match with trim = true"}; rep.Matched != 1 || !reflect.DeepEqual(rep.Hints, want) {
		t.Errorf("matched %d, hints %q; want 1, %q", rep.Matched, rep.Hints, want)
	}
}

// Delimiters other than a comma (RFC 4180 section 2 names the comma; other
// separators are common practice for locales whose decimal mark is a
// comma, and for tab-separated exports).
func TestDelimiters(t *testing.T) {
	for _, c := range []struct {
		file  string
		delim rune
	}{{"semicolon.csv", ';'}, {"tab.csv", '\t'}} {
		tb, err := Read("testdata/"+c.file, Options{Key: "area", Delimiter: c.delim})
		if err != nil {
			t.Fatalf("%s: %v", c.file, err)
		}
		v, _, err := tb.Column("people")
		if err != nil || !reflect.DeepEqual(v, []float64{120, 85}) || !reflect.DeepEqual(tb.Keys, []string{"01001", "01003"}) {
			t.Errorf("%s: %v %q %v", c.file, v, tb.Keys, err)
		}
	}
	// Read with commas, the semicolon table is one column and has no key.
	_, err := Read("testdata/semicolon.csv", Options{Key: "area"})
	if want := `table: testdata/semicolon.csv: line 1: key column "area" is not in the header (columns: area;people;note)`; err == nil || err.Error() != want {
		t.Errorf("got %v\nwant %s", err, want)
	}
}

func TestEveryBadCellIsListed(t *testing.T) {
	tb, err := Read("testdata/many-bad.csv", Options{Key: "area"})
	if err != nil {
		t.Fatal(err)
	}
	_, _, err = tb.Column("people")
	if _, ok := err.(CellErrors); !ok || len(err.(CellErrors)) != 25 {
		t.Fatalf("err %T %v; want 25 CellErrors", err, err)
	}
	lines := strings.Split(err.Error(), "\n")
	if len(lines) != 1+MaxListedCells+1 {
		t.Fatalf("%d lines:\n%s", len(lines), err)
	}
	if lines[0] != "table: testdata/many-bad.csv: 25 cells are not counts:" ||
		lines[1] != `  line 2: column "people": "n/a0" is not a number` ||
		lines[20] != `  line 21: column "people": "n/a19" is not a number` ||
		lines[21] != "  and 5 more" {
		t.Errorf("message:\n%s", err)
	}
}
