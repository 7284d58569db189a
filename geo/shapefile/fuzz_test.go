package shapefile

import (
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/reftool"
)

// seedFiles returns the committed files with the given extension: the
// GDAL-written fixture, the broken sets, and the shared data's .shx/.dbf
// (small) when present.
func seedFiles(f *testing.F, ext string) [][]byte {
	var out [][]byte
	globs := []string{filepath.Join("testdata", "*", "*"+ext), filepath.Join(badDir, "*", "*"+ext)}
	if dir, err := reftool.SharedPath("us-counties-shp"); ext == ".dbf" && err == nil {
		globs = append(globs, filepath.Join(dir, "*.dbf"))
	}
	for _, g := range globs {
		m, _ := filepath.Glob(g)
		for _, p := range m {
			b, err := os.ReadFile(p)
			if err != nil {
				f.Fatal(err)
			}
			out = append(out, b)
		}
	}
	if len(out) == 0 {
		f.Fatalf("no %s seeds", ext)
	}
	return out
}

// FuzzReadSHP feeds arbitrary bytes to the main-file decoder: header,
// record walk, polygon parsing and ring assembly. It must return an error
// or well-formed polygons, never panic, and never allocate more points than
// the bytes can hold.
func FuzzReadSHP(f *testing.F) {
	for _, b := range seedFiles(f, ".shp") {
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		sc, err := newSHPScanner(part{name: "fuzz.shp", r: bytes.NewReader(data), size: int64(len(data))})
		if err != nil {
			return
		}
		budget := 1 << 20
		for {
			c, err := sc.next()
			if err != nil {
				if err != io.EOF && !strings.Contains(err.Error(), "byte") {
					t.Fatalf("error without a position: %v", err)
				}
				return
			}
			rings, err := decodeShape(c, sc.hdr.shapeType, budget)
			if err != nil {
				continue
			}
			n := 0
			for _, r := range rings {
				n += len(r)
			}
			if 16*n > len(c) {
				t.Fatalf("%d points from %d bytes", n, len(c))
			}
			budget -= n
			mp, _ := assemble(rings)
			for _, p := range mp {
				if len(p) == 0 {
					t.Fatal("polygon without rings")
				}
				for k, r := range p {
					if len(r) < 4 || r[0] != r[len(r)-1] {
						t.Fatalf("ring %d not closed or too short: %v", k, r)
					}
					a := geo.RingArea(r)
					if k == 0 && a <= 0 || k > 0 && a >= 0 {
						t.Fatalf("ring %d has area %v: wrong winding", k, a)
					}
				}
			}
		}
	})
}

// FuzzReadDBF feeds arbitrary bytes to the table reader: header, field
// descriptors and every record's values.
func FuzzReadDBF(f *testing.F) {
	for _, b := range seedFiles(f, ".dbf") {
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		tab, err := openDBF(part{name: "fuzz.dbf", r: bytes.NewReader(data), size: int64(len(data))}, 1<<20, nil)
		if err != nil {
			return
		}
		if int64(tab.headerLen)+int64(tab.numRecords)*int64(tab.recordLen) > int64(len(data)) {
			t.Fatal("declared records exceed the data but the table opened")
		}
		raw := make([]string, len(tab.fields))
		rep := make([]bool, len(tab.fields))
		for i := 0; i < tab.numRecords; i++ {
			rec, _, err := tab.next()
			if err != nil {
				t.Fatalf("record %d of %d: %v", i, tab.numRecords, err)
			}
			props := map[string]any{}
			if err := tab.decodeRecord(rec, props, raw, rep); err != nil {
				var fe *fieldError
				if !errors.As(err, &fe) {
					t.Fatalf("unexpected error type %T", err)
				}
				continue
			}
			for k, v := range props {
				switch v.(type) {
				case nil, string, int64, float64, bool:
				default:
					t.Fatalf("field %q value of type %T", k, v)
				}
			}
			for k := range tab.fields {
				if got := tab.fieldText(rec, k); got != raw[k] {
					t.Fatalf("field %d: fieldText %q, decodeRecord %q", k, got, raw[k])
				}
			}
		}
	})
}

// FuzzDecode runs whole in-memory file sets through decode: the .shp is
// fuzzed, the .shx is rebuilt from whatever records it holds so that the
// cross-checks pass often enough to reach geometry, the .dbf is fixed.
func FuzzDecode(f *testing.F) {
	for _, b := range seedFiles(f, ".shp") {
		f.Add(b)
	}
	dbf := buildDBF(0, baseFields, baseRows, nil)
	f.Fuzz(func(t *testing.T, data []byte) {
		files := map[string][]byte{".shp": data, ".shx": indexFor(data), ".dbf": dbf}
		l, _, err := decode(memSource("fuzz", files), Options{MaxVertices: 1 << 20})
		if err != nil {
			if strings.Contains(err.Error(), "\n") {
				t.Fatalf("multi-line error %q", err)
			}
			return
		}
		if len(l.Features) > 2 {
			t.Fatalf("%d features from a 2-row table", len(l.Features))
		}
	})
}

// indexFor walks the records of a .shp leniently and writes a matching .shx.
func indexFor(shp []byte) []byte {
	if len(shp) < 100 {
		return nil
	}
	hdr := bytes.Clone(shp[:100])
	var idx bytes.Buffer
	idx.Write(hdr)
	for off := 100; off+8 <= len(shp); {
		l := int(uint32(shp[off+4])<<24|uint32(shp[off+5])<<16|uint32(shp[off+6])<<8|uint32(shp[off+7])) * 2
		if l < 0 || off+8+l > len(shp) {
			break
		}
		idx.Write([]byte{byte(off >> 25), byte(off >> 17), byte(off >> 9), byte(off >> 1)})
		idx.Write(shp[off+4 : off+8])
		off += 8 + l
	}
	b := idx.Bytes()
	be32(b, 24, int32(len(b)/2))
	return b
}
