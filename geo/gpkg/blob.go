package gpkg

import (
	"encoding/binary"
	"fmt"
	"math"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// GeoPackage 1.3 §2.1.3.1.1 "BLOB Format": the geometry column holds a
// GeoPackageBinaryHeader followed by standard WKB.
//
//	byte[2] magic = 0x47 0x50 ("GP")
//	byte    version (0 = version 1)
//	byte    flags: bits 7-6 reserved, bit 5 X (1 = ExtendedGeoPackageBinary),
//	        bit 4 Y (1 = empty geometry), bits 3-1 E (envelope contents
//	        indicator), bit 0 B (byte order of srs_id and envelope: 1 = little)
//	int32   srs_id
//	double[] envelope: E = 0 none, 1 minx,maxx,miny,maxy (32 bytes),
//	        2 +minz,maxz (48), 3 +minm,maxm (48), 4 +z and m (64); 5-7 invalid.
const (
	flagByteOrder = 0x01
	flagEnvelope  = 0x0E
	flagEmpty     = 0x10
	flagExtended  = 0x20
)

// envelopeBytes is indexed by the envelope contents indicator code.
var envelopeBytes = [...]int{0, 32, 48, 48, 64}

// header is the parsed GeoPackageBinaryHeader.
type header struct {
	version  byte
	empty    bool
	srsID    int32
	envelope []float64 // 0, 4, 6 or 8 values in file order
	size     int       // header length in bytes; WKB starts here
}

// parseHeader reads the GeoPackageBinaryHeader at the start of b.
func parseHeader(b []byte) (header, error) {
	var h header
	if len(b) < 8 {
		return h, fmt.Errorf("geometry blob of %d bytes is shorter than the 8-byte GeoPackage header", len(b))
	}
	if b[0] != 'G' || b[1] != 'P' {
		return h, fmt.Errorf("geometry blob does not start with the GeoPackage magic \"GP\" (found 0x%02x 0x%02x)", b[0], b[1])
	}
	h.version = b[2]
	if h.version != 0 {
		return h, fmt.Errorf("geometry blob version %d is not supported (only 0 = version 1)", h.version)
	}
	flags := b[3]
	if flags&flagExtended != 0 {
		return h, fmt.Errorf("extended GeoPackage geometry blob (flag X) is not supported")
	}
	var order binary.ByteOrder = binary.BigEndian
	if flags&flagByteOrder != 0 {
		order = binary.LittleEndian
	}
	h.empty = flags&flagEmpty != 0
	h.srsID = int32(order.Uint32(b[4:8]))
	code := int(flags&flagEnvelope) >> 1
	if code >= len(envelopeBytes) {
		return h, fmt.Errorf("geometry blob has invalid envelope contents indicator %d (0-4 allowed)", code)
	}
	n := envelopeBytes[code]
	if len(b) < 8+n {
		return h, fmt.Errorf("geometry blob of %d bytes is too short for its %d-byte envelope", len(b), n)
	}
	h.envelope = make([]float64, n/8)
	for i := range h.envelope {
		h.envelope[i] = math.Float64frombits(order.Uint64(b[8+8*i:]))
	}
	h.size = 8 + n
	return h, nil
}

// WKB geometry type codes (OGC Simple Features 1.2.1, §8.2.3 and the
// ISO 13249-3 codes it lists: +1000 Z, +2000 M, +3000 ZM).
const (
	wkbPolygon      = 3
	wkbMultiPolygon = 6
)

var wkbTypeNames = map[uint32]string{
	1: "Point", 2: "LineString", 3: "Polygon", 4: "MultiPoint",
	5: "MultiLineString", 6: "MultiPolygon", 7: "GeometryCollection",
	8: "CircularString", 9: "CompoundCurve", 10: "CurvePolygon",
	11: "MultiCurve", 12: "MultiSurface", 13: "Curve", 14: "Surface",
	15: "PolyhedralSurface", 16: "TIN", 17: "Triangle",
}

// EWKB-style flag bits in the type word (PostGIS extended WKB, also
// written by some older GDAL versions).
const (
	ewkbZ    = 0x80000000
	ewkbM    = 0x40000000
	ewkbSRID = 0x20000000
)

// wkbReader decodes Polygon and MultiPolygon WKB, checking every count
// against the bytes that remain before allocating.
type wkbReader struct {
	b           []byte
	off         int
	maxVertices int // remaining vertex budget
}

func (r *wkbReader) need(n int, what string) error {
	if n < 0 || len(r.b)-r.off < n {
		return fmt.Errorf("truncated WKB: %s needs %d bytes at offset %d, %d left", what, n, r.off, len(r.b)-r.off)
	}
	return nil
}

// geomType reads a byte-order byte and a type word, and returns the order,
// the base type and the number of ordinates per point.
func (r *wkbReader) geomType() (binary.ByteOrder, uint32, int, error) {
	if err := r.need(5, "geometry header"); err != nil {
		return nil, 0, 0, err
	}
	var order binary.ByteOrder
	switch r.b[r.off] {
	case 0:
		order = binary.BigEndian
	case 1:
		order = binary.LittleEndian
	default:
		return nil, 0, 0, fmt.Errorf("invalid WKB byte order %d at offset %d", r.b[r.off], r.off)
	}
	t := order.Uint32(r.b[r.off+1:])
	r.off += 5
	dims := 2
	if t&(ewkbZ|ewkbM|ewkbSRID) != 0 {
		if t&ewkbZ != 0 {
			dims++
		}
		if t&ewkbM != 0 {
			dims++
		}
		if t&ewkbSRID != 0 {
			if err := r.need(4, "EWKB SRID"); err != nil {
				return nil, 0, 0, err
			}
			r.off += 4
		}
		t &^= ewkbZ | ewkbM | ewkbSRID
		if t >= 1000 {
			return nil, 0, 0, fmt.Errorf("invalid WKB geometry type 0x%08x", t|ewkbZ|ewkbM)
		}
	} else {
		switch t / 1000 {
		case 0:
		case 1, 2:
			dims = 3
		case 3:
			dims = 4
		default:
			return nil, 0, 0, fmt.Errorf("invalid WKB geometry type %d", t)
		}
		t %= 1000
	}
	return order, t, dims, nil
}

func typeName(t uint32) string {
	if s, ok := wkbTypeNames[t]; ok {
		return s
	}
	return fmt.Sprintf("type %d", t)
}

func (r *wkbReader) count(order binary.ByteOrder, what string, minBytesEach int) (int, error) {
	if err := r.need(4, what+" count"); err != nil {
		return 0, err
	}
	n := int(order.Uint32(r.b[r.off:]))
	r.off += 4
	if left := len(r.b) - r.off; n > left/minBytesEach {
		return 0, fmt.Errorf("truncated WKB: %d %s claimed at offset %d but only %d bytes left", n, what, r.off-4, left)
	}
	return n, nil
}

// polygonBody reads the ring count and rings of a Polygon whose header has
// been read.
func (r *wkbReader) polygonBody(order binary.ByteOrder, dims int) (orb.Polygon, error) {
	nrings, err := r.count(order, "rings", 4)
	if err != nil {
		return nil, err
	}
	poly := make(orb.Polygon, 0, nrings)
	for i := 0; i < nrings; i++ {
		npts, err := r.count(order, "points", 8*dims)
		if err != nil {
			return nil, fmt.Errorf("ring %d: %w", i, err)
		}
		if npts > r.maxVertices {
			return nil, fmt.Errorf("ring %d has %d points, over the vertex limit (%d left of Options.MaxVertices)", i, npts, r.maxVertices)
		}
		r.maxVertices -= npts
		ring := make(orb.Ring, npts)
		for j := range ring {
			x := math.Float64frombits(order.Uint64(r.b[r.off:]))
			y := math.Float64frombits(order.Uint64(r.b[r.off+8:]))
			r.off += 8 * dims
			if math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) || math.IsInf(y, 0) {
				return nil, fmt.Errorf("ring %d point %d has a non-finite coordinate (%v, %v)", i, j, x, y)
			}
			ring[j] = orb.Point{x, y}
		}
		if npts < 4 {
			return nil, fmt.Errorf("ring %d has %d points; a linear ring needs at least 4", i, npts)
		}
		if ring[0] != ring[npts-1] {
			return nil, fmt.Errorf("ring %d is not closed: first point %v, last %v", i, ring[0], ring[npts-1])
		}
		poly = append(poly, ring)
	}
	return poly, nil
}

// decodeWKB decodes a Polygon or MultiPolygon (any of the Z, M, ZM forms;
// only x and y are kept). The whole of b must be used.
func decodeWKB(b []byte, maxVertices int) (orb.MultiPolygon, error) {
	r := &wkbReader{b: b, maxVertices: maxVertices}
	order, t, dims, err := r.geomType()
	if err != nil {
		return nil, err
	}
	var mp orb.MultiPolygon
	switch t {
	case wkbPolygon:
		p, err := r.polygonBody(order, dims)
		if err != nil {
			return nil, err
		}
		if len(p) > 0 {
			mp = orb.MultiPolygon{p}
		}
	case wkbMultiPolygon:
		// Each member is at least a 9-byte empty Polygon.
		n, err := r.count(order, "polygons", 9)
		if err != nil {
			return nil, err
		}
		mp = make(orb.MultiPolygon, 0, n)
		for i := 0; i < n; i++ {
			po, pt, pd, err := r.geomType()
			if err != nil {
				return nil, fmt.Errorf("polygon %d: %w", i, err)
			}
			if pt != wkbPolygon {
				return nil, fmt.Errorf("polygon %d: MultiPolygon member is a %s", i, typeName(pt))
			}
			p, err := r.polygonBody(po, pd)
			if err != nil {
				return nil, fmt.Errorf("polygon %d: %w", i, err)
			}
			if len(p) > 0 {
				mp = append(mp, p)
			}
		}
	default:
		return nil, fmt.Errorf("geometry type %s is not supported (only Polygon and MultiPolygon)", typeName(t))
	}
	if r.off != len(b) {
		return nil, fmt.Errorf("%d bytes left over after the WKB geometry", len(b)-r.off)
	}
	return mp, nil
}

// decodeBlob decodes a GeoPackage geometry blob into a MultiPolygon with
// outer rings counter-clockwise and holes clockwise. An empty geometry gives
// a nil MultiPolygon.
func decodeBlob(b []byte, maxVertices int) (orb.MultiPolygon, header, error) {
	h, err := parseHeader(b)
	if err != nil {
		return nil, h, err
	}
	if h.empty {
		return nil, h, nil
	}
	mp, err := decodeWKB(b[h.size:], maxVertices)
	if err != nil {
		return nil, h, err
	}
	orient(mp)
	return mp, h, nil
}

// orient makes outer rings counter-clockwise and holes clockwise
// (RFC 7946 §3.1.6), judged by the sign of geo.RingArea. Rings of zero
// area are left as stored.
func orient(mp orb.MultiPolygon) {
	for _, p := range mp {
		for i, ring := range p {
			a := geo.RingArea(ring)
			if (i == 0 && a < 0) || (i > 0 && a > 0) {
				ring.Reverse()
			}
		}
	}
}
