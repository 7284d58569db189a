package shapefile

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"fmt"
	"io"
	"strconv"

	"github.com/stipple-maps/stipple/geo"
)

// dBASE table layout (dBASE III/IV as GDAL writes it; the Technical
// Description's "dBASE File" section): a 32-byte header, 32-byte field
// descriptors ended by 0x0D, then fixed-length records each starting with a
// deletion flag (' ' or '*'), optionally an end-of-file byte 0x1A.
const (
	dbfHeaderLen   = 32
	dbfDescLen     = 32
	dbfTerminator  = 0x0D
	dbfVFPBacklink = 263 // Visual FoxPro tables carry a backlink after the terminator
	dbfDeletedFlag = '*'
)

type dbfField struct {
	name     string
	typ      byte
	length   int
	decimals int
	offset   int // within the record, after the deletion flag at 0
}

// dbfTable is an open DBF: header read and checked, records read in order.
type dbfTable struct {
	p          part
	numRecords int
	headerLen  int
	recordLen  int
	ldid       byte
	fields     []dbfField
	dec        *textDecoder
	warnings   []Warning
	br         *bufio.Reader
	rec        []byte
}

// openDBF reads and checks the header of a DBF. Records are not read;
// maxRecords caps the declared count before anything is allocated. cpg is
// the decoder named by the .cpg file, nil to use the header's language
// driver id.
func openDBF(p part, maxRecords int, cpg *textDecoder) (*dbfTable, error) {
	if p.size < dbfHeaderLen+1 {
		return nil, fmt.Errorf("shapefile: %s: file of %d bytes is shorter than a dBASE header", p.name, p.size)
	}
	var h [dbfHeaderLen]byte
	if _, err := p.r.ReadAt(h[:], 0); err != nil {
		return nil, fmt.Errorf("shapefile: %s: reading header: %v", p.name, err)
	}
	t := &dbfTable{
		p:         p,
		headerLen: int(binary.LittleEndian.Uint16(h[8:])),
		recordLen: int(binary.LittleEndian.Uint16(h[10:])),
		ldid:      h[29],
		dec:       cpg,
	}
	if t.dec == nil {
		var known bool
		t.dec, known = decoderForLDID(t.ldid)
		if !known {
			t.warnings = append(t.warnings, Warning{Path: p.name, Index: -1,
				Message: fmt.Sprintf("language driver id 0x%02X is not known and no .cpg names the code page: text that is not UTF-8 is read as Windows-1252", t.ldid)})
		}
	}
	n := int64(binary.LittleEndian.Uint32(h[4:]))
	if n > int64(maxRecords) {
		return nil, fmt.Errorf("shapefile: %s: header declares %d records, more than the limit of %d (Options.MaxFeatures)", p.name, n, maxRecords)
	}
	t.numRecords = int(n)
	if int64(t.headerLen) > p.size {
		return nil, fmt.Errorf("shapefile: %s: header length %d bytes exceeds the file size %d", p.name, t.headerLen, p.size)
	}
	if t.headerLen < dbfHeaderLen+1 {
		return nil, fmt.Errorf("shapefile: %s: header length %d bytes is too short to hold the field descriptors' terminator", p.name, t.headerLen)
	}
	hb := make([]byte, t.headerLen) // at most 64 KiB
	if _, err := p.r.ReadAt(hb, 0); err != nil {
		return nil, fmt.Errorf("shapefile: %s: reading header: %v", p.name, err)
	}
	end := -1
	for pos := dbfHeaderLen; pos < len(hb); pos += dbfDescLen {
		if hb[pos] == dbfTerminator {
			end = pos
			break
		}
		if pos+dbfDescLen > len(hb) {
			break
		}
	}
	if end < 0 {
		return nil, fmt.Errorf("shapefile: %s: header length %d bytes ends inside the field descriptors (no 0x0D terminator within it)", p.name, t.headerLen)
	}
	nf := (end - dbfHeaderLen) / dbfDescLen
	want := end + 1
	if t.headerLen != want && !(isVFP(h[0]) && t.headerLen == want+dbfVFPBacklink) {
		return nil, fmt.Errorf("shapefile: %s: header length %d bytes does not match %d field descriptors (want %d)", p.name, t.headerLen, nf, want)
	}
	if t.recordLen < 1 {
		return nil, fmt.Errorf("shapefile: %s: record length %d bytes (want at least 1 for the deletion flag)", p.name, t.recordLen)
	}
	off := 1
	seen := map[string]bool{}
	t.fields = make([]dbfField, 0, nf)
	for i := 0; i < nf; i++ {
		d := hb[dbfHeaderLen+i*dbfDescLen : dbfHeaderLen+(i+1)*dbfDescLen]
		raw := d[:11]
		if k := bytes.IndexByte(raw, 0); k >= 0 {
			raw = raw[:k]
		}
		name, _ := t.dec.decode(bytes.TrimSpace(raw))
		f := dbfField{name: name, typ: d[11], length: int(d[16]), decimals: int(d[17]), offset: off}
		if name == "" {
			return nil, fmt.Errorf("shapefile: %s: field %d has an empty name", p.name, i)
		}
		if seen[name] {
			return nil, fmt.Errorf("shapefile: %s: field %q appears twice", p.name, name)
		}
		seen[name] = true
		if f.length == 0 {
			return nil, fmt.Errorf("shapefile: %s: field %q has length 0", p.name, name)
		}
		if off+f.length > t.recordLen {
			return nil, fmt.Errorf("shapefile: %s: field %q (offset %d, length %d) runs past the record length %d", p.name, name, off, f.length, t.recordLen)
		}
		switch f.typ {
		case 'C', 'N', 'F', 'D', 'L':
		default:
			t.warnings = append(t.warnings, Warning{Path: p.name, Index: -1, Field: name,
				Message: fmt.Sprintf("field type %q is not supported: values read as null", rune(f.typ))})
		}
		off += f.length
		t.fields = append(t.fields, f)
	}
	if off != t.recordLen {
		t.warnings = append(t.warnings, Warning{Path: p.name, Index: -1,
			Message: fmt.Sprintf("record length %d bytes is longer than the fields need (%d): the extra bytes are ignored", t.recordLen, off)})
	}
	need := int64(t.headerLen) + int64(t.numRecords)*int64(t.recordLen)
	if need > p.size {
		return nil, fmt.Errorf("shapefile: %s: header declares %d records of %d bytes after a %d-byte header (%d bytes) but the file has %d: truncated", p.name, t.numRecords, t.recordLen, t.headerLen, need, p.size)
	}
	sr := io.NewSectionReader(p.r, int64(t.headerLen), int64(t.numRecords)*int64(t.recordLen))
	t.br = bufio.NewReaderSize(sr, 64<<10)
	t.rec = make([]byte, t.recordLen)
	return t, nil
}

func isVFP(version byte) bool { return version == 0x30 || version == 0x31 || version == 0x32 }

// next reads the next record. The returned slice is valid until the next call.
func (t *dbfTable) next() (rec []byte, deleted bool, err error) {
	if _, err := io.ReadFull(t.br, t.rec); err != nil {
		return nil, false, err
	}
	return t.rec, t.rec[0] == dbfDeletedFlag, nil
}

// fieldError is a bad value in one field of one record.
type fieldError struct {
	field string
	msg   string
}

func (e *fieldError) Error() string { return fmt.Sprintf("field %q: %s", e.field, e.msg) }

// decodeRecord turns the fields of one record into values: C → string
// (trailing blanks trimmed), N/F → int64 when there are no decimals and the
// text is an integer that fits, else float64; D → "YYYY-MM-DD"; L → bool;
// blank N/F/D/L and '?' → nil; unsupported types → nil. raw[i] receives the
// text of field i (decoded, trimmed), used for feature ids. repaired lists
// fields whose text needed repair or a code-page guess.
func (t *dbfTable) decodeRecord(rec []byte, props map[string]any, raw []string, repaired []bool) error {
	for i, f := range t.fields {
		b := rec[f.offset : f.offset+f.length]
		var v any
		switch f.typ {
		case 'C':
			s, rep := t.dec.decode(bytes.TrimRight(b, " \x00"))
			if rep {
				repaired[i] = true
			}
			v, raw[i] = s, s
		case 'N', 'F':
			s := string(bytes.Trim(b, " \x00"))
			raw[i] = s
			if s == "" || allStars(s) {
				break
			}
			n, err := parseNumber(s, f.decimals)
			if err != nil {
				return &fieldError{f.name, err.Error()}
			}
			v = n
		case 'D':
			s := string(bytes.Trim(b, " \x00"))
			if s == "" || s == "00000000" {
				raw[i] = ""
				break
			}
			if !isDate(s) {
				return &fieldError{f.name, fmt.Sprintf("date %q is not YYYYMMDD", s)}
			}
			v = s[0:4] + "-" + s[4:6] + "-" + s[6:8]
			raw[i] = v.(string)
		case 'L':
			s := string(bytes.Trim(b, " \x00"))
			raw[i] = s
			switch s {
			case "", "?":
			case "T", "t", "Y", "y":
				v = true
			case "F", "f", "N", "n":
				v = false
			default:
				return &fieldError{f.name, fmt.Sprintf("logical %q is none of T, F, Y, N, ?", s)}
			}
		default:
			raw[i] = ""
		}
		props[f.name] = v
	}
	return nil
}

// fieldText is the text of field k as decodeRecord puts it in raw.
func (t *dbfTable) fieldText(rec []byte, k int) string {
	f := t.fields[k]
	b := rec[f.offset : f.offset+f.length]
	switch f.typ {
	case 'C':
		s, _ := t.dec.decode(bytes.TrimRight(b, " \x00"))
		return s
	case 'N', 'F', 'L':
		return string(bytes.Trim(b, " \x00"))
	case 'D':
		s := string(bytes.Trim(b, " \x00"))
		if isDate(s) {
			return s[0:4] + "-" + s[4:6] + "-" + s[6:8]
		}
		return ""
	}
	return ""
}

func allStars(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] != '*' {
			return false
		}
	}
	return true
}

// parseNumber reads the ASCII text of an N or F field with geo.ParseDecimal,
// the syntax counts have in every format: strconv alone also accepts "inf",
// "NaN", hexadecimal and underscores, none of which a dBASE number may hold.
func parseNumber(s string, decimals int) (any, error) {
	x, err := geo.ParseDecimal(s)
	if err != nil {
		return nil, err
	}
	if decimals == 0 {
		if n, err := strconv.ParseInt(s, 10, 64); err == nil {
			return n, nil
		}
	}
	return x, nil
}

func isDate(s string) bool {
	if len(s) != 8 {
		return false
	}
	for i := 0; i < 8; i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	m := (s[4]-'0')*10 + s[5] - '0'
	d := (s[6]-'0')*10 + s[7] - '0'
	return m >= 1 && m <= 12 && d >= 1 && d <= 31
}
