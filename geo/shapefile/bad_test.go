package shapefile

import (
	"bytes"
	"encoding/binary"
	"errors"
	"flag"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo"
)

var update = flag.Bool("update", false, "rewrite the generated files under testdata/bad/shapefile and geo/shapefile/testdata")

const badDir = "../../testdata/bad/shapefile"

// The base of every broken set: two polygon records and a three-field table.
var (
	baseFields = []tField{{"id", 'C', 4, 0}, {"pop", 'N', 10, 0}, {"share", 'N', 12, 3}}
	baseRows   = [][]string{{"a", "120", "0.500"}, {"b", "80", "0.250"}}
	// Record 1: clockwise square with a counter-clockwise hole (Technical
	// Description, "Polygon": holes counter-clockwise).
	squareWithHole = [][][2]float64{
		{{0, 0}, {0, 10}, {10, 10}, {10, 0}, {0, 0}},
		{{2, 2}, {8, 2}, {8, 8}, {2, 8}, {2, 2}},
	}
	// Record 2: clockwise triangle.
	triangle = [][][2]float64{{{20, 0}, {20, 5}, {25, 0}, {20, 0}}}
)

func baseShapes() []tShape {
	return []tShape{{typ: typePolygon, parts: squareWithHole}, {typ: typePolygon, parts: triangle}}
}

func set(shapes []tShape, fields []tField, rows [][]string, deleted map[int]bool) map[string][]byte {
	shp, shx := buildSHP(typePolygon, shapes)
	return map[string][]byte{".shp": shp, ".shx": shx, ".dbf": buildDBF(0, fields, rows, deleted), ".cpg": []byte("UTF-8")}
}

func baseSet() map[string][]byte { return set(baseShapes(), baseFields, baseRows, nil) }

func be32(b []byte, off int, v int32)           { binary.BigEndian.PutUint32(b[off:], uint32(v)) }
func le32(b []byte, off int, v int32)           { binary.LittleEndian.PutUint32(b[off:], uint32(v)) }
func le16(b []byte, off int, v uint16)          { binary.LittleEndian.PutUint16(b[off:], v) }
func fixLength(b []byte) []byte                 { be32(b, 24, int32(len(b)/2)); return b }
func withShape(i int, s tShape) []tShape        { sh := baseShapes(); sh[i] = s; return sh }
func patched(c []byte, off int, v int32) []byte { c = slices.Clone(c); le32(c, off, v); return c }

// badCase is one committed broken file set and what reading it must say.
type badCase struct {
	name  string
	files func() map[string][]byte
	err   string   // exact error text ("" = must read)
	warn  []string // exact warnings when err == ""
	feats int      // features expected when err == ""
}

func p(name, ext string) string { return filepath.Join(badDir, name, name+ext) }

// badCases lists the broken inputs. Expected texts name the file, the record
// and the field; sources for the limits: ESRI Shapefile
// Technical Description (July 1998), tables "Description of the Main File
// Header", "Description of Main File Record Headers", "Polygon Record
// Contents"; dBASE header and descriptor layout as in ../shared/CHECKS.md.
var badCases = []badCase{
	{name: "truncated-record", files: func() map[string][]byte {
		f := baseSet()
		f[".shp"] = fixLength(f[".shp"][:len(f[".shp"])-40])
		return f
	}, err: `shapefile: ` + p("truncated-record", ".shp") + `: feature 1: record 2: content length 112 bytes at byte 328 runs past the end of the file (400 bytes): truncated record`},
	{name: "declared-length-past-eof", files: func() map[string][]byte {
		f := baseSet()
		f[".shp"] = f[".shp"][:len(f[".shp"])-40]
		return f
	}, err: `shapefile: ` + p("declared-length-past-eof", ".shp") + `: header declares a file length of 440 bytes but the file has 400 (truncated?)`},
	{name: "shx-count", files: func() map[string][]byte {
		f := baseSet()
		f[".shx"] = fixLength(f[".shx"][:len(f[".shx"])-8])
		return f
	}, err: `shapefile: record counts disagree: ` + p("shx-count", ".shp") + ` has 2, ` + p("shx-count", ".shx") + ` has 1, ` + p("shx-count", ".dbf") + ` has 2`},
	{name: "dbf-count", files: func() map[string][]byte {
		return set(baseShapes(), baseFields, append(slices.Clone(baseRows), []string{"c", "1", "0"}), nil)
	}, err: `shapefile: record counts disagree: ` + p("dbf-count", ".shp") + ` has 2, ` + p("dbf-count", ".shx") + ` has 2, ` + p("dbf-count", ".dbf") + ` has 3`},
	{name: "file-code", files: func() map[string][]byte {
		f := baseSet()
		be32(f[".shp"], 0, 9995)
		return f
	}, err: `shapefile: ` + p("file-code", ".shp") + `: file code 9995 at byte 0, want 9994: not a shapefile`},
	{name: "version", files: func() map[string][]byte {
		f := baseSet()
		le32(f[".shp"], 28, 1001)
		return f
	}, err: `shapefile: ` + p("version", ".shp") + `: version 1001 at byte 28, want 1000`},
	{name: "dbf-field-past-record", files: func() map[string][]byte {
		f := baseSet()
		le16(f[".dbf"], 10, 20) // fields need 1+4+10+12 = 27
		return f
	}, err: `shapefile: ` + p("dbf-field-past-record", ".dbf") + `: field "share" (offset 15, length 12) runs past the record length 20`},
	{name: "dbf-header-length", files: func() map[string][]byte {
		f := baseSet()
		le16(f[".dbf"], 8, 32+3*32+1+32)
		return f
	}, err: `shapefile: ` + p("dbf-header-length", ".dbf") + `: header length 161 bytes does not match 3 field descriptors (want 129)`},
	{name: "dbf-header-short", files: func() map[string][]byte {
		f := baseSet()
		le16(f[".dbf"], 8, 80)
		return f
	}, err: `shapefile: ` + p("dbf-header-short", ".dbf") + `: header length 80 bytes ends inside the field descriptors (no 0x0D terminator within it)`},
	{name: "dbf-truncated", files: func() map[string][]byte {
		f := baseSet()
		f[".dbf"] = f[".dbf"][:len(f[".dbf"])-20]
		return f
	}, err: `shapefile: ` + p("dbf-truncated", ".dbf") + `: header declares 2 records of 27 bytes after a 129-byte header (183 bytes) but the file has 164: truncated`},
	{name: "dbf-bad-number", files: func() map[string][]byte {
		return set(baseShapes(), baseFields, [][]string{{"a", "120", "0.500"}, {"b", "8O", "0.250"}}, nil)
	}, err: `shapefile: ` + p("dbf-bad-number", ".dbf") + `: feature 1 (id "b"): field "pop": record 2: "8O" is not a number`},
	{name: "dbf-bad-date", files: func() map[string][]byte {
		fields := append(slices.Clone(baseFields), tField{"since", 'D', 8, 0})
		return set(baseShapes(), fields, [][]string{{"a", "120", "0.500", "20240229"}, {"b", "80", "0.250", "2024-3-1"}}, nil)
	}, err: `shapefile: ` + p("dbf-bad-date", ".dbf") + `: feature 1 (id "b"): field "since": record 2: date "2024-3-1" is not YYYYMMDD`},
	{name: "nan-coordinate", files: func() map[string][]byte {
		return set(withShape(1, tShape{typ: typePolygon, parts: [][][2]float64{{{20, 0}, {math.NaN(), 5}, {25, 0}, {20, 0}}}}), baseFields, baseRows, nil)
	}, err: `shapefile: ` + p("nan-coordinate", ".shp") + `: feature 1 (id "b"): record 2: point 1 has a non-finite coordinate (x NaN, y 5)`},
	{name: "inf-coordinate", files: func() map[string][]byte {
		return set(withShape(1, tShape{typ: typePolygon, parts: [][][2]float64{{{20, 0}, {20, math.Inf(1)}, {25, 0}, {20, 0}}}}), baseFields, baseRows, nil)
	}, err: `shapefile: ` + p("inf-coordinate", ".shp") + `: feature 1 (id "b"): record 2: point 1 has a non-finite coordinate (x 20, y +Inf)`},
	{name: "vertex-claim", files: func() map[string][]byte {
		c := patched(polygonContent(typePolygon, triangle), 40, 10_000_000) // NumPoints
		return set(withShape(1, tShape{raw: c}), baseFields, baseRows, nil)
	}, err: `shapefile: ` + p("vertex-claim", ".shp") + `: feature 1 (id "b"): record 2: NumParts 1 and NumPoints 10000000 need 160000048 bytes but the record holds 112`},
	{name: "part-out-of-range", files: func() map[string][]byte {
		c := patched(polygonContent(typePolygon, squareWithHole), 44+4, 10) // Parts[1]; NumPoints is 10
		return set(withShape(0, tShape{raw: c}), baseFields, baseRows, nil)
	}, err: `shapefile: ` + p("part-out-of-range", ".shp") + `: feature 0 (id "a"): record 1: part 1 starts at point 10, out of range (NumPoints 10)`},
	{name: "part-decreasing", files: func() map[string][]byte {
		parts := [][][2]float64{squareWithHole[0], squareWithHole[1], {{3, 3}, {4, 3}, {4, 4}, {3, 3}}}
		c := patched(polygonContent(typePolygon, parts), 44+8, 3) // Parts = 0, 5, 3
		return set(withShape(0, tShape{raw: c}), baseFields, baseRows, nil)
	}, err: `shapefile: ` + p("part-decreasing", ".shp") + `: feature 0 (id "a"): record 1: part 2 starts at point 3, before part 1 (point 5): part indices must increase`},
	{name: "point-type", files: func() map[string][]byte {
		var c bytes.Buffer
		binary.Write(&c, binary.LittleEndian, int32(1))
		binary.Write(&c, binary.LittleEndian, [2]float64{3, 4})
		shp, shx := buildSHP(1, []tShape{{raw: c.Bytes()}})
		return map[string][]byte{".shp": shp, ".shx": shx, ".dbf": buildDBF(0, baseFields, baseRows[:1], nil)}
	}, err: `shapefile: ` + p("point-type", ".shp") + `: shape type 1 (Point) is not a polygon type (want 5 Polygon, 15 PolygonZ or 25 PolygonM)`},
	{name: "record-type", files: func() map[string][]byte {
		return set(withShape(1, tShape{typ: 3, parts: triangle}), baseFields, baseRows, nil)
	}, err: `shapefile: ` + p("record-type", ".shp") + `: feature 1 (id "b"): record 2: shape type 3 (PolyLine) differs from the file's shape type 5 (Polygon)`},
	{name: "shx-offset", files: func() map[string][]byte {
		f := baseSet()
		be32(f[".shx"], 100+8, (320+8)/2) // entry 2 offset, in 16-bit words; true offset 320
		return f
	}, err: `shapefile: ` + p("shx-offset", ".shx") + `: record 2: index gives offset 328 and content length 112 bytes but ` + p("shx-offset", ".shp") + ` has the record at 320 with 112 bytes`},
	{name: "cpg-unknown", files: func() map[string][]byte {
		f := baseSet()
		f[".cpg"] = []byte("KLINGON-1\n")
		return f
	}, err: `shapefile: ` + p("cpg-unknown", ".cpg") + `: code page "KLINGON-1" is not supported (UTF-8, ISO-8859-1/2/5/7/9/15, Windows-1250..1254/1257, CP437/850/852/866 are)`},
	{name: "missing-dbf", files: func() map[string][]byte {
		f := baseSet()
		delete(f, ".dbf")
		return f
	}, err: `shapefile: ` + p("missing-dbf", ".shp") + `: no .dbf file beside it (the index and the attribute table are mandatory)`},
	{name: "too-short", files: func() map[string][]byte {
		f := baseSet()
		f[".shp"] = f[".shp"][:60]
		return f
	}, err: `shapefile: ` + p("too-short", ".shp") + `: file of 60 bytes is shorter than the 100-byte header`},

	// Inputs that read with warnings.
	{name: "two-point-ring", files: func() map[string][]byte {
		sh := baseShapes()
		sh[0].parts = append(slices.Clone(squareWithHole), [][2]float64{{30, 30}, {31, 31}})
		sh[1].parts = [][][2]float64{{{20, 0}, {20, 5}}}
		return set(sh, baseFields, baseRows, nil)
	}, feats: 2, warn: []string{
		`shapefile: ` + p("two-point-ring", ".shp") + `: feature 0 (id "a"): record 1: ring 2 has 2 points (a closed ring needs at least 4): dropped`,
		`shapefile: ` + p("two-point-ring", ".shp") + `: feature 1 (id "b"): record 2: ring 0 has 2 points (a closed ring needs at least 4): dropped`,
		`shapefile: ` + p("two-point-ring", ".shp") + `: feature 1 (id "b"): record 2: no usable ring left: the feature has empty geometry`,
	}},
	{name: "lonely-hole", files: func() map[string][]byte {
		return set(withShape(1, tShape{typ: typePolygon, parts: [][][2]float64{{{20, 0}, {25, 0}, {20, 5}, {20, 0}}}}), baseFields, baseRows, nil)
	}, feats: 2, warn: []string{
		`shapefile: ` + p("lonely-hole", ".shp") + `: feature 1 (id "b"): record 2: ring 0 is a hole (counter-clockwise) that no outer ring contains: kept as an outer ring`,
	}},
	{name: "deleted-record", files: func() map[string][]byte {
		return set(baseShapes(), baseFields, baseRows, map[int]bool{0: true})
	}, feats: 1, warn: []string{
		`shapefile: ` + p("deleted-record", ".dbf") + `: feature 0: record 1 is marked deleted: skipped with its shape`,
	}},
	{name: "unclosed-ring", files: func() map[string][]byte {
		return set(withShape(1, tShape{typ: typePolygon, parts: [][][2]float64{{{20, 0}, {20, 5}, {25, 0}}}}), baseFields, baseRows, nil)
	}, feats: 2, warn: []string{
		`shapefile: ` + p("unclosed-ring", ".shp") + `: feature 1 (id "b"): record 2: ring 0 is not closed (first point differs from last): the first point was repeated at the end`,
	}},
	{name: "trailing-bytes", files: func() map[string][]byte {
		f := baseSet()
		f[".shp"] = append(f[".shp"], 0xde, 0xad, 0xbe, 0xef)
		return f
	}, feats: 2, warn: []string{
		`shapefile: ` + p("trailing-bytes", ".shp") + `: 4 bytes after the declared file length 440 are ignored`,
	}},
}

// TestBadFilesCommitted checks that the committed broken sets are what the
// generator makes (run with -update to rewrite them).
func TestBadFilesCommitted(t *testing.T) {
	for _, c := range badCases {
		dir := filepath.Join(badDir, c.name)
		files := c.files()
		if *update {
			os.RemoveAll(dir)
			if err := os.MkdirAll(dir, 0o755); err != nil {
				t.Fatal(err)
			}
			writeSet(t, dir, c.name, files)
			continue
		}
		ents, err := os.ReadDir(dir)
		if err != nil {
			t.Fatalf("%s: %v (run go test -run TestBadFilesCommitted -update)", c.name, err)
		}
		if len(ents) != len(files) {
			t.Errorf("%s: %d files committed, generator makes %d", c.name, len(ents), len(files))
		}
		for ext, want := range files {
			got, err := os.ReadFile(filepath.Join(dir, c.name+ext))
			if err != nil || !bytes.Equal(got, want) {
				t.Errorf("%s%s differs from the generator (err %v); run with -update", c.name, ext, err)
			}
		}
	}
}

func TestBadInputs(t *testing.T) {
	if len(badCases) < 12 {
		t.Fatalf("only %d cases", len(badCases))
	}
	for _, c := range badCases {
		t.Run(c.name, func(t *testing.T) {
			path := p(c.name, ".shp")
			var before, after runtime.MemStats
			runtime.GC()
			runtime.ReadMemStats(&before)
			l, warns, err := ReadAll(path, Options{IDField: "id"})
			runtime.ReadMemStats(&after)
			// Every set is under 1 kB; reading one must not allocate
			// anything near what a claimed count would need.
			if a := after.TotalAlloc - before.TotalAlloc; a > 512<<10 {
				t.Errorf("allocated %d bytes", a)
			}
			if c.err != "" {
				if err == nil {
					t.Fatalf("no error; want %s", c.err)
				}
				if err.Error() != c.err {
					t.Fatalf("error\n got %s\nwant %s", err, c.err)
				}
				if strings.Contains(err.Error(), "\n") {
					t.Errorf("error is not one line")
				}
				return
			}
			if err != nil {
				t.Fatalf("unexpected error %v", err)
			}
			var got []string
			for _, w := range warns {
				got = append(got, w.String())
			}
			if !slices.Equal(got, c.warn) {
				t.Errorf("warnings\n got %q\nwant %q", got, c.warn)
			}
			if len(l.Features) != c.feats {
				t.Errorf("%d features, want %d", len(l.Features), c.feats)
			}
		})
	}
}

// Record errors wrap a *geo.Error carrying the feature index and id.
func TestRecordErrorIsGeoError(t *testing.T) {
	_, err := Read(p("nan-coordinate", ".shp"), Options{IDField: "id"})
	var ge *geo.Error
	if !errors.As(err, &ge) || ge.Index != 1 || ge.ID != "b" || ge.Path != p("nan-coordinate", ".shp") {
		t.Fatalf("%v: %+v", err, ge)
	}
	_, err = Read(p("dbf-bad-number", ".shp"), Options{})
	if !errors.As(err, &ge) || ge.Index != 1 || ge.Field != "pop" {
		t.Fatalf("%v: %+v", err, ge)
	}
}
