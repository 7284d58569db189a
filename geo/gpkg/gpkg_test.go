package gpkg

import (
	"encoding/json"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/encoding/wkb"
	"github.com/twpayne/go-geom"
	"github.com/twpayne/go-geom/xy"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/reftool"
)

// toGPKG converts a GeoJSON file into layer name of the GeoPackage out with
// GDAL's ogr2ogr (Debian gdal-bin). Extra arguments go before the files.
func toGPKG(t *testing.T, out, in, name string, extra ...string) {
	t.Helper()
	bin := reftool.Need(t, "ogr2ogr")
	args := append([]string{"-f", "GPKG"}, extra...)
	args = append(args, out, in, "-nln", name)
	cmd := exec.Command(bin, args...)
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("ogr2ogr %v: %v\n%s", args, err, b)
	}
}

// jsonFeature is a GeoJSON feature parsed here with encoding/json alone, as
// an independent reading of the fixture (RFC 7946 §3.1.6, §3.1.7, §3.2).
type jsonFeature struct {
	Props map[string]any
	Geom  [][][][2]float64 // polygons, rings, points
}

func readGeoJSON(t *testing.T, path string) []jsonFeature {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []struct {
			Properties json.RawMessage
			Geometry   struct {
				Type        string
				Coordinates json.RawMessage
			}
		}
	}
	if err := json.Unmarshal(b, &fc); err != nil {
		t.Fatal(err)
	}
	var out []jsonFeature
	for _, f := range fc.Features {
		var jf jsonFeature
		dec := json.NewDecoder(strings.NewReader(string(f.Properties)))
		dec.UseNumber()
		if err := dec.Decode(&jf.Props); err != nil {
			t.Fatal(err)
		}
		switch f.Geometry.Type {
		case "Polygon":
			var p [][][2]float64
			if err := json.Unmarshal(f.Geometry.Coordinates, &p); err != nil {
				t.Fatal(err)
			}
			jf.Geom = [][][][2]float64{p}
		case "MultiPolygon":
			if err := json.Unmarshal(f.Geometry.Coordinates, &jf.Geom); err != nil {
				t.Fatal(err)
			}
		default:
			t.Fatalf("%s: fixture geometry %s", path, f.Geometry.Type)
		}
		out = append(out, jf)
	}
	return out
}

func flat(r orb.Ring) []float64 {
	out := make([]float64, 0, 2*len(r))
	for _, p := range r {
		out = append(out, p[0], p[1])
	}
	return out
}

// checkGeometry compares got with the GeoJSON polygons: same number of
// polygons and rings; each ring has the source's vertices, in the source's
// order or reversed; outer rings counter-clockwise and holes clockwise as
// judged by go-geom's xy.IsRingCounterClockwise (RFC 7946 §3.1.6).
// reversed counts rings that came back in reverse order.
func checkGeometry(t *testing.T, what string, got orb.MultiPolygon, want [][][][2]float64) (reversed int) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d polygons, want %d", what, len(got), len(want))
	}
	for i := range want {
		if len(got[i]) != len(want[i]) {
			t.Fatalf("%s: polygon %d has %d rings, want %d", what, i, len(got[i]), len(want[i]))
		}
		for j, wr := range want[i] {
			gr := got[i][j]
			same, rev := len(gr) == len(wr), len(gr) == len(wr)
			for k := range wr {
				if !same && !rev {
					break
				}
				if k < len(gr) && gr[k] != orb.Point(wr[k]) {
					same = false
				}
				if k < len(gr) && gr[len(gr)-1-k] != orb.Point(wr[k]) {
					rev = false
				}
			}
			if !same && !rev {
				t.Errorf("%s: polygon %d ring %d = %v, want %v (either order)", what, i, j, gr, wr)
				continue
			}
			if !same {
				reversed++
			}
			ccw := xy.IsRingCounterClockwise(geom.XY, flat(gr))
			if ccw != (j == 0) {
				t.Errorf("%s: polygon %d ring %d counter-clockwise = %v, want %v", what, i, j, ccw, j == 0)
			}
		}
	}
	return reversed
}

// checkProps compares Props with GeoJSON properties: JSON integers must
// come back as int64, other numbers as float64, booleans as bool (GDAL
// stores them in a BOOLEAN column), strings and null as they are.
func checkProps(t *testing.T, what string, got map[string]any, want map[string]any) {
	t.Helper()
	if len(got) != len(want) {
		t.Errorf("%s: %d props %v, want %d %v", what, len(got), got, len(want), want)
	}
	for k, w := range want {
		g, ok := got[k]
		if !ok {
			t.Errorf("%s: prop %q missing", what, k)
			continue
		}
		var exp any = w
		if n, isNum := w.(json.Number); isNum {
			if i, err := n.Int64(); err == nil {
				exp = i
			} else if f, err := n.Float64(); err == nil {
				exp = f
			}
		}
		if !reflect.DeepEqual(g, exp) {
			t.Errorf("%s: prop %q = %#v, want %#v", what, k, g, exp)
		}
	}
}

func TestReadRFC7946Examples(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range []struct {
		fixture string
		nlt     []string
	}{
		{"rfc7946-a3.geojson", nil},                                  // RFC 7946 Appendix A.3
		{"rfc7946-a6.geojson", nil},                                  // RFC 7946 Appendix A.6
		{"rfc7946-a3.geojson", []string{"-nlt", "PROMOTE_TO_MULTI"}}, // same, stored as MultiPolygon
	} {
		t.Run(tc.fixture+strings.Join(tc.nlt, ""), func(t *testing.T) {
			src := filepath.Join("testdata", tc.fixture)
			out := filepath.Join(dir, strings.TrimSuffix(tc.fixture, ".geojson")+strings.Join(tc.nlt, "")+".gpkg")
			toGPKG(t, out, src, "areas", tc.nlt...)
			want := readGeoJSON(t, src)
			layer, err := Read(out, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if layer.Name != "areas" || layer.CRS != "EPSG:4326" || layer.Path != out {
				t.Errorf("layer name %q crs %q path %q", layer.Name, layer.CRS, layer.Path)
			}
			if !reflect.DeepEqual(layer.Fields, []string{"name"}) {
				t.Errorf("fields %v", layer.Fields)
			}
			if len(layer.Features) != len(want) {
				t.Fatalf("%d features, want %d", len(layer.Features), len(want))
			}
			for i, f := range layer.Features {
				if f.Index != i || f.ID != "1" {
					t.Errorf("feature %d: index %d id %q", i, f.Index, f.ID)
				}
				// The appendix examples are already RFC-wound: nothing reversed.
				if n := checkGeometry(t, tc.fixture, f.Geometry, want[i].Geom); n != 0 {
					t.Errorf("%d rings reversed, want 0", n)
				}
				checkProps(t, tc.fixture, f.Props, want[i].Props)
			}
		})
	}
}

func TestReadAttributesAndIDs(t *testing.T) {
	dir := t.TempDir()
	src := filepath.Join("testdata", "zones.geojson")
	out := filepath.Join(dir, "zones.gpkg")
	toGPKG(t, out, src, "zones", "-nlt", "PROMOTE_TO_MULTI")
	want := readGeoJSON(t, src)

	layer, err := Read(out, Options{IDField: "zone"})
	if err != nil {
		t.Fatal(err)
	}
	wantFields := []string{"zone", "label", "households", "share", "coastal", "note", "surveyed"}
	if !reflect.DeepEqual(layer.Fields, wantFields) {
		t.Errorf("fields %v, want %v", layer.Fields, wantFields)
	}
	if len(layer.Features) != 3 {
		t.Fatalf("%d features", len(layer.Features))
	}
	reversed := 0
	for i, f := range layer.Features {
		if wantID := want[i].Props["zone"].(string); f.ID != wantID {
			t.Errorf("feature %d id %q, want %q (leading zeros kept)", i, f.ID, wantID)
		}
		reversed += checkGeometry(t, f.ID, f.Geometry, want[i].Geom)
		checkProps(t, f.ID, f.Props, want[i].Props)
	}
	// Two rings are stored against RFC 7946 winding (see the notes): the
	// outer ring of zone "010" and the hole of zone "0100".
	if reversed != 2 {
		t.Errorf("%d rings reversed, want 2", reversed)
	}
	if got := layer.Features[1].Geometry[0][0]; got[1] != (orb.Point{4.7, 51.0}) {
		t.Errorf("zone 010 ring %v: want the source ring reversed", got)
	}

	// Without IDField the id is the fid that ogr2ogr assigned: 1, 2, 3.
	layer, err = Read(out, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for i, f := range layer.Features {
		if want := string(rune('1' + i)); f.ID != want {
			t.Errorf("feature %d: id %q, want %q", i, f.ID, want)
		}
	}

	_, err = Read(out, Options{IDField: "zonecode"})
	wantErr := `gpkg: ` + out + `: id field "zonecode" is not a column of "zones" (columns: zone, label, households, share, coastal, note, surveyed)`
	if err == nil || err.Error() != wantErr {
		t.Errorf("got %v\nwant %s", err, wantErr)
	}
}

func TestLayersAndChoice(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "two.gpkg")
	toGPKG(t, out, filepath.Join("testdata", "zones.geojson"), "zones", "-nlt", "PROMOTE_TO_MULTI")
	toGPKG(t, out, filepath.Join("testdata", "rfc7946-a3.geojson"), "blocks", "-update")

	ls, err := Layers(out)
	if err != nil {
		t.Fatal(err)
	}
	want := []LayerInfo{
		{Name: "blocks", GeometryColumn: "geom", GeometryType: "POLYGON", SRSID: 4326},
		{Name: "zones", GeometryColumn: "geom", GeometryType: "GEOMETRY", SRSID: 4326},
	}
	if !reflect.DeepEqual(ls, want) {
		t.Errorf("Layers = %+v\nwant %+v", ls, want)
	}

	_, err = Read(out, Options{})
	wantErr := `gpkg: ` + out + `: 2 feature tables ("blocks", "zones"): choose one with the layer option`
	if err == nil || err.Error() != wantErr {
		t.Errorf("got %v\nwant %s", err, wantErr)
	}
	_, err = Read(out, Options{Layer: "roads"})
	wantErr = `gpkg: ` + out + `: no feature table "roads" (tables: "blocks", "zones")`
	if err == nil || err.Error() != wantErr {
		t.Errorf("got %v\nwant %s", err, wantErr)
	}
	for _, name := range []string{"blocks", "zones"} {
		l, err := Read(out, Options{Layer: name})
		if err != nil {
			t.Fatal(err)
		}
		if l.Name != name {
			t.Errorf("read %q, got layer %q", name, l.Name)
		}
	}

	// Caps: zones has 3 features with 5, 5 and 4 + 5 + 5 vertices.
	_, err = Read(out, Options{Layer: "zones", MaxFeatures: 2})
	wantErr = `gpkg: ` + out + `: more than 2 features (Options.MaxFeatures)`
	if err == nil || err.Error() != wantErr {
		t.Errorf("got %v\nwant %s", err, wantErr)
	}
	_, err = Read(out, Options{Layer: "zones", MaxVertices: 23})
	wantErr = `gpkg: ` + out + `: feature 2 (id "3"): field "geom": polygon 1: ring 1 has 5 points, over the vertex limit (4 left of Options.MaxVertices)`
	if err == nil || err.Error() != wantErr {
		t.Errorf("got %v\nwant %s", err, wantErr)
	}
	if _, err = Read(out, Options{Layer: "zones", MaxVertices: 24}); err != nil {
		t.Errorf("24 vertices allowed: %v", err)
	}
	var ge *geo.Error
	_, err = Read(out, Options{Layer: "zones", MaxVertices: 23})
	if !errors.As(err, &ge) || ge.Index != 2 || ge.ID != "3" || ge.Field != "geom" {
		t.Errorf("errors.As(%v) = %+v", err, ge)
	}
}

// TestUSCounties reads the shared county GeoJSON converted by ogr2ogr and
// compares every ring and count with the GeoJSON read by encoding/json.
func TestUSCounties(t *testing.T) {
	src := reftool.SharedData(t, "us-counties.geojson")
	out := filepath.Join(t.TempDir(), "counties.gpkg")
	toGPKG(t, out, src, "counties", "-nlt", "PROMOTE_TO_MULTI")
	want := readGeoJSON(t, src)
	layer, err := Read(out, Options{IDField: "geoid"})
	if err != nil {
		t.Fatal(err)
	}
	if len(layer.Features) != 3230 || len(want) != 3230 {
		t.Fatalf("%d features, GeoJSON %d, want 3230 (shared/data/README.md)", len(layer.Features), len(want))
	}
	var total int64
	for i, f := range layer.Features {
		if f.ID != want[i].Props["geoid"] {
			t.Fatalf("feature %d id %q, want %v", i, f.ID, want[i].Props["geoid"])
		}
		if n := checkGeometry(t, f.ID, f.Geometry, want[i].Geom); n != 0 {
			t.Errorf("%s: %d rings reversed; the source is RFC 7946 wound", f.ID, n)
		}
		checkProps(t, f.ID, f.Props, want[i].Props)
		for _, k := range []string{"grp_a", "grp_b", "grp_c", "grp_d", "grp_e"} {
			total += f.Props[k].(int64)
		}
	}
	// shared/data/README.md: the synthetic groups sum to 308,745,538.
	if total != 308745538 {
		t.Errorf("total %d, want 308745538", total)
	}
}

// TestWKBAgainstOrb decodes every county blob that GDAL wrote twice: with
// decodeWKB and with orb's independent encoding/wkb decoder, and compares
// them value for value (before the winding step, which orb does not do).
func TestWKBAgainstOrb(t *testing.T) {
	src := reftool.SharedData(t, "us-counties.geojson")
	out := filepath.Join(t.TempDir(), "counties.gpkg")
	toGPKG(t, out, src, "counties", "-nlt", "PROMOTE_TO_MULTI")
	db, err := open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	rows, err := db.Query(`SELECT geom FROM counties ORDER BY fid`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	n := 0
	for rows.Next() {
		var b []byte
		if err := rows.Scan(&b); err != nil {
			t.Fatal(err)
		}
		h, err := parseHeader(b)
		if err != nil {
			t.Fatal(err)
		}
		ours, err := decodeWKB(b[h.size:], 1<<30)
		if err != nil {
			t.Fatal(err)
		}
		g, err := wkb.Unmarshal(b[h.size:])
		if err != nil {
			t.Fatal(err)
		}
		theirs, ok := g.(orb.MultiPolygon)
		if !ok {
			t.Fatalf("orb decoded a %T", g)
		}
		if !reflect.DeepEqual(ours, theirs) {
			t.Fatalf("blob %d: decoders differ", n)
		}
		n++
	}
	if n != 3230 {
		t.Errorf("%d blobs, want 3230", n)
	}
}

func BenchmarkReadCounties(b *testing.B) {
	src := reftool.SharedData(b, "us-counties.geojson")
	bin := reftool.Need(b, "ogr2ogr")
	out := filepath.Join(b.TempDir(), "counties.gpkg")
	if msg, err := exec.Command(bin, "-f", "GPKG", "-nlt", "PROMOTE_TO_MULTI", out, src, "-nln", "counties").CombinedOutput(); err != nil {
		b.Fatalf("%v %s", err, msg)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Read(out, Options{IDField: "geoid"}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestOddFileName reads a file whose name holds characters that SQLite URIs
// give meaning to (https://www.sqlite.org/uri.html: ?, #, %, spaces), and
// checks that opening does not create or change a missing file.
func TestOddFileName(t *testing.T) {
	b, err := os.ReadFile("testdata/zones.gpkg")
	if err != nil {
		t.Fatal(err)
	}
	dir := filepath.Join(t.TempDir(), "a dir #1")
	os.MkdirAll(dir, 0o755)
	p := filepath.Join(dir, "zones?mode=rwc&x=%41.gpkg")
	if err := os.WriteFile(p, b, 0o444); err != nil {
		t.Fatal(err)
	}
	l, err := Read(p, Options{})
	if err != nil || len(l.Features) != 3 {
		t.Fatalf("Read(%q): %v", p, err)
	}
	after, _ := os.ReadFile(p)
	if !reflect.DeepEqual(after, b) {
		t.Errorf("file changed by reading")
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("reading left %d files in %s", len(entries), dir)
	}
}
