package gpkg

import (
	"encoding/binary"
	"math"
	"reflect"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// byteOrder is what the builders below need: reading and appending.
type byteOrder interface {
	binary.ByteOrder
	binary.AppendByteOrder
}

// gpHeader builds a GeoPackageBinaryHeader byte by byte from the layout in
// GeoPackage 1.3 §2.1.3.1.1 "BLOB Format": "GP", version, flags (bit 0 B =
// byte order, bits 3-1 E = envelope contents indicator, bit 4 Y = empty,
// bit 5 X = extended), int32 srs_id, then 0/4/6/6/8 envelope doubles.
func gpHeader(order byteOrder, env int, empty bool, srs int32) []byte {
	flags := byte(env << 1)
	if order == binary.LittleEndian {
		flags |= 1
	}
	if empty {
		flags |= 1 << 4
	}
	b := []byte{'G', 'P', 0, flags}
	b = order.AppendUint32(b, uint32(srs))
	n := []int{0, 4, 6, 6, 8}[env]
	for i := 0; i < n; i++ {
		b = order.AppendUint64(b, math.Float64bits(float64(i)+0.5))
	}
	return b
}

// wkbPoly writes a WKB Polygon (OGC Simple Features 1.2.1 §8.2.8:
// byteOrder, wkbType, numRings, then numPoints and points per ring) with
// the given type code and ordinates per point; z and m are filled with 7, 9.
func wkbPoly(order byteOrder, code uint32, dims int, rings [][][2]float64) []byte {
	b := []byte{1}
	if order == binary.BigEndian {
		b[0] = 0
	}
	b = order.AppendUint32(b, code)
	b = order.AppendUint32(b, uint32(len(rings)))
	for _, r := range rings {
		b = order.AppendUint32(b, uint32(len(r)))
		for _, p := range r {
			b = order.AppendUint64(b, math.Float64bits(p[0]))
			b = order.AppendUint64(b, math.Float64bits(p[1]))
			for d := 2; d < dims; d++ {
				b = order.AppendUint64(b, math.Float64bits(float64(5+2*d-2)))
			}
		}
	}
	return b
}

// wkbMulti wraps polygon WKB members into a MultiPolygon (§8.2.8).
func wkbMulti(order byteOrder, code uint32, members ...[]byte) []byte {
	b := []byte{1}
	if order == binary.BigEndian {
		b[0] = 0
	}
	b = order.AppendUint32(b, code)
	b = order.AppendUint32(b, uint32(len(members)))
	for _, m := range members {
		b = append(b, m...)
	}
	return b
}

// The RFC 7946 Appendix A.3 polygon: exterior counter-clockwise, hole clockwise.
var (
	a3Outer = [][2]float64{{100, 0}, {101, 0}, {101, 1}, {100, 1}, {100, 0}}
	a3Hole  = [][2]float64{{100.8, 0.8}, {100.8, 0.2}, {100.2, 0.2}, {100.2, 0.8}, {100.8, 0.8}}
	a3      = orb.MultiPolygon{{ring(a3Outer), ring(a3Hole)}}
)

func ring(pts [][2]float64) orb.Ring {
	r := make(orb.Ring, len(pts))
	for i, p := range pts {
		r[i] = p
	}
	return r
}

func reversed(pts [][2]float64) [][2]float64 {
	out := make([][2]float64, len(pts))
	for i, p := range pts {
		out[len(pts)-1-i] = p
	}
	return out
}

func TestHeader(t *testing.T) {
	le, be := byteOrder(binary.LittleEndian), byteOrder(binary.BigEndian)
	for _, order := range []byteOrder{le, be} {
		for env, size := range []int{8, 40, 56, 56, 72} { // §2.1.3.1.1: 8 + 0/32/48/48/64 bytes
			for _, empty := range []bool{false, true} {
				b := gpHeader(order, env, empty, 4326)
				h, err := parseHeader(append(b, 0xAA))
				if err != nil {
					t.Fatalf("%v env %d: %v", order, env, err)
				}
				if h.size != size || h.srsID != 4326 || h.empty != empty || len(h.envelope) != (size-8)/8 {
					t.Errorf("%v env %d empty %v: %+v, want size %d", order, env, empty, h, size)
				}
				for i, v := range h.envelope {
					if v != float64(i)+0.5 {
						t.Errorf("%v env %d: envelope[%d] = %v", order, env, i, v)
					}
				}
				// The same header before a WKB polygon decodes to A.3.
				mp, _, err := decodeBlob(append(b, wkbPoly(order, 3, 2, [][][2]float64{a3Outer, a3Hole})...), 1000)
				if err != nil {
					t.Fatal(err)
				}
				if empty && mp != nil {
					t.Errorf("empty flag set: got %v", mp)
				}
				if !empty && !reflect.DeepEqual(mp, a3) {
					t.Errorf("%v env %d: %v", order, env, mp)
				}
			}
		}
	}
	// Byte order B applies to srs_id: 0x000010E6 = 4326 read both ways.
	if h, _ := parseHeader([]byte{'G', 'P', 0, 0, 0, 0, 0x10, 0xE6}); h.srsID != 4326 {
		t.Errorf("big-endian srs_id %d", h.srsID)
	}
	if h, _ := parseHeader([]byte{'G', 'P', 0, 1, 0xE6, 0x10, 0, 0}); h.srsID != 4326 {
		t.Errorf("little-endian srs_id %d", h.srsID)
	}
	if h, _ := parseHeader([]byte{'G', 'P', 0, 1, 0xFF, 0xFF, 0xFF, 0xFF}); h.srsID != -1 {
		t.Errorf("srs_id -1 read as %d", h.srsID)
	}
}

func TestHeaderErrors(t *testing.T) {
	for _, tc := range []struct {
		name string
		b    []byte
		want string
	}{
		{"short", []byte("GP\x00"), "geometry blob of 3 bytes is shorter than the 8-byte GeoPackage header"},
		{"magic", []byte("XP\x00\x01\xe6\x10\x00\x00"), `geometry blob does not start with the GeoPackage magic "GP" (found 0x58 0x50)`},
		{"version", []byte("GP\x01\x01\xe6\x10\x00\x00"), "geometry blob version 1 is not supported (only 0 = version 1)"},
		{"extended", []byte("GP\x00\x21\xe6\x10\x00\x00"), "extended GeoPackage geometry blob (flag X) is not supported"},
		{"envelope 5", []byte("GP\x00\x0b\xe6\x10\x00\x00"), "geometry blob has invalid envelope contents indicator 5 (0-4 allowed)"},
		{"envelope 7", []byte("GP\x00\x0f\xe6\x10\x00\x00"), "geometry blob has invalid envelope contents indicator 7 (0-4 allowed)"},
		{"envelope cut", append([]byte("GP\x00\x03\xe6\x10\x00\x00"), make([]byte, 31)...), "geometry blob of 39 bytes is too short for its 32-byte envelope"},
	} {
		_, err := parseHeader(tc.b)
		if err == nil || err.Error() != tc.want {
			t.Errorf("%s: got %v, want %s", tc.name, err, tc.want)
		}
	}
}

func TestWKB(t *testing.T) {
	le, be := byteOrder(binary.LittleEndian), byteOrder(binary.BigEndian)
	rings := [][][2]float64{a3Outer, a3Hole}
	square := [][2]float64{{102, 2}, {103, 2}, {103, 3}, {102, 3}, {102, 2}}
	a6 := orb.MultiPolygon{{ring(square)}, a3[0]} // RFC 7946 Appendix A.6
	for _, tc := range []struct {
		name string
		wkb  []byte
		want orb.MultiPolygon
	}{
		// Type codes: OGC SF 1.2.1 §8.2.3 (3 Polygon, 6 MultiPolygon; ISO
		// +1000 Z, +2000 M, +3000 ZM) and EWKB bits 0x80000000 Z, 0x40000000 M,
		// 0x20000000 SRID.
		{"polygon LE", wkbPoly(le, 3, 2, rings), a3},
		{"polygon BE", wkbPoly(be, 3, 2, rings), a3},
		{"polygon Z 1003", wkbPoly(le, 1003, 3, rings), a3},
		{"polygon M 2003", wkbPoly(be, 2003, 3, rings), a3},
		{"polygon ZM 3003", wkbPoly(le, 3003, 4, rings), a3},
		{"polygon EWKB Z", wkbPoly(le, 0x80000003, 3, rings), a3},
		{"polygon EWKB ZM", wkbPoly(be, 0xC0000003, 4, rings), a3},
		{"polygon EWKB SRID", func() []byte {
			b := wkbPoly(le, 0x20000003, 2, nil)[:5]
			b = le.AppendUint32(b, 4326)
			return append(b, wkbPoly(le, 3, 2, rings)[5:]...)
		}(), a3},
		{"multipolygon", wkbMulti(le, 6, wkbPoly(le, 3, 2, [][][2]float64{square}), wkbPoly(be, 3, 2, rings)), a6},
		{"multipolygon Z", wkbMulti(be, 1006, wkbPoly(be, 1003, 3, [][][2]float64{square}), wkbPoly(le, 1003, 3, rings)), a6},
		{"multipolygon ZM", wkbMulti(le, 3006, wkbPoly(le, 3003, 4, [][][2]float64{square}), wkbPoly(le, 3003, 4, rings)), a6},
		{"empty polygon", wkbPoly(le, 3, 2, nil), nil},
		{"empty multipolygon", wkbMulti(le, 6), orb.MultiPolygon{}},
		// Stored against RFC 7946 winding: both rings are reversed.
		{"wound the other way", wkbPoly(le, 3, 2, [][][2]float64{reversed(a3Outer), reversed(a3Hole)}), a3},
	} {
		blob := append(gpHeader(le, 1, false, 4326), tc.wkb...)
		got, _, err := decodeBlob(blob, 1000)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if !reflect.DeepEqual(got, tc.want) {
			t.Errorf("%s: got %v, want %v", tc.name, got, tc.want)
		}
	}
}

func TestWKBErrors(t *testing.T) {
	le := byteOrder(binary.LittleEndian)
	rings := [][][2]float64{a3Outer}
	poly := wkbPoly(le, 3, 2, rings)
	huge := le.AppendUint32([]byte{1, 3, 0, 0, 0}, 0xFFFFFFFF)
	hugePts := le.AppendUint32(le.AppendUint32([]byte{1, 3, 0, 0, 0}, 1), 0x7FFFFFFF)
	nan := wkbPoly(le, 3, 2, [][][2]float64{{{0, 0}, {1, 0}, {math.NaN(), 1}, {0, 0}}})
	inf := wkbPoly(le, 3, 2, [][][2]float64{{{0, 0}, {1, 0}, {1, math.Inf(1)}, {0, 0}}})
	for _, tc := range []struct {
		name string
		wkb  []byte
		max  int
		want string
	}{
		{"empty", nil, 100, "truncated WKB: geometry header needs 5 bytes at offset 0, 0 left"},
		{"byte order", []byte{2, 3, 0, 0, 0}, 100, "invalid WKB byte order 2 at offset 0"},
		{"truncated", poly[:len(poly)-9], 100, "ring 0: truncated WKB: 5 points claimed at offset 9 but only 71 bytes left"},
		{"huge ring count", huge, 100, "truncated WKB: 4294967295 rings claimed at offset 5 but only 0 bytes left"},
		{"huge point count", hugePts, 100, "ring 0: truncated WKB: 2147483647 points claimed at offset 9 but only 0 bytes left"},
		{"trailing", append(poly, 0), 100, "1 bytes left over after the WKB geometry"},
		{"point", []byte{1, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0}, 100, "geometry type Point is not supported (only Polygon and MultiPolygon)"},
		{"curvepolygon", wkbPoly(le, 10, 2, nil), 100, "geometry type CurvePolygon is not supported (only Polygon and MultiPolygon)"},
		{"multisurface Z", wkbPoly(le, 1012, 3, nil), 100, "geometry type MultiSurface is not supported (only Polygon and MultiPolygon)"},
		{"unknown", wkbPoly(le, 99, 2, nil), 100, "geometry type type 99 is not supported (only Polygon and MultiPolygon)"},
		{"type 4003", wkbPoly(le, 4003, 2, nil), 100, "invalid WKB geometry type 4003"},
		{"multi member", wkbMulti(le, 6, wkbPoly(le, 2, 2, nil)), 100, "polygon 0: MultiPolygon member is a LineString"},
		{"nan", nan, 100, "ring 0 point 2 has a non-finite coordinate (NaN, 1)"},
		{"inf", inf, 100, "ring 0 point 2 has a non-finite coordinate (1, +Inf)"},
		{"open ring", wkbPoly(le, 3, 2, [][][2]float64{{{0, 0}, {1, 0}, {1, 1}, {0, 1}}}), 100, "ring 0 is not closed: first point [0 0], last [0 1]"},
		{"3-point ring", wkbPoly(le, 3, 2, [][][2]float64{{{0, 0}, {1, 0}, {0, 0}}}), 100, "ring 0 has 3 points; a linear ring needs at least 4"},
		{"vertex cap", poly, 4, "ring 0 has 5 points, over the vertex limit (4 left of Options.MaxVertices)"},
	} {
		_, err := decodeWKB(tc.wkb, tc.max)
		if err == nil || err.Error() != tc.want {
			t.Errorf("%s: got %v\nwant %s", tc.name, err, tc.want)
		}
	}
}

// encodeWKB writes mp as little-endian 2D WKB MultiPolygon, for round trips.
func encodeWKB(mp orb.MultiPolygon) []byte {
	le := byteOrder(binary.LittleEndian)
	var members [][]byte
	for _, p := range mp {
		var rs [][][2]float64
		for _, r := range p {
			pts := make([][2]float64, len(r))
			for i, q := range r {
				pts[i] = q
			}
			rs = append(rs, pts)
		}
		members = append(members, wkbPoly(le, 3, 2, rs))
	}
	return wkbMulti(le, 6, members...)
}

// FuzzGeometryBlob feeds arbitrary bytes to the header and WKB decoder. It
// must never panic or over-allocate, and whatever it accepts must survive a
// round trip through a plain WKB encoder unchanged, with outer rings
// counter-clockwise and holes clockwise.
func FuzzGeometryBlob(f *testing.F) {
	le, be := byteOrder(binary.LittleEndian), byteOrder(binary.BigEndian)
	rings := [][][2]float64{a3Outer, a3Hole}
	f.Add(append(gpHeader(le, 0, false, 4326), wkbPoly(le, 3, 2, rings)...))
	f.Add(append(gpHeader(be, 1, false, 4326), wkbPoly(be, 1003, 3, rings)...))
	f.Add(append(gpHeader(le, 2, false, 0), wkbPoly(le, 3003, 4, rings)...))
	f.Add(append(gpHeader(be, 4, true, -1), wkbPoly(le, 3, 2, nil)...))
	f.Add(append(gpHeader(le, 3, false, 4326), wkbMulti(be, 6, wkbPoly(le, 3, 2, rings), wkbPoly(be, 0x80000003, 3, rings))...))
	f.Add(append(gpHeader(le, 0, false, 4326), le.AppendUint32([]byte{1, 3, 0, 0, 0}, 0xFFFFFFFF)...))
	f.Add([]byte("GP"))
	f.Fuzz(func(t *testing.T, b []byte) {
		mp, _, err := decodeBlob(b, 1<<16)
		if err != nil {
			if !strings.Contains(err.Error(), " ") {
				t.Fatalf("terse error %q", err)
			}
			return
		}
		n := 0
		for _, p := range mp {
			for i, r := range p {
				n += len(r)
				// Near-zero areas may change sign with summation order:
				// judge only rings whose area is clear of rounding.
				a, bb := geo.RingArea(r), r.Bound()
				if math.Abs(a) > 1e-9*(bb.Max[0]-bb.Min[0])*(bb.Max[1]-bb.Min[1]) && ((i == 0 && a < 0) || (i > 0 && a > 0)) {
					t.Fatalf("polygon ring %d wound wrongly: area %v", i, a)
				}
			}
		}
		if n > len(b)/16 {
			t.Fatalf("%d vertices from %d bytes", n, len(b))
		}
		again, err := decodeWKB(encodeWKB(mp), 1<<16)
		if err != nil {
			t.Fatalf("re-encoded geometry rejected: %v", err)
		}
		if len(mp) == 0 && len(again) == 0 {
			return
		}
		if !reflect.DeepEqual(again, mp) {
			t.Fatalf("round trip changed %v into %v", mp, again)
		}
	})
}

// BenchmarkDecodeBlob decodes a 2000-vertex polygon with a 200-vertex hole.
func BenchmarkDecodeBlob(b *testing.B) {
	circle := func(n int, r float64, ccw bool) [][2]float64 {
		pts := make([][2]float64, n+1)
		for i := 0; i < n; i++ {
			a := 2 * math.Pi * float64(i) / float64(n)
			if !ccw {
				a = -a
			}
			pts[i] = [2]float64{10 + r*math.Cos(a), 50 + r*math.Sin(a)}
		}
		pts[n] = pts[0]
		return pts
	}
	le := byteOrder(binary.LittleEndian)
	blob := append(gpHeader(le, 1, false, 4326), wkbPoly(le, 3, 2, [][][2]float64{circle(2000, 1, true), circle(200, 0.1, false)})...)
	b.SetBytes(int64(len(blob)))
	b.ReportAllocs()
	for b.Loop() {
		if _, _, err := decodeBlob(blob, 1<<20); err != nil {
			b.Fatal(err)
		}
	}
}
