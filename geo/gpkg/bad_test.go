package gpkg

import (
	"database/sql"
	"encoding/binary"
	"flag"
	"math"
	"os"
	"path/filepath"
	"testing"
)

var update = flag.Bool("update", false, "rewrite testdata/zones.gpkg (needs ogr2ogr) and the broken GeoPackages in testdata/bad/gpkg")

const badDir = "../../testdata/bad/gpkg"

// minimalSchema is the smallest GeoPackage that GDAL would also open: the
// three required tables of GeoPackage 1.3 (§1.1.2.1.1 gpkg_spatial_ref_sys
// Table 18, §1.1.3.1.1 gpkg_contents Table 5, §2.1.5.1.1
// gpkg_geometry_columns Table 9), application_id "GPKG", user_version 10300.
const minimalSchema = `
PRAGMA page_size = 1024;
PRAGMA application_id = 1196444487;
PRAGMA user_version = 10300;
CREATE TABLE gpkg_spatial_ref_sys (srs_name TEXT NOT NULL, srs_id INTEGER NOT NULL PRIMARY KEY,
  organization TEXT NOT NULL, organization_coordsys_id INTEGER NOT NULL, definition TEXT NOT NULL, description TEXT);
INSERT INTO gpkg_spatial_ref_sys VALUES
  ('Undefined Cartesian SRS', -1, 'NONE', -1, 'undefined', NULL),
  ('Undefined geographic SRS', 0, 'NONE', 0, 'undefined', NULL),
  ('WGS 84 geodetic', 4326, 'EPSG', 4326, 'GEOGCS["WGS 84",DATUM["WGS_1984",SPHEROID["WGS 84",6378137,298.257223563]],PRIMEM["Greenwich",0],UNIT["degree",0.0174532925199433]]', NULL);
CREATE TABLE gpkg_contents (table_name TEXT NOT NULL PRIMARY KEY, data_type TEXT NOT NULL,
  identifier TEXT UNIQUE, description TEXT DEFAULT '', last_change DATETIME NOT NULL,
  min_x DOUBLE, min_y DOUBLE, max_x DOUBLE, max_y DOUBLE, srs_id INTEGER);
CREATE TABLE gpkg_geometry_columns (table_name TEXT NOT NULL, column_name TEXT NOT NULL,
  geometry_type_name TEXT NOT NULL, srs_id INTEGER NOT NULL, z TINYINT NOT NULL, m TINYINT NOT NULL,
  CONSTRAINT pk_geom_cols PRIMARY KEY (table_name, column_name));
`

// writeGPKG writes a one-layer GeoPackage whose feature table holds blobs.
func writeGPKG(t *testing.T, path, table, geomType string, blobs ...[]byte) {
	t.Helper()
	os.Remove(path)
	db, err := sql.Open("sqlite", path)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	stmts := []string{
		minimalSchema,
		`CREATE TABLE "` + table + `" (fid INTEGER PRIMARY KEY AUTOINCREMENT NOT NULL, geom ` + geomType + `, zone TEXT)`,
		`INSERT INTO gpkg_contents VALUES ('` + table + `', 'features', '` + table + `', '', '2026-01-01T00:00:00.000Z', 0, 0, 1, 1, 4326)`,
		`INSERT INTO gpkg_geometry_columns VALUES ('` + table + `', 'geom', '` + geomType + `', 4326, 0, 0)`,
	}
	for _, s := range stmts {
		if _, err := db.Exec(s); err != nil {
			t.Fatalf("%s: %v", s, err)
		}
	}
	for i, b := range blobs {
		if _, err := db.Exec(`INSERT INTO "`+table+`" (geom, zone) VALUES (?, ?)`, b, string(rune('a'+i))); err != nil {
			t.Fatal(err)
		}
	}
}

func blob(wkb []byte) []byte {
	return append(gpHeader(binary.LittleEndian, 1, false, 4326), wkb...)
}

// TestWriteExample regenerates testdata/zones.gpkg, the file the examples
// read, with -update: ogr2ogr's GeoPackage of zones.geojson, vacuumed into
// 1 KiB pages to keep it small.
func TestWriteExample(t *testing.T) {
	if !*update {
		t.Skip("run with -update to rewrite testdata/zones.gpkg")
	}
	out := filepath.Join("testdata", "zones.gpkg")
	os.Remove(out)
	toGPKG(t, out, filepath.Join("testdata", "zones.geojson"), "zones", "-nlt", "PROMOTE_TO_MULTI")
	db, err := sql.Open("sqlite", out)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if _, err := db.Exec("PRAGMA page_size = 1024; VACUUM"); err != nil {
		t.Fatal(err)
	}
}

// TestWriteBad regenerates testdata/bad/gpkg with -update.
func TestWriteBad(t *testing.T) {
	if !*update {
		t.Skip("run with -update to rewrite " + badDir)
	}
	le := byteOrder(binary.LittleEndian)
	good := blob(wkbPoly(le, 3, 2, [][][2]float64{a3Outer, a3Hole}))
	dir := badDir
	must := func(err error) {
		if err != nil {
			t.Fatal(err)
		}
	}
	must(os.MkdirAll(dir, 0o755))
	must(os.WriteFile(filepath.Join(dir, "not-sqlite.gpkg"), []byte("zone,people\nnorth,12\n"), 0o644))
	must(os.WriteFile(filepath.Join(dir, "empty.gpkg"), nil, 0o644))

	p := filepath.Join(dir, "no-contents.gpkg")
	os.Remove(p)
	db, err := sql.Open("sqlite", p)
	must(err)
	_, err = db.Exec(`CREATE TABLE zones (fid INTEGER PRIMARY KEY, geom BLOB); INSERT INTO zones (geom) VALUES (x'00')`)
	must(err)
	db.Close()

	wrong := append([]byte(nil), good...)
	wrong[0] = 'X'
	writeGPKG(t, filepath.Join(dir, "wrong-magic.gpkg"), "zones", "POLYGON", good, wrong)
	writeGPKG(t, filepath.Join(dir, "truncated-wkb.gpkg"), "zones", "POLYGON", good[:len(good)-20])
	writeGPKG(t, filepath.Join(dir, "huge-ring-count.gpkg"), "zones", "POLYGON",
		blob(le.AppendUint32([]byte{1, 3, 0, 0, 0}, 0xFFFFFFFF)))
	pt := le.AppendUint64(le.AppendUint64(le.AppendUint32([]byte{1}, 1), math.Float64bits(100)), math.Float64bits(0))
	writeGPKG(t, filepath.Join(dir, "point-layer.gpkg"), "sites", "POINT", blob(pt))
	writeGPKG(t, filepath.Join(dir, "nan-coordinate.gpkg"), "zones", "POLYGON", good,
		blob(wkbPoly(le, 3, 2, [][][2]float64{{{0, 0}, {1, 0}, {1, math.NaN()}, {0, 0}}})))
	writeGPKG(t, filepath.Join(dir, "curve-polygon.gpkg"), "zones", "GEOMETRY", blob(wkbPoly(le, 10, 2, nil)))
	writeGPKG(t, filepath.Join(dir, "srs-mismatch.gpkg"), "zones", "POLYGON",
		append(gpHeader(le, 0, false, 3857), wkbPoly(le, 3, 2, [][][2]float64{a3Outer})...))
}

func TestBadInputs(t *testing.T) {
	for _, tc := range []struct{ file, want string }{
		{"not-sqlite.gpkg", `gpkg: ../../testdata/bad/gpkg/not-sqlite.gpkg: not a SQLite database (a GeoPackage is a SQLite 3 file)`},
		{"empty.gpkg", `gpkg: ../../testdata/bad/gpkg/empty.gpkg: not a SQLite database (a GeoPackage is a SQLite 3 file)`},
		{"missing.gpkg", `gpkg: open ../../testdata/bad/gpkg/missing.gpkg: no such file or directory`},
		{"no-contents.gpkg", `gpkg: ../../testdata/bad/gpkg/no-contents.gpkg: not a GeoPackage: tables gpkg_contents and gpkg_geometry_columns are required`},
		{"wrong-magic.gpkg", `gpkg: ../../testdata/bad/gpkg/wrong-magic.gpkg: feature 1 (id "2"): field "geom": geometry blob does not start with the GeoPackage magic "GP" (found 0x58 0x50)`},
		{"truncated-wkb.gpkg", `gpkg: ../../testdata/bad/gpkg/truncated-wkb.gpkg: feature 0 (id "1"): field "geom": ring 1: truncated WKB: 5 points claimed at offset 93 but only 60 bytes left`},
		{"huge-ring-count.gpkg", `gpkg: ../../testdata/bad/gpkg/huge-ring-count.gpkg: feature 0 (id "1"): field "geom": truncated WKB: 4294967295 rings claimed at offset 5 but only 0 bytes left`},
		{"point-layer.gpkg", `gpkg: ../../testdata/bad/gpkg/point-layer.gpkg: layer "sites" has geometry type POINT; only POLYGON and MULTIPOLYGON areas can be read`},
		{"nan-coordinate.gpkg", `gpkg: ../../testdata/bad/gpkg/nan-coordinate.gpkg: feature 1 (id "2"): field "geom": ring 0 point 2 has a non-finite coordinate (1, NaN)`},
		{"curve-polygon.gpkg", `gpkg: ../../testdata/bad/gpkg/curve-polygon.gpkg: feature 0 (id "1"): field "geom": geometry type CurvePolygon is not supported (only Polygon and MultiPolygon)`},
		{"srs-mismatch.gpkg", `gpkg: ../../testdata/bad/gpkg/srs-mismatch.gpkg: feature 0 (id "1"): field "geom": geometry srs_id 3857 differs from the layer's srs_id 4326`},
	} {
		_, err := Read(filepath.Join(badDir, tc.file), Options{})
		if err == nil || err.Error() != tc.want {
			t.Errorf("%s:\n got %v\nwant %s", tc.file, err, tc.want)
		}
	}
	// Layers lists a point layer; only Read refuses it.
	ls, err := Layers(filepath.Join(badDir, "point-layer.gpkg"))
	if err != nil || len(ls) != 1 || ls[0].GeometryType != "POINT" {
		t.Errorf("Layers(point-layer) = %+v, %v", ls, err)
	}
}
