package shapefile

import (
	"bufio"
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/reftool"
)

// GDAL round trips: GeoJSON fixtures (RFC 7946 Appendix A.3 and A.6, and
// invented areas) are converted to shapefiles by ogr2ogr (Debian gdal-bin)
// and read back; rings and values must equal the GeoJSON as parsed by
// encoding/json. RFC 7946 §3.1.6 orientation on input (outer
// counter-clockwise) means that GDAL writes it reversed (the shapefile's
// clockwise outer) and this package reverses it again, so vertex order
// matches exactly.
func TestGDALRoundTrip(t *testing.T) {
	ogr := reftool.Need(t, "ogr2ogr")
	ogrinfo := reftool.Need(t, "ogrinfo")
	cases := []struct {
		fixture string
		enc     string // -lco ENCODING=
		cpg     string // .cpg GDAL writes ("" = none)
		ldid    byte   // DBF byte 29 GDAL writes
	}{
		{"rfc7946-a3", "UTF-8", "UTF-8", 0},
		{"rfc7946-a6", "UTF-8", "UTF-8", 0},
		{"vellmora", "UTF-8", "UTF-8", 0},
		{"vellmora", "ISO-8859-1", "ISO-8859-1", 0},
		{"vellmora", "CP1252", "CP1252", 0},
		{"vellmora", "LDID/87", "", 0x57},
		{"cp1252", "CP1252", "CP1252", 0},
		{"cp1252", "LDID/3", "", 0x03},
	}
	for _, c := range cases {
		t.Run(c.fixture+"_"+strings.ReplaceAll(c.enc, "/", ""), func(t *testing.T) {
			in := filepath.Join("testdata", c.fixture+".geojson")
			out := filepath.Join(t.TempDir(), c.fixture+".shp")
			cmd := exec.Command(ogr, "-f", "ESRI Shapefile", "-lco", "ENCODING="+c.enc, out, in)
			if b, err := cmd.CombinedOutput(); err != nil || len(b) > 0 {
				t.Fatalf("ogr2ogr: %v\n%s", err, b) // any output would be a conversion warning
			}
			stem := strings.TrimSuffix(out, ".shp")
			cpg, err := os.ReadFile(stem + ".cpg")
			if (err == nil) != (c.cpg != "") || (err == nil && strings.TrimSpace(string(cpg)) != c.cpg) {
				t.Fatalf("GDAL wrote .cpg %q (err %v), test expects %q", cpg, err, c.cpg)
			}
			dbf, err := os.ReadFile(stem + ".dbf")
			if err != nil || dbf[29] != c.ldid {
				t.Fatalf("GDAL wrote language driver 0x%02X (err %v), test expects 0x%02X", dbf[29], err, c.ldid)
			}

			l, warns, err := ReadAll(out, Options{IDField: firstField(t, ogrinfo, out)})
			if err != nil {
				t.Fatal(err)
			}
			if len(warns) != 0 {
				t.Errorf("warnings %v", warns)
			}
			want := readGeoJSON(t, in)
			compareLayer(t, l, want, map[string]bool{"active": true})
			if f := gdalFields(t, ogrinfo, out); !reflect.DeepEqual(l.Fields, f) {
				t.Errorf("fields %v, ogrinfo lists %v", l.Fields, f)
			}
			prj, err := os.ReadFile(stem + ".prj")
			if err != nil || l.CRS != strings.TrimSpace(string(prj)) || !strings.HasPrefix(l.CRS, `GEOGCS["GCS_WGS_1984"`) {
				t.Errorf("CRS %q, .prj %q (%v)", l.CRS, prj, err)
			}
			for i, f := range l.Features {
				if f.Index != i {
					t.Errorf("feature %d has index %d", i, f.Index)
				}
				if id, _ := want.Features[i].Properties[l.Fields[0]].(string); f.ID != id {
					t.Errorf("feature %d id %q, want %q", i, f.ID, id)
				}
			}
		})
	}
}

var ogrinfoField = regexp.MustCompile(`^(\w+): \w+ \(\d+\.\d+\)$`)

// gdalFields lists the layer's fields in the order ogrinfo reports them.
func gdalFields(t *testing.T, ogrinfo, path string) []string {
	t.Helper()
	layer := strings.TrimSuffix(filepath.Base(path), ".shp")
	b, err := exec.Command(ogrinfo, "-so", path, layer).CombinedOutput()
	if err != nil {
		t.Fatalf("ogrinfo: %v\n%s", err, b)
	}
	var out []string
	sc := bufio.NewScanner(bytes.NewReader(b))
	for sc.Scan() {
		if m := ogrinfoField.FindStringSubmatch(sc.Text()); m != nil {
			out = append(out, m[1])
		}
	}
	return out
}

func firstField(t *testing.T, ogrinfo, path string) string {
	f := gdalFields(t, ogrinfo, path)
	if len(f) == 0 {
		t.Fatal("ogrinfo lists no fields")
	}
	return f[0]
}

// TestCommittedGDALFixture reads testdata/vellmora/vellmora.shp, written
// once by ogr2ogr 3.6.2 from testdata/vellmora.geojson (-lco ENCODING=UTF-8),
// so the round trip is checked without GDAL too.
func TestCommittedGDALFixture(t *testing.T) {
	l, warns, err := ReadAll(filepath.Join("testdata", "vellmora", "vellmora.shp"), Options{IDField: "code"})
	if err != nil {
		t.Fatal(err)
	}
	if len(warns) != 0 {
		t.Errorf("warnings %v", warns)
	}
	compareLayer(t, l, readGeoJSON(t, filepath.Join("testdata", "vellmora.geojson")), map[string]bool{"active": true})
	if want := []string{"code", "name", "pop", "big", "share", "founded", "active"}; !reflect.DeepEqual(l.Fields, want) {
		t.Errorf("fields %v", l.Fields)
	}
	if ids := []string{l.Features[0].ID, l.Features[1].ID, l.Features[2].ID}; !reflect.DeepEqual(ids, []string{"007", "012", "100"}) {
		t.Errorf("ids %v", ids)
	}
}

// TestLDIDVsGDAL checks the language driver table against GDAL's reading:
// for each id in ldidPages, a table without .cpg holds one record per byte
// 0x80..0xFF, and ogr2ogr's GeoJSON of it must give the same characters as
// this package (bytes a code page leaves undefined are skipped on both
// sides).
func TestLDIDVsGDAL(t *testing.T) {
	ogr := reftool.Need(t, "ogr2ogr")
	ids := make([]int, 0, len(ldidPages))
	for id := range ldidPages {
		ids = append(ids, int(id))
	}
	slices.Sort(ids)
	for _, id := range ids {
		t.Run(fmt.Sprintf("0x%02X", id), func(t *testing.T) {
			var shapes []tShape
			var rows [][]string
			for b := 0x80; b <= 0xFF; b++ {
				shapes = append(shapes, tShape{typ: typePolygon, parts: triangle})
				rows = append(rows, []string{string([]byte{byte(b)})})
			}
			shp, shx := buildSHP(typePolygon, shapes)
			dbf := buildDBF(byte(id), []tField{{"c", 'C', 1, 0}}, rows, nil)
			dir := t.TempDir()
			path := writeSet(t, dir, "ldid", map[string][]byte{".shp": shp, ".shx": shx, ".dbf": dbf})
			out := filepath.Join(dir, "ldid.geojson")
			if b, err := exec.Command(ogr, "-f", "GeoJSON", out, path).CombinedOutput(); err != nil {
				t.Fatalf("ogr2ogr: %v\n%s", err, b)
			}
			want := readGeoJSON(t, out)
			l, warns, err := ReadAll(path, Options{})
			if err != nil || len(warns) != 0 {
				t.Fatalf("%v %v", err, warns)
			}
			same := 0
			for i, f := range l.Features {
				got, _ := f.Props["c"].(string)
				w, _ := want.Features[i].Properties["c"].(string)
				if got == "\uFFFD" || w == "" || w == "?" || w == "\uFFFD" {
					continue
				}
				if got != w {
					t.Errorf("byte 0x%02X: %q (U+%04X), GDAL %q", 0x80+i, got, []rune(got)[0], w)
				}
				same++
			}
			if same < 100 {
				t.Errorf("only %d of 128 bytes compared", same)
			}
		})
	}
}
