package shapefile

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"testing"
)

// Test-side writer for small file sets, following the ESRI Shapefile
// Technical Description (July 1998) layout. It is deliberately separate
// from the reader: it lays bytes out from the document's tables.

// tShape is one record: parts of (x, y) points, or raw content bytes.
type tShape struct {
	typ   int32 // 0 = Null; otherwise the polygon type code
	parts [][][2]float64
	raw   []byte // when non-nil, used as the content as is
}

// polygonContent lays out a polygon record's content (little-endian):
// type, box, NumParts, NumPoints, Parts, Points.
func polygonContent(typ int32, parts [][][2]float64) []byte {
	var b bytes.Buffer
	le := func(v any) { binary.Write(&b, binary.LittleEndian, v) }
	le(typ)
	if typ == 0 {
		return b.Bytes()
	}
	minX, minY, maxX, maxY := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	n := 0
	for _, p := range parts {
		for _, q := range p {
			minX, minY = math.Min(minX, q[0]), math.Min(minY, q[1])
			maxX, maxY = math.Max(maxX, q[0]), math.Max(maxY, q[1])
			n++
		}
	}
	if n == 0 {
		minX, minY, maxX, maxY = 0, 0, 0, 0
	}
	le([4]float64{minX, minY, maxX, maxY})
	le(int32(len(parts)))
	le(int32(n))
	start := int32(0)
	for _, p := range parts {
		le(start)
		start += int32(len(p))
	}
	for _, p := range parts {
		for _, q := range p {
			le(q)
		}
	}
	return b.Bytes()
}

// buildSHP returns the .shp and .shx bytes for the shapes.
func buildSHP(fileType int32, shapes []tShape) (shp, shx []byte) {
	var body, index bytes.Buffer
	off := int32(mainHeaderLen)
	for i, s := range shapes {
		c := s.raw
		if c == nil {
			c = polygonContent(s.typ, s.parts)
		}
		binary.Write(&body, binary.BigEndian, int32(i+1))
		binary.Write(&body, binary.BigEndian, int32(len(c)/2))
		body.Write(c)
		binary.Write(&index, binary.BigEndian, off/2)
		binary.Write(&index, binary.BigEndian, int32(len(c)/2))
		off += int32(recHeaderLen + len(c))
	}
	header := func(length int) []byte {
		var h bytes.Buffer
		binary.Write(&h, binary.BigEndian, int32(fileCode))
		h.Write(make([]byte, 20))
		binary.Write(&h, binary.BigEndian, int32(length/2))
		binary.Write(&h, binary.LittleEndian, int32(fileVersion))
		binary.Write(&h, binary.LittleEndian, fileType)
		h.Write(make([]byte, 64)) // bbox, Z and M ranges: not checked by the reader
		return h.Bytes()
	}
	shp = append(header(mainHeaderLen+body.Len()), body.Bytes()...)
	shx = append(header(mainHeaderLen+index.Len()), index.Bytes()...)
	return shp, shx
}

type tField struct {
	name     string
	typ      byte
	length   int
	decimals int
}

// buildDBF lays out a dBASE III table: 32-byte header, 32-byte descriptors,
// 0x0D, records (deletion flag + fields), 0x1A. Values are written as given,
// left-justified for C and right-justified otherwise. deleted marks records
// with '*'.
func buildDBF(ldid byte, fields []tField, rows [][]string, deleted map[int]bool) []byte {
	recLen := 1
	for _, f := range fields {
		recLen += f.length
	}
	var b bytes.Buffer
	b.WriteByte(0x03)
	b.Write([]byte{124, 1, 1}) // last update 2024-01-01
	binary.Write(&b, binary.LittleEndian, uint32(len(rows)))
	binary.Write(&b, binary.LittleEndian, uint16(32+32*len(fields)+1))
	binary.Write(&b, binary.LittleEndian, uint16(recLen))
	h := make([]byte, 20)
	h[17] = ldid // byte 29 of the header
	b.Write(h)
	for _, f := range fields {
		d := make([]byte, 32)
		copy(d, f.name)
		d[11] = f.typ
		d[16] = byte(f.length)
		d[17] = byte(f.decimals)
		b.Write(d)
	}
	b.WriteByte(0x0D)
	for i, r := range rows {
		if deleted[i] {
			b.WriteByte('*')
		} else {
			b.WriteByte(' ')
		}
		for k, f := range fields {
			v := r[k]
			if f.typ == 'C' {
				b.WriteString(fmt.Sprintf("%-*s", f.length, v)[:f.length])
			} else {
				b.WriteString(fmt.Sprintf("%*s", f.length, v)[:f.length])
			}
		}
	}
	b.WriteByte(0x1A)
	return b.Bytes()
}

// writeSet writes files named stem+ext into dir.
func writeSet(t testing.TB, dir, stem string, files map[string][]byte) string {
	t.Helper()
	for ext, data := range files {
		if err := os.WriteFile(filepath.Join(dir, stem+ext), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return filepath.Join(dir, stem+".shp")
}

// memSource builds an in-memory source from a file set.
func memSource(stem string, files map[string][]byte) source {
	p := func(ext string) part {
		b := files[ext]
		return part{name: stem + ext, r: bytes.NewReader(b), size: int64(len(b))}
	}
	return source{shp: p(".shp"), shx: p(".shx"), dbf: p(".dbf"), prj: files[".prj"], cpg: files[".cpg"], cpgName: stem + ".cpg", layerName: stem}
}
