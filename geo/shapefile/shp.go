package shapefile

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"

	"github.com/paulmach/orb"
)

// Layout constants from the ESRI Shapefile Technical Description (July 1998),
// "Organization of the Main File" and "Organization of the Index File".
const (
	fileCode      = 9994 // bytes 0-3, big-endian
	fileVersion   = 1000 // bytes 28-31, little-endian
	mainHeaderLen = 100  // both .shp and .shx
	recHeaderLen  = 8    // record number + content length, big-endian
	shxEntryLen   = 8    // offset + content length, big-endian, in 16-bit words
	polyFixedLen  = 44   // shape type, box (4 doubles), NumParts, NumPoints
)

// Shape type codes (Technical Description, table "Shape Types").
const (
	typeNull     = 0
	typePolygon  = 5
	typePolygonZ = 15
	typePolygonM = 25
)

// shapeTypeName names a shape type code as the Technical Description does.
func shapeTypeName(t int32) string {
	switch t {
	case 0:
		return "Null"
	case 1:
		return "Point"
	case 3:
		return "PolyLine"
	case 5:
		return "Polygon"
	case 8:
		return "MultiPoint"
	case 11:
		return "PointZ"
	case 13:
		return "PolyLineZ"
	case 15:
		return "PolygonZ"
	case 18:
		return "MultiPointZ"
	case 21:
		return "PointM"
	case 23:
		return "PolyLineM"
	case 25:
		return "PolygonM"
	case 28:
		return "MultiPointM"
	case 31:
		return "MultiPatch"
	}
	return "unknown"
}

func isPolygonType(t int32) bool {
	return t == typePolygon || t == typePolygonZ || t == typePolygonM
}

// part is one file of the set, opened or in memory.
type part struct {
	name string // path or name used in messages
	r    io.ReaderAt
	size int64
}

// mainHeader holds the fields of the 100-byte header shared by .shp and .shx.
type mainHeader struct {
	length    int64 // declared file length in bytes
	shapeType int32
}

// readMainHeader reads and checks the 100-byte header of a .shp or .shx file.
func readMainHeader(p part) (mainHeader, error) {
	var h mainHeader
	if p.size < mainHeaderLen {
		return h, fmt.Errorf("shapefile: %s: file of %d bytes is shorter than the %d-byte header", p.name, p.size, mainHeaderLen)
	}
	var b [mainHeaderLen]byte
	if _, err := p.r.ReadAt(b[:], 0); err != nil {
		return h, fmt.Errorf("shapefile: %s: reading header: %v", p.name, err)
	}
	if c := int32(binary.BigEndian.Uint32(b[0:])); c != fileCode {
		return h, fmt.Errorf("shapefile: %s: file code %d at byte 0, want %d: not a shapefile", p.name, c, fileCode)
	}
	if v := int32(binary.LittleEndian.Uint32(b[28:])); v != fileVersion {
		return h, fmt.Errorf("shapefile: %s: version %d at byte 28, want %d", p.name, v, fileVersion)
	}
	words := int64(binary.BigEndian.Uint32(b[24:]))
	h.length = words * 2
	if h.length < mainHeaderLen {
		return h, fmt.Errorf("shapefile: %s: declared file length %d bytes is shorter than the %d-byte header", p.name, h.length, mainHeaderLen)
	}
	if h.length > p.size {
		return h, fmt.Errorf("shapefile: %s: header declares a file length of %d bytes but the file has %d (truncated?)", p.name, h.length, p.size)
	}
	h.shapeType = int32(binary.LittleEndian.Uint32(b[32:]))
	return h, nil
}

// shpScanner walks the records of a .shp file in order.
type shpScanner struct {
	p      part
	hdr    mainHeader
	br     *bufio.Reader
	off    int64 // offset of the next record header
	buf    []byte
	recOff int64 // offset of the record last returned
	recLen int64 // content length in bytes of the record last returned
}

func newSHPScanner(p part) (*shpScanner, error) {
	h, err := readMainHeader(p)
	if err != nil {
		return nil, err
	}
	if !isPolygonType(h.shapeType) {
		return nil, fmt.Errorf("shapefile: %s: shape type %d (%s) is not a polygon type (want 5 Polygon, 15 PolygonZ or 25 PolygonM)", p.name, h.shapeType, shapeTypeName(h.shapeType))
	}
	sr := io.NewSectionReader(p.r, mainHeaderLen, h.length-mainHeaderLen)
	return &shpScanner{p: p, hdr: h, br: bufio.NewReaderSize(sr, 64<<10), off: mainHeaderLen}, nil
}

// next returns the content of the next record (valid until the next call),
// or io.EOF after the last one.
func (s *shpScanner) next() ([]byte, error) {
	if s.off == s.hdr.length {
		return nil, io.EOF
	}
	var rh [recHeaderLen]byte
	if s.hdr.length-s.off < recHeaderLen {
		return nil, fmt.Errorf("truncated record header at byte %d (file length %d)", s.off, s.hdr.length)
	}
	if _, err := io.ReadFull(s.br, rh[:]); err != nil {
		return nil, fmt.Errorf("reading record header at byte %d: %v", s.off, err)
	}
	n := int64(binary.BigEndian.Uint32(rh[4:])) * 2
	start := s.off + recHeaderLen
	if n > s.hdr.length-start {
		return nil, fmt.Errorf("content length %d bytes at byte %d runs past the end of the file (%d bytes): truncated record", n, start, s.hdr.length)
	}
	if int64(cap(s.buf)) < n {
		s.buf = make([]byte, n)
	}
	buf := s.buf[:n]
	if _, err := io.ReadFull(s.br, buf); err != nil {
		return nil, fmt.Errorf("reading %d bytes at byte %d: %v", n, start, err)
	}
	s.recOff, s.recLen = s.off, n
	s.off = start + n
	return buf, nil
}

// skipRest counts the records after the current one without decoding them.
func (s *shpScanner) skipRest() (int, error) {
	n := 0
	for s.off < s.hdr.length {
		var rh [recHeaderLen]byte
		if s.hdr.length-s.off < recHeaderLen {
			return n, errors.New("truncated record header")
		}
		if _, err := io.ReadFull(s.br, rh[:]); err != nil {
			return n, err
		}
		l := int64(binary.BigEndian.Uint32(rh[4:])) * 2
		if l > s.hdr.length-s.off-recHeaderLen {
			return n, errors.New("truncated record")
		}
		if _, err := s.br.Discard(int(l)); err != nil {
			return n, err
		}
		s.off += recHeaderLen + l
		n++
	}
	return n, nil
}

// decodeShape parses the content of one record of a polygon shapefile whose
// header declares fileType. It returns the rings as stored (shapefile
// winding, not yet assembled), nil for a Null shape or an empty polygon.
// budget is the number of vertices the caller may still accept; the point
// count is checked against it and against the record size before anything
// is allocated.
func decodeShape(c []byte, fileType int32, budget int) ([]orb.Ring, error) {
	if len(c) < 4 {
		return nil, fmt.Errorf("content of %d bytes is too short to hold a shape type", len(c))
	}
	t := int32(binary.LittleEndian.Uint32(c))
	if t == typeNull {
		return nil, nil
	}
	if t != fileType {
		return nil, fmt.Errorf("shape type %d (%s) differs from the file's shape type %d (%s)", t, shapeTypeName(t), fileType, shapeTypeName(fileType))
	}
	if len(c) < polyFixedLen {
		return nil, fmt.Errorf("polygon content of %d bytes is shorter than its %d-byte fixed part", len(c), polyFixedLen)
	}
	numParts := int64(int32(binary.LittleEndian.Uint32(c[36:])))
	numPoints := int64(int32(binary.LittleEndian.Uint32(c[40:])))
	if numParts < 0 || numPoints < 0 {
		return nil, fmt.Errorf("negative count: NumParts %d, NumPoints %d", numParts, numPoints)
	}
	// Z and M arrays (types 15 and 25) follow the points; they are ignored,
	// so only the X/Y part must be present.
	need := polyFixedLen + 4*numParts + 16*numPoints
	if need > int64(len(c)) {
		return nil, fmt.Errorf("NumParts %d and NumPoints %d need %d bytes but the record holds %d", numParts, numPoints, need, len(c))
	}
	if numPoints == 0 && numParts == 0 {
		return nil, nil
	}
	if numParts == 0 {
		return nil, fmt.Errorf("%d points but NumParts is 0", numPoints)
	}
	if numPoints > int64(budget) {
		return nil, fmt.Errorf("NumPoints %d exceeds the %d vertices left under Options.MaxVertices", numPoints, budget)
	}
	partAt := func(i int64) int64 { return int64(int32(binary.LittleEndian.Uint32(c[polyFixedLen+4*i:]))) }
	prev := int64(0)
	for i := int64(0); i < numParts; i++ {
		s := partAt(i)
		if s < 0 || s >= numPoints {
			return nil, fmt.Errorf("part %d starts at point %d, out of range (NumPoints %d)", i, s, numPoints)
		}
		if i == 0 && s != 0 {
			return nil, fmt.Errorf("part 0 starts at point %d, want 0", s)
		}
		if s < prev {
			return nil, fmt.Errorf("part %d starts at point %d, before part %d (point %d): part indices must increase", i, s, i-1, prev)
		}
		prev = s
	}
	pts := make([]orb.Point, numPoints)
	pb := c[polyFixedLen+4*numParts:]
	for i := range pts {
		x := math.Float64frombits(binary.LittleEndian.Uint64(pb[16*i:]))
		y := math.Float64frombits(binary.LittleEndian.Uint64(pb[16*i+8:]))
		if math.IsNaN(x) || math.IsInf(x, 0) || math.IsNaN(y) || math.IsInf(y, 0) {
			return nil, fmt.Errorf("point %d has a non-finite coordinate (x %v, y %v)", i, x, y)
		}
		pts[i] = orb.Point{x, y}
	}
	rings := make([]orb.Ring, numParts)
	for i := int64(0); i < numParts; i++ {
		s, e := partAt(i), numPoints
		if i+1 < numParts {
			e = partAt(i + 1)
		}
		// The full slice expression keeps an append (closing a ring) from
		// overwriting the next ring's first point.
		rings[i] = orb.Ring(pts[s:e:e])
	}
	return rings, nil
}
