package render

import (
	"bytes"
	"encoding/binary"
	"hash/crc32"
	"image"
	"io"
	"math/bits"
	"sync"

	"github.com/stipple-maps/stipple/render/deflate"
)

// Encoder writes tiles as PNG (ISO/IEC 15948, "PNG Specification, Second
// Edition"): indexed colour when the image has at most 256 distinct colours
// (lossless then; bit depth 1, 2, 4 or 8 by palette size, with a tRNS chunk
// for the palette's alpha), truecolour with alpha otherwise. Indexed rows
// and sparse truecolour rows are stored with filter type 0 (None); mostly
// inked truecolour tiles use Up (see FilterAuto). The zlib stream comes from
// render/deflate: indexed rows are coded as runs, pixel repeats and
// literals; sparse truecolour rows as their inked pixels and runs of empty
// ones; filtered rows with Huffman codes only. On dot tiles, mostly empty or
// flat, that is many times faster than image/png and about as small
// (BenchmarkEncode). The output depends on the pixels alone. An Encoder is
// safe for concurrent use.
type Encoder struct {
	// Filter chooses the PNG row filter of truecolour tiles; indexed rows
	// are never filtered.
	Filter RowFilter
	pool   sync.Pool // *encState
}

// NewEncoder returns an Encoder tuned for dot tiles.
func NewEncoder() *Encoder { return &Encoder{} }

// RowFilter is a choice of PNG row filter (PNG spec §9) for truecolour
// tiles.
type RowFilter int

const (
	// FilterAuto uses Up on tiles that are mostly inked and None on the
	// rest: on a dense tile, Up turns flat areas into runs of zeros; on a
	// sparse one the empty space is zeros already and None costs nothing.
	FilterAuto RowFilter = iota
	FilterNone
	FilterSub
	FilterUp
)

type encState struct {
	table colorTable
	pal   []uint32 // RGBA, big-endian packed, in order of first appearance
	ind   []uint8  // palette index of every pixel
	raw   []byte   // filtered scanlines
	z     []byte
	ink   []uint64 // non-zero pixels, for Encode
	// inkBits and inkWords are the ink bitmap of the tile EncodeTile is
	// writing (inkWords words a row), which packRows reads; nil otherwise.
	inkBits  []uint64
	inkWords int
	runs     []uint32
	out      bytes.Buffer
	zlib     deflate.Encoder
}

var pngSignature = []byte{0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n'}

func (e *Encoder) state() *encState {
	st, _ := e.pool.Get().(*encState)
	if st == nil {
		st = &encState{}
	}
	return st
}

// Encode writes img to w.
func (e *Encoder) Encode(w io.Writer, img *image.NRGBA) error {
	st := e.state()
	defer e.pool.Put(st)
	b := img.Bounds()
	wd, h := b.Dx(), b.Dy()
	var data []byte
	switch {
	case st.palettize(img, wd, h):
		data = st.write(wd, h, st.pal, st.ind, wd, 0, nil)
	case e.Filter == FilterNone || (e.Filter == FilterAuto && !dense(img, wd, h)):
		// As EncodeTile does: the empty pixels are known runs of zeros.
		wpr := (wd + 63) / 64
		st.ink = growWords(st.ink, wpr*h)
		for y := 0; y < h; y++ {
			src := img.Pix[(b.Min.Y-img.Rect.Min.Y+y)*img.Stride+(b.Min.X-img.Rect.Min.X)*4:][:4*wd]
			for x := 0; x < wd; x++ {
				if binary.LittleEndian.Uint32(src[4*x:]) != 0 {
					st.ink[y*wpr+x>>6] |= 1 << (x & 63)
				}
			}
		}
		st.runs = inkRuns(st.runs[:0], st.ink, wpr, wd, h)
		data = st.write(wd, h, nil, st.rgbaRows(img, wd, h, FilterNone), 0, 0, st.runs)
	default:
		data = st.writeFiltered(wd, h, st.rgbaRows(img, wd, h, e.Filter))
	}
	_, err := w.Write(data)
	return err
}

// EncodeTile writes t, composited by Canvas.CompositeTile or
// CompositeCountsTile, to w. It writes the bytes Encode writes for
// t.Image, without the work of finding the colours again or copying rows:
// both number the colours in order of first appearance after transparent,
// which is always index 0.
func (e *Encoder) EncodeTile(w io.Writer, t *Tile) error {
	st := e.state()
	defer e.pool.Put(st)
	var data []byte
	if t.paletted {
		st.inkBits, st.inkWords = t.ink, t.wpr
		data = st.write(t.w, t.h, t.pal, t.ind, 1+t.w, 1, nil)
		st.inkBits = nil
	} else if e.Filter == FilterNone || (e.Filter == FilterAuto && 2*t.inked <= t.w*t.h) {
		// The rows as they are, coded as literal pixels and runs of
		// empty ones.
		st.runs = inkRuns(st.runs[:0], t.ink, t.wpr, t.w, t.h)
		data = st.write(t.w, t.h, nil, t.rgba, 0, 0, st.runs)
	} else {
		data = st.writeFiltered(t.w, t.h, st.rgbaRows(t.Image, t.w, t.h, e.Filter))
	}
	_, err := w.Write(data)
	return err
}

// writeFiltered makes the PNG file of truecolour rows filtered with Sub or
// Up, Huffman-coded only: a mostly inked tile after the filter is small
// differences with few long repeats, where searching for matches costs more
// than it saves (BenchmarkEncode, dots=20000).
func (st *encState) writeFiltered(w, h int, rows []byte) []byte {
	st.runs = append(st.runs[:0], uint32(len(rows)), 0)
	return st.write(w, h, nil, rows, 0, 0, st.runs)
}

// write makes the PNG file. With a palette, ind holds the indices, row y
// at ind[y*stride+off:]; without one, rows holds the filtered truecolour
// scanlines (passed as ind), and runs, if not nil, their literal and zero
// stretches (deflate.Encoder.ZlibRuns).
func (st *encState) write(w, h int, pal []uint32, ind []byte, stride, off int, runs []uint32) []byte {
	st.out.Reset()
	st.out.Write(pngSignature)
	var depth uint8 = 8
	colorType := uint8(6) // truecolour with alpha
	if pal != nil {
		colorType = 3
		switch n := len(pal); {
		case n <= 2:
			depth = 1
		case n <= 4:
			depth = 2
		case n <= 16:
			depth = 4
		}
	}
	var ihdr [13]byte
	binary.BigEndian.PutUint32(ihdr[0:], uint32(w))
	binary.BigEndian.PutUint32(ihdr[4:], uint32(h))
	ihdr[8], ihdr[9] = depth, colorType // compression, filter, interlace: 0
	st.chunk("IHDR", ihdr[:])
	rows, bpp := ind, 4
	if pal != nil {
		plte := make([]byte, 0, 3*len(pal))
		trns := make([]byte, 0, len(pal))
		lastAlpha := 0
		for i, c := range pal {
			plte = append(plte, byte(c>>24), byte(c>>16), byte(c>>8))
			a := byte(c)
			trns = append(trns, a)
			if a != 255 {
				lastAlpha = i + 1
			}
		}
		st.chunk("PLTE", plte)
		if lastAlpha > 0 {
			st.chunk("tRNS", trns[:lastAlpha])
		}
		bpp = 1
		if depth != 8 || off != 1 || stride != 1+w {
			rows = st.packRows(ind, stride, off, w, h, depth)
		}
	}
	if runs != nil {
		st.z = st.zlib.ZlibRuns(st.z[:0], rows, runs)
	} else {
		st.z = st.zlib.Zlib(st.z[:0], rows, bpp)
	}
	st.chunk("IDAT", st.z)
	st.chunk("IEND", nil)
	return st.out.Bytes()
}

// dense reports whether more than half of the pixels have ink (alpha not
// zero): FilterAuto's test for the Up filter.
func dense(img *image.NRGBA, w, h int) bool {
	inked := 0
	for y := 0; y < h; y++ {
		src := img.Pix[y*img.Stride:][:4*w]
		for i := 3; i < len(src); i += 4 {
			if src[i] != 0 {
				inked++
			}
		}
	}
	return 2*inked > w*h
}

// rgbaRows returns truecolour scanlines of img with the given filter.
func (st *encState) rgbaRows(img *image.NRGBA, w, h int, f RowFilter) []byte {
	b := img.Bounds()
	rowLen := 1 + 4*w
	st.raw = grow(st.raw, rowLen*h)
	row := func(y int) []byte {
		return img.Pix[(b.Min.Y-img.Rect.Min.Y+y)*img.Stride+(b.Min.X-img.Rect.Min.X)*4:][:4*w]
	}
	if f == FilterAuto {
		f = FilterNone
		if dense(img.SubImage(b).(*image.NRGBA), w, h) {
			f = FilterUp
		}
	}
	for y := 0; y < h; y++ {
		r := st.raw[y*rowLen : (y+1)*rowLen]
		src := row(y)
		r[0] = byte(f - FilterNone) // PNG filter type: 0 None, 1 Sub, 2 Up
		switch f {
		case FilterSub: // each byte minus the same channel of the pixel to its left
			copy(r[1:5], src[:4])
			for i := 4; i < len(src); i++ {
				r[1+i] = src[i] - src[i-4]
			}
		case FilterUp: // each byte minus the byte above
			if y == 0 {
				copy(r[1:], src)
			} else {
				subBytes(r[1:], src, row(y-1))
			}
		default:
			copy(r[1:], src)
		}
	}
	return st.raw
}

// subBytes sets dst[i] = a[i] − b[i] (mod 256), eight bytes a step: the
// low seven bits of each byte are subtracted with the top bit of a set,
// so no borrow crosses into the next byte, and the top bit is then put
// right (a classic SIMD-within-a-register subtraction).
func subBytes(dst, a, b []byte) {
	const hi = 0x8080808080808080
	n := len(a) &^ 7
	for i := 0; i < n; i += 8 {
		x, y := binary.LittleEndian.Uint64(a[i:]), binary.LittleEndian.Uint64(b[i:])
		binary.LittleEndian.PutUint64(dst[i:], ((x|hi)-(y&^hi))^((x^^y)&hi))
	}
	for i := n; i < len(a); i++ {
		dst[i] = a[i] - b[i]
	}
}

// inkRuns lists the stretches of truecolour scanlines (filter byte, then
// 4 bytes a pixel) for deflate.Encoder.ZlibRuns: literal bytes for the
// pixels whose bit is set in ink (wpr words a row), zero bytes for the
// filter bytes and the other pixels.
func inkRuns(runs []uint32, ink []uint64, wpr, w, h int) []uint32 {
	var lit, zero uint32 // the stretch being gathered: literals, then zeros
	for y := 0; y < h; y++ {
		zero++ // filter type 0
		row := ink[y*wpr : (y+1)*wpr]
		for x := 0; x < w; {
			wi, sh := x>>6, uint(x&63)
			m := row[wi] >> sh
			left := min(64-int(sh), w-x) // pixels of this word from x on
			if m == 0 {
				zero += uint32(4 * left)
				x += left
				continue
			}
			// Empty pixels, then inked ones.
			if e := bits.TrailingZeros64(m); e > 0 {
				zero += uint32(4 * e)
				x += e
				m >>= uint(e)
				left -= e
			}
			n := min(bits.TrailingZeros64(^m), left)
			if zero > 0 {
				runs = append(runs, lit, zero)
				lit, zero = 0, 0
			}
			lit += uint32(4 * n)
			x += n
		}
	}
	return append(runs, lit, zero)
}

func growWords(b []uint64, n int) []uint64 {
	if cap(b) < n {
		return make([]uint64, n)
	}
	b = b[:n]
	clear(b)
	return b
}

func grow(b []byte, n int) []byte {
	if cap(b) < n {
		return make([]byte, n)
	}
	return b[:n]
}

// palettize fills st.pal and st.ind and reports whether the image has at
// most 256 colours, counting transparent (0, 0, 0, 0) whether it appears
// or not.
func (st *encState) palettize(img *image.NRGBA, w, h int) bool {
	// Transparent is always index 0, as in a Tile.
	st.table.clear()
	st.table.index(0, 0)
	st.pal = append(st.pal[:0], 0)
	st.ind = grow(st.ind, w*h)
	last, lastIdx, have := uint32(0), uint8(0), true
	b := img.Bounds()
	for y := 0; y < h; y++ {
		src := img.Pix[(b.Min.Y-img.Rect.Min.Y+y)*img.Stride+(b.Min.X-img.Rect.Min.X)*4:][:4*w]
		dst := st.ind[y*w : (y+1)*w]
		for x := 0; x < len(dst); x++ {
			if have && last == 0 {
				// Skip transparent runs a word at a time: most of a dot
				// tile is empty.
				n := zeroPixels(src[4*x:])
				for i := x; i < x+n; i++ {
					dst[i] = lastIdx
				}
				x += n
				if x == len(dst) {
					break
				}
			}
			p := src[4*x : 4*x+4 : 4*x+4]
			c := uint32(p[0])<<24 | uint32(p[1])<<16 | uint32(p[2])<<8 | uint32(p[3])
			if have && c == last {
				dst[x] = lastIdx
				continue
			}
			idx, isNew := st.table.index(c, len(st.pal))
			if isNew {
				if len(st.pal) == 256 {
					return false
				}
				st.pal = append(st.pal, c)
			}
			last, lastIdx, have = c, idx, true
			dst[x] = lastIdx
		}
	}
	return true
}

// zeroPixels counts the leading all-zero 4-byte pixels of p.
func zeroPixels(p []byte) int {
	i := 0
	for ; i+8 <= len(p); i += 8 {
		if binary.LittleEndian.Uint64(p[i:]) != 0 {
			break
		}
	}
	for ; i+4 <= len(p); i += 4 {
		if binary.LittleEndian.Uint32(p[i:]) != 0 {
			break
		}
	}
	return i / 4
}

// packRows returns the palette indices as scanlines of the given bit depth,
// each led by filter type 0, most significant bits first (PNG spec §7.2).
// Row y of the indices is ind[y*stride+off:][:w].
func (st *encState) packRows(ind []byte, stride, off, w, h int, depth uint8) []byte {
	per := 8 / int(depth)
	rowLen := 1 + (w+per-1)/per
	st.raw = grow(st.raw, rowLen*h)
	for y := 0; y < h; y++ {
		r := st.raw[y*rowLen : (y+1)*rowLen]
		src := ind[y*stride+off:][:w]
		r[0] = 0
		if depth == 8 {
			copy(r[1:], src)
			continue
		}
		out := r[1:]
		clear(out)
		if st.inkBits != nil && w%8 == 0 {
			// A tile's ink bitmap (a bit for every pixel with a colour)
			// says which steps of eight pixels to pack: a sparse tile's
			// rows are not read at all where they have no ink.
			for wi, word := range st.inkBits[y*st.inkWords : (y+1)*st.inkWords] {
				for word != 0 {
					g := bits.TrailingZeros64(word) &^ 7
					word &^= 0xff << g
					x := wi<<6 + g
					packStep(out, src[x:x+8:x+8], x, depth)
				}
			}
			continue
		}
		// Eight pixels a step; a step of index 0 only (transparent, most
		// of a sparse tile) leaves out zero.
		n8 := len(src) &^ 7
		for x := 0; x < n8; x += 8 {
			s := src[x : x+8 : x+8]
			if binary.LittleEndian.Uint64(s) == 0 {
				continue
			}
			packStep(out, s, x, depth)
		}
		// The pixels after the last whole step, into partly filled bytes.
		d := uint(depth)
		for x := n8; x < len(src); x++ {
			out[x/per] |= src[x] << (8 - d*uint(x%per+1))
		}
	}
	return st.raw
}

// packStep packs the eight indices s of pixels x … x+7 (x a multiple of
// eight) into out, a scanline of depth 4, 2 or 1 bits a pixel.
func packStep(out, s []byte, x int, depth uint8) {
	switch depth {
	case 4:
		o := out[x>>1 : x>>1+4 : x>>1+4]
		o[0], o[1], o[2], o[3] = s[0]<<4|s[1], s[2]<<4|s[3], s[4]<<4|s[5], s[6]<<4|s[7]
	case 2:
		o := out[x>>2 : x>>2+2 : x>>2+2]
		o[0] = s[0]<<6 | s[1]<<4 | s[2]<<2 | s[3]
		o[1] = s[4]<<6 | s[5]<<4 | s[6]<<2 | s[7]
	case 1:
		out[x>>3] = s[0]<<7 | s[1]<<6 | s[2]<<5 | s[3]<<4 | s[4]<<3 | s[5]<<2 | s[6]<<1 | s[7]
	}
}

// chunk appends one PNG chunk: length, type, data, CRC-32 of type and data.
func (st *encState) chunk(typ string, data []byte) {
	var hdr [8]byte
	binary.BigEndian.PutUint32(hdr[:4], uint32(len(data)))
	copy(hdr[4:], typ)
	st.out.Write(hdr[:])
	st.out.Write(data)
	crc := crc32.Update(crc32.ChecksumIEEE(hdr[4:]), crc32.IEEETable, data)
	var c [4]byte
	binary.BigEndian.PutUint32(c[:], crc)
	st.out.Write(c[:])
}
