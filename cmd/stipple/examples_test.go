package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/read"
)

// TestFormatExamplesDrawTheSameDots renders the four input-format examples
// (GeoJSON; a Web Mercator shapefile that GDAL wrote; a GeoPackage; areas
// joined to a CSV table) and checks they make byte-identical tiles: the
// readers, the reprojection and the join all deliver the same areas and
// counts.
func TestFormatExamplesDrawTheSameDots(t *testing.T) {
	var ref map[string][]byte
	for _, name := range []string{"geojson", "shapefile", "geopackage", "table-join"} {
		out := t.TempDir()
		var stdout, stderr bytes.Buffer
		code := run(context.Background(), []string{"render", "../../examples/formats/" + name + ".toml", "--out", out, "--max-zoom", "12"}, &stdout, &stderr)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", name, code, stderr.String())
		}
		if !strings.Contains(stdout.String(), "not drawn: 0 people in areas") {
			t.Errorf("%s: summary lacks the not-drawn line:\n%s", name, stdout.String())
		}
		got := tree(t, out)
		pngs := map[string][]byte{}
		for k, v := range got {
			if strings.HasSuffix(k, ".png") && !strings.HasPrefix(k, "legend") {
				pngs[k] = v
			}
		}
		if ref == nil {
			ref = pngs
			if len(ref) < 4 {
				t.Fatalf("geojson example wrote only %d tiles", len(ref))
			}
			continue
		}
		if len(pngs) != len(ref) {
			t.Errorf("%s wrote %d tiles; geojson %d", name, len(pngs), len(ref))
		}
		for k, v := range ref {
			if !bytes.Equal(v, pngs[k]) {
				t.Errorf("%s: tile %s differs from the GeoJSON example's", name, k)
			}
		}
	}
}

func TestJoinReportAndPeopleInUnmatchedRows(t *testing.T) {
	dir := t.TempDir()
	src := "../../examples/formats/"
	for _, f := range []string{"old-quay-areas.geojson", "table-join.toml"} {
		b, err := os.ReadFile(src + f)
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(dir, f), b, 0o644)
	}
	csv, _ := os.ReadFile(src + "old-quay-counts.csv")
	// One extra row whose area does not exist: its 17 + 4 people must be
	// reported as not drawn.
	csv = append(csv, []byte("QM-2026-QM9999,\"Nowhere\",17,0,0,4,0,0\n")...)
	os.WriteFile(filepath.Join(dir, "old-quay-counts.csv"), csv, 0o644)
	var stdout, stderr bytes.Buffer
	code := run(context.Background(), []string{"render", filepath.Join(dir, "table-join.toml"), "--max-zoom", "11"}, &stdout, &stderr)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr.String())
	}
	out := stdout.String()
	for _, want := range []string{
		"73 of 73 features matched; 73 of 74 rows used",
		`rows without a feature (1): "QM9999"`,
		"not drawn: 21 people in table rows that match no area",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

func TestInspectDescribesAndPlans(t *testing.T) {
	var stdout, stderr bytes.Buffer
	code := run(context.Background(), []string{"inspect", "../../examples/formats/old-quay.shp", "--map", "../../examples/formats/shapefile.toml"}, &stdout, &stderr)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr.String())
	}
	out := stdout.String()
	for _, want := range []string{
		"(ESRI Shapefile)",
		`CRS:         "WGS_1984_Web_Mercator_Auxiliary_Sphere": +proj=webmerc +datum=WGS84`,
		"features:    73 (Polygon 73, MultiPolygon 0, empty 0)",
		"tamsic               integer       73 non-empty  sum 60,324",
		"Tamsic                           60,324 people         12072 dots (expected 12064.8)", // render's own allocation (seeded per-area rounding)
		"z11",
		"estimate:",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("inspect output lacks %q:\n%s", want, out)
		}
	}
}

func TestInitWritesAMapThatRenders(t *testing.T) {
	dir := t.TempDir()
	mapPath := filepath.Join(dir, "m.toml")
	abs, _ := filepath.Abs("../../examples/formats/old-quay.gpkg")
	var stdout, stderr bytes.Buffer
	if code := run(context.Background(), []string{"init", abs, "-o", mapPath}, &stdout, &stderr); code != 0 {
		t.Fatalf("init: exit %d: %s", code, stderr.String())
	}
	b, _ := os.ReadFile(mapPath)
	text := string(b)
	for _, want := range []string{`id = "id"`, "[[category]]\nkey = \"orvesh\"", `color = "#0072B2"`, "Okabe & Ito"} {
		if !strings.Contains(text, want) {
			t.Errorf("starter map lacks %q:\n%s", want, text)
		}
	}
	// Uncomment the categories: the starter must then render as it is.
	text = strings.ReplaceAll(text, "# [[category]]", "[[category]]")
	for _, k := range []string{"key", "label", "color", "fields"} {
		text = strings.ReplaceAll(text, "\n# "+k+" = ", "\n"+k+" = ")
	}
	text = strings.Replace(text, "max_zoom = 12", "max_zoom = 10", 1)
	os.WriteFile(mapPath, []byte(text), 0o644)
	stderr.Reset()
	if code := run(context.Background(), []string{"render", mapPath, "--out", filepath.Join(dir, "out")}, new(bytes.Buffer), &stderr); code != 0 {
		t.Fatalf("render of the starter map: exit %d: %s\n%s", code, stderr.String(), text)
	}
	// Refuses to overwrite.
	if code := run(context.Background(), []string{"init", abs, "-o", mapPath}, new(bytes.Buffer), &stderr); code != 1 {
		t.Errorf("init over an existing file: exit %d; want 1", code)
	}
	_ = read.Formats
}
