package shapefile

import (
	"fmt"
	"strings"
	"unicode/utf8"

	"golang.org/x/text/encoding/charmap"
)

// textDecoder turns DBF bytes into UTF-8 text.
type textDecoder struct {
	name string // for messages, e.g. "UTF-8", "ISO-8859-1"
	// table maps each byte to a rune for single-byte code pages; nil means
	// UTF-8.
	table *[256]rune
	// guess marks an undeclared code page: valid UTF-8 is kept, anything
	// else is read as Windows-1252.
	guess bool
}

// decode returns s as UTF-8 and whether it had to repair or guess: invalid
// UTF-8 in a UTF-8 file (U+FFFD replaces it) or, for an undeclared code
// page, bytes that were not UTF-8.
func (d *textDecoder) decode(b []byte) (string, bool) {
	ascii := true
	for _, c := range b {
		if c >= 0x80 {
			ascii = false
			break
		}
	}
	if ascii {
		return string(b), false
	}
	if d.table == nil || d.guess {
		if utf8.Valid(b) {
			return string(b), false
		}
		if !d.guess {
			return strings.ToValidUTF8(string(b), "\uFFFD"), true
		}
	}
	var sb strings.Builder
	sb.Grow(len(b) + len(b)/2)
	for _, c := range b {
		sb.WriteRune(d.table[c])
	}
	return sb.String(), d.guess
}

func tableOf(m *charmap.Charmap) *[256]rune {
	var t [256]rune
	for i := range t {
		t[i] = m.DecodeByte(byte(i))
	}
	return &t
}

// codePage is a single-byte code page known by its .cpg spellings.
type codePage struct {
	name  string
	cm    *charmap.Charmap
	names []string // normalised spellings (upper case, no space, '-' or '_')
}

var codePages = []codePage{
	{"ISO-8859-1", charmap.ISO8859_1, []string{"ISO88591", "88591", "LATIN1", "ISOLATIN1", "28591", "CP28591"}},
	{"Windows-1252", charmap.Windows1252, []string{"WINDOWS1252", "1252", "CP1252", "ANSI1252", "WIN1252"}},
	{"ISO-8859-2", charmap.ISO8859_2, []string{"ISO88592", "88592", "LATIN2", "28592"}},
	{"ISO-8859-5", charmap.ISO8859_5, []string{"ISO88595", "88595", "28595"}},
	{"ISO-8859-7", charmap.ISO8859_7, []string{"ISO88597", "88597", "28597"}},
	{"ISO-8859-9", charmap.ISO8859_9, []string{"ISO88599", "88599", "LATIN5", "28599"}},
	{"ISO-8859-15", charmap.ISO8859_15, []string{"ISO885915", "885915", "LATIN9", "28605"}},
	{"Windows-1250", charmap.Windows1250, []string{"WINDOWS1250", "1250", "CP1250", "ANSI1250"}},
	{"Windows-1251", charmap.Windows1251, []string{"WINDOWS1251", "1251", "CP1251", "ANSI1251"}},
	{"Windows-1253", charmap.Windows1253, []string{"WINDOWS1253", "1253", "CP1253", "ANSI1253"}},
	{"Windows-1254", charmap.Windows1254, []string{"WINDOWS1254", "1254", "CP1254", "ANSI1254"}},
	{"Windows-1257", charmap.Windows1257, []string{"WINDOWS1257", "1257", "CP1257", "ANSI1257"}},
	{"CP437", charmap.CodePage437, []string{"CP437", "437", "IBM437", "OEM437"}},
	{"CP850", charmap.CodePage850, []string{"CP850", "850", "IBM850", "OEM850"}},
	{"CP852", charmap.CodePage852, []string{"CP852", "852", "IBM852", "OEM852"}},
	{"CP866", charmap.CodePage866, []string{"CP866", "866", "IBM866", "OEM866"}},
}

func normaliseCPName(s string) string {
	s = strings.ToUpper(strings.TrimSpace(s))
	return strings.NewReplacer(" ", "", "-", "", "_", "").Replace(s)
}

// decoderForCPG returns the decoder for the text of a .cpg file, ok=false if
// the file is blank. An unknown name is an error: guessing would turn every
// accented name into something else without a word.
func decoderForCPG(text, path string) (d *textDecoder, ok bool, err error) {
	n := normaliseCPName(strings.TrimPrefix(text, "\uFEFF"))
	if n == "" {
		return nil, false, nil
	}
	switch n {
	case "UTF8", "65001", "ASCII", "USASCII":
		return &textDecoder{name: "UTF-8"}, true, nil
	}
	for _, cp := range codePages {
		for _, s := range cp.names {
			if s == n {
				return &textDecoder{name: cp.name, table: tableOf(cp.cm)}, true, nil
			}
		}
	}
	return nil, false, fmt.Errorf("shapefile: %s: code page %q is not supported (UTF-8, ISO-8859-1/2/5/7/9/15, Windows-1250..1254/1257, CP437/850/852/866 are)", path, strings.TrimSpace(text))
}

// ldidPages maps the dBASE language driver id (byte 29 of the DBF header) to
// a code page, used when no .cpg names one. The entries are from memory of
// the dBASE/ESRI driver table; TestLDIDVsGDAL checks every one against
// GDAL's reading of the same bytes (GDAL reads 0x57, "ANSI", as ISO-8859-1).
var ldidPages = map[byte]*charmap.Charmap{
	0x01: charmap.CodePage437,
	0x02: charmap.CodePage850,
	0x03: charmap.Windows1252,
	0x57: charmap.ISO8859_1,
	0x58: charmap.Windows1252,
	0x59: charmap.Windows1252,
	0x64: charmap.CodePage852,
	0x65: charmap.CodePage866,
	0x26: charmap.CodePage866,
	0xC8: charmap.Windows1250,
	0xC9: charmap.Windows1251,
	0xCA: charmap.Windows1254,
	0xCB: charmap.Windows1253,
	0xCC: charmap.Windows1257,
}

// decoderForLDID returns the decoder for a language driver id when no .cpg
// names the code page. Id 0 (none declared) or an unknown id give a guessing
// decoder: valid UTF-8 stays, other text is read as Windows-1252.
func decoderForLDID(id byte) (d *textDecoder, known bool) {
	if cm, ok := ldidPages[id]; ok {
		return &textDecoder{name: fmt.Sprintf("language driver 0x%02X (%s)", id, cm.String()), table: tableOf(cm)}, true
	}
	return &textDecoder{name: "undeclared (UTF-8, else Windows-1252)", table: tableOf(charmap.Windows1252), guess: true}, id == 0
}
