package geojson

import (
	"errors"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo"
)

// TestEncodings reads the same three invented areas, with ids that differ
// in one accented letter, saved in several encodings
// (testdata/encoding, written by Python's codecs). The rules: GeoJSON
// text is UTF-8 (RFC 8259, section 8.1, through RFC 7946, section 1); a
// parser may ignore a UTF-8 byte order mark (the same section). The byte
// order marks are EF BB BF (UTF-8), FF FE (UTF-16 little-endian) and
// FE FF (UTF-16 big-endian) (The Unicode Standard, section 23.8
// "Specials", Byte Order Mark; section number from memory). In Latin-1,
// "è" is the single byte 0xE8 (ISO/IEC 8859-1 code table), never valid
// UTF-8 on its own (RFC 3629, section 4: 0xE8 starts a three-byte
// sequence and must be followed by continuation bytes 0x80–0xBF).
func TestEncodings(t *testing.T) {
	wantIDs := []string{"Brière-1", "Brière-2", "Brièré-1"}
	for _, c := range []struct {
		file, err string // err "" means the file reads as the UTF-8 one
	}{
		{"utf8.geojson", ""},
		{"utf8-bom.geojson", ""},
		{"utf16le-bom.geojson", "geojson: testdata/encoding/utf16le-bom.geojson: byte 0: the file is UTF-16 (little-endian, byte order mark FF FE); GeoJSON must be UTF-8: re-save it as UTF-8"},
		{"utf16be-bom.geojson", "geojson: testdata/encoding/utf16be-bom.geojson: byte 0: the file is UTF-16 (big-endian, byte order mark FE FF); GeoJSON must be UTF-8: re-save it as UTF-8"},
		{"utf16le.geojson", "geojson: testdata/encoding/utf16le.geojson: byte 0: the file is UTF-16 (little-endian, no byte order mark); GeoJSON must be UTF-8: re-save it as UTF-8"},
		// Offset 91, line 2, column 48: counted in the file by Python
		// (bytes.index(b"\xe8")); the first "è" of "Brière-1".
		{"latin1.geojson", "geojson: testdata/encoding/latin1.geojson: byte 91 (line 2, column 48): byte 0xE8 is not UTF-8; the file is probably in a legacy encoding such as Latin-1 or Windows-1252: re-save it as UTF-8"},
	} {
		t.Run(c.file, func(t *testing.T) {
			l, err := Read("testdata/encoding/"+c.file, Options{IDField: "code"})
			if c.err != "" {
				if err == nil || err.Error() != c.err {
					t.Fatalf("error\n %v\nwant\n %s", err, c.err)
				}
				if strings.Contains(err.Error(), "\n") {
					t.Errorf("error is not one line: %q", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			var ids []string
			for _, f := range l.Features {
				ids = append(ids, f.ID)
			}
			if strings.Join(ids, "|") != strings.Join(wantIDs, "|") {
				t.Errorf("ids %q, want %q", ids, wantIDs)
			}
		})
	}
}

// TestBOMOnlyAtTheStart: a UTF-8 byte order mark is skipped only as the
// first bytes; anywhere else it is a character (U+FEFF) that JSON allows
// inside strings only (RFC 8259, section 2: whitespace is space, tab, LF
// and CR), so one between tokens is still a syntax error with its line.
func TestBOMOnlyAtTheStart(t *testing.T) {
	data := []byte("{\"type\": \"FeatureCollection\",\xef\xbb\xbf \"features\": []}")
	_, err := Decode("mid.geojson", data, Options{})
	if err == nil || !strings.Contains(err.Error(), "mid.geojson: line 1, column ") || !strings.Contains(err.Error(), "malformed JSON") {
		t.Fatalf("error %v, want a syntax error on line 1", err)
	}
	var ge *geo.Error
	if errors.As(err, &ge) {
		t.Errorf("file-level error came as a feature error: %+v", ge)
	}
}
