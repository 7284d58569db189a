package read

import (
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/reftool"
	"github.com/stipple-maps/stipple/geo/table"
)

// countTexts are count texts as they reach stipple from a text attribute or
// a CSV cell, with what every format must make of them: one rule,
// geo.ParseDecimal's. strconv.ParseFloat alone reads "0x1p4" as 16, "1_000"
// as 1000 and "inf" as +Inf (Go strconv documentation, ParseFloat); a
// count refuses them. want is the value, or a text the error contains.
var countTexts = []struct {
	text string
	want any
}{
	{"16", 16.0},
	{" 12.5 ", 12.5},
	{"+7", 7.0},
	{"007", 7.0},
	{"1e3", 1000.0},
	{"1.5E2", 150.0},
	{".5", 0.5},
	{"0", 0.0},
	{"0x1p4", `"0x1p4" is not a number`},
	{"0x10", `"0x10" is not a number`},
	{"1_000", `"1_000" is not a number`},
	{"inf", `"inf" is not a finite number`},
	{"Infinity", `"Infinity" is not a finite number`},
	{"NaN", `"NaN" is not a finite number`},
	{"1e400", `"1e400" is too large for a number`},
	{"-3", "negative"},
	{"12 people", `"12 people" is not a number`},
	{"1.2.3", `"1.2.3" is not a number`},
}

// writeCountGeoJSON writes one square feature per count text, its id the
// case number and its "pop" property the text as a JSON string.
func writeCountGeoJSON(t *testing.T, path string) {
	t.Helper()
	var feats []string
	for i, c := range countTexts {
		x := float64(i) * 0.01
		props, _ := json.Marshal(map[string]string{"case": fmt.Sprint(i), "pop": c.text})
		feats = append(feats, fmt.Sprintf(`{"type":"Feature","properties":%s,"geometry":{"type":"Polygon","coordinates":[[[%g,0],[%g,0],[%g,0.005],[%g,0.005],[%g,0]]]}}`,
			props, x, x+0.005, x+0.005, x, x))
	}
	doc := `{"type":"FeatureCollection","features":[` + strings.Join(feats, ",\n") + "]}\n"
	if err := os.WriteFile(path, []byte(doc), 0o644); err != nil {
		t.Fatal(err)
	}
}

func checkCount(t *testing.T, format string, i int, got float64, err error) {
	t.Helper()
	c := countTexts[i]
	switch w := c.want.(type) {
	case float64:
		if err != nil || got != w {
			t.Errorf("%s: %q = %v, %v; want %v", format, c.text, got, err, w)
		}
	case string:
		if err == nil || !strings.Contains(err.Error(), w) {
			t.Errorf("%s: %q = %v, %v; want an error containing %s", format, c.text, got, err, w)
		}
	}
}

// TestCountTextsInEveryFormat reads the same count texts from GeoJSON,
// a Shapefile's DBF (character field) and a GeoPackage (TEXT column), both
// written by ogr2ogr, and from a CSV cell. DBF numeric (N, F) fields go
// through the same parser: see TestDBFValues in package shapefile.
func TestCountTextsInEveryFormat(t *testing.T) {
	dir := t.TempDir()
	src := filepath.Join(dir, "counts.geojson")
	writeCountGeoJSON(t, src)
	paths := map[string]string{"GeoJSON": src}
	if ogrWanted() {
		ogr := reftool.Need(t, "ogr2ogr")
		for _, f := range []struct{ name, driver, file string }{
			{"Shapefile DBF", "ESRI Shapefile", "counts.shp"},
			{"GeoPackage", "GPKG", "counts.gpkg"},
		} {
			out := filepath.Join(dir, f.file)
			if b, err := exec.Command(ogr, "-f", f.driver, out, src).CombinedOutput(); err != nil {
				t.Fatalf("ogr2ogr %s: %v\n%s", f.driver, err, b)
			}
			paths[f.name] = out
		}
	} else {
		t.Log("ogr2ogr not installed: Shapefile and GeoPackage cases skipped")
	}
	for format, p := range paths {
		res, err := File(p, Options{IDField: "case"})
		if err != nil {
			t.Fatalf("%s: %v", format, err)
		}
		if len(res.Layer.Features) != len(countTexts) {
			t.Fatalf("%s: %d features; want %d", format, len(res.Layer.Features), len(countTexts))
		}
		for _, f := range res.Layer.Features {
			var i int
			fmt.Sscan(f.ID, &i)
			n, err := geo.Count(p, &f, []string{"pop"})
			checkCount(t, format, i, n, err)
		}
	}

	// CSV: the same texts as cells (RFC 4180 quoting, so " 12.5 " keeps its
	// spaces).
	var b strings.Builder
	b.WriteString("case,pop\n")
	for i, c := range countTexts {
		fmt.Fprintf(&b, "%d,%q\n", i, c.text)
	}
	csvPath := filepath.Join(dir, "counts.csv")
	if err := os.WriteFile(csvPath, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	tb, err := table.Read(csvPath, table.Options{Key: "case"})
	if err != nil {
		t.Fatal(err)
	}
	for i := range countTexts {
		n, err := tb.Number(i, "pop")
		checkCount(t, "CSV", i, n, err)
	}
}

// ogrWanted: ogr2ogr is used when installed, and required with
// STIPPLE_REQUIRE_TOOLS=1; without it the GeoJSON and CSV cases still run.
func ogrWanted() bool {
	_, err := exec.LookPath("ogr2ogr")
	return err == nil || reftool.Required()
}
