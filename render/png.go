package render

import (
	"bytes"
	"encoding/binary"
	"hash/crc32"
	"image"
	"io"
	"sync"

	"github.com/klauspost/compress/zlib"
)

// Encoder writes tiles as PNG (ISO/IEC 15948, "PNG Specification, Second
// Edition"): indexed colour when the image has at most 256 distinct colours
// (lossless then; bit depth 1, 2, 4 or 8 by palette size, with a tRNS chunk
// for the palette's alpha), truecolour with alpha otherwise. Rows are stored
// with filter type 0 (None) and compressed with klauspost/compress's zlib at
// its fastest level: on dot tiles, mostly empty or flat runs, the per-row
// filter choice of image/png costs most of its time and saves little (see
// BenchmarkEncode); dense truecolour tiles use the Up filter (see
// FilterAuto). The output depends on the pixels alone. An Encoder is
// safe for concurrent use.
type Encoder struct {
	// Level is the zlib level; 0 means zlib.BestSpeed.
	Level int
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
	// FilterAuto uses Up and Huffman-only compression on tiles that are
	// mostly inked, None and the Level on the rest: on a dense tile, Up
	// turns flat areas into zeros and Huffman coding alone then beats LZ77
	// in speed and size; on a sparse one, None with LZ77 is smaller
	// (BenchmarkEncode).
	FilterAuto RowFilter = iota
	FilterNone
	FilterSub
	FilterUp
)

type encState struct {
	// An open-addressing colour table; slot i is in use when gen[i] == cur.
	keys   [paletteSlots]uint32
	idx    [paletteSlots]uint8
	gen    [paletteSlots]uint32
	cur    uint32
	pal    []uint32 // RGBA, big-endian packed, in order of first appearance
	ind    []uint8  // palette index of every pixel
	raw    []byte   // filtered scanlines
	z      bytes.Buffer
	zw     *zlib.Writer
	huff   *zlib.Writer // Huffman-only, for dense truecolour tiles
	out    bytes.Buffer
	filter RowFilter
}

const paletteSlots = 1024 // 4 × 256: short probe chains

var pngSignature = []byte{0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n'}

// Encode writes img to w.
func (e *Encoder) Encode(w io.Writer, img *image.NRGBA) error {
	st, _ := e.pool.Get().(*encState)
	if st == nil {
		st = &encState{}
		lvl := e.Level
		if lvl == 0 {
			lvl = zlib.BestSpeed
		}
		zw, err := zlib.NewWriterLevel(&st.z, lvl)
		if err != nil {
			return err
		}
		st.zw = zw
		st.filter = e.Filter
	}
	defer e.pool.Put(st)
	data, err := st.encode(img)
	if err != nil {
		return err
	}
	_, err = w.Write(data)
	return err
}

func (st *encState) encode(img *image.NRGBA) ([]byte, error) {
	b := img.Bounds()
	w, h := b.Dx(), b.Dy()
	st.out.Reset()
	st.out.Write(pngSignature)
	paletted := st.palettize(img, w, h)
	var depth uint8 = 8
	colorType := uint8(6) // truecolour with alpha
	if paletted {
		colorType = 3
		switch n := len(st.pal); {
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
	if paletted {
		plte := make([]byte, 0, 3*len(st.pal))
		trns := make([]byte, 0, len(st.pal))
		lastAlpha := 0
		for i, c := range st.pal {
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
		st.packRows(w, h, depth)
	}
	zw := st.zw
	if !paletted && st.rgbaRows(img, w, h) {
		// A dense tile after the Up filter is mostly small differences
		// with few long repeats: Huffman coding alone is faster than LZ77
		// there and no larger (BenchmarkEncode, dots=20000).
		if st.huff == nil {
			hw, err := zlib.NewWriterLevel(&st.z, zlib.HuffmanOnly)
			if err != nil {
				return nil, err
			}
			st.huff = hw
		}
		zw = st.huff
	}
	st.z.Reset()
	zw.Reset(&st.z)
	if _, err := zw.Write(st.raw); err != nil {
		return nil, err
	}
	if err := zw.Close(); err != nil {
		return nil, err
	}
	st.chunk("IDAT", st.z.Bytes())
	st.chunk("IEND", nil)
	return st.out.Bytes(), nil
}

// rgbaRows fills st.raw with truecolour scanlines of the chosen filter and
// reports whether FilterAuto found the tile dense.
func (st *encState) rgbaRows(img *image.NRGBA, w, h int) (dense bool) {
	b := img.Bounds()
	rowLen := 1 + 4*w
	st.raw = grow(st.raw, rowLen*h)
	row := func(y int) []byte {
		return img.Pix[(b.Min.Y-img.Rect.Min.Y+y)*img.Stride+(b.Min.X-img.Rect.Min.X)*4:][:4*w]
	}
	f := st.filter
	if f == FilterAuto {
		// Inked share from every 8th row's alpha.
		inked, seen := 0, 0
		for y := 0; y < h; y += 8 {
			src := row(y)
			for i := 3; i < len(src); i += 4 {
				if src[i] != 0 {
					inked++
				}
			}
			seen += w
		}
		f = FilterNone
		if 2*inked > seen {
			f, dense = FilterUp, true
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
				up := row(y - 1)
				for i := range src {
					r[1+i] = src[i] - up[i]
				}
			}
		default:
			copy(r[1:], src)
		}
	}
	return dense
}

func grow(b []byte, n int) []byte {
	if cap(b) < n {
		return make([]byte, n)
	}
	return b[:n]
}

// palettize fills st.pal and st.ind and reports whether the image has at
// most 256 colours.
func (st *encState) palettize(img *image.NRGBA, w, h int) bool {
	st.cur++
	if st.cur == 0 { // wrapped: forget every slot
		st.gen = [paletteSlots]uint32{}
		st.cur = 1
	}
	st.pal = st.pal[:0]
	if cap(st.ind) < w*h {
		st.ind = make([]uint8, w*h)
	}
	st.ind = st.ind[:w*h]
	last, lastIdx, have := uint32(0), uint8(0), false
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
			slot := (c * 0x9E3779B1) >> 22
			for st.gen[slot] == st.cur && st.keys[slot] != c {
				slot = (slot + 1) & (paletteSlots - 1)
			}
			if st.gen[slot] != st.cur {
				if len(st.pal) == 256 {
					return false
				}
				st.gen[slot], st.keys[slot], st.idx[slot] = st.cur, c, uint8(len(st.pal))
				st.pal = append(st.pal, c)
			}
			last, lastIdx, have = c, st.idx[slot], true
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

// packRows writes the palette indices as scanlines of the given bit depth,
// each led by filter type 0, most significant bits first (PNG spec §7.2).
func (st *encState) packRows(w, h int, depth uint8) {
	per := 8 / int(depth)
	rowLen := 1 + (w+per-1)/per
	st.raw = grow(st.raw, rowLen*h)
	for y := 0; y < h; y++ {
		r := st.raw[y*rowLen : (y+1)*rowLen]
		src := st.ind[y*w : (y+1)*w]
		r[0] = 0
		if depth == 8 {
			copy(r[1:], src)
			continue
		}
		out := r[1:]
		clear(out)
		switch depth {
		case 4:
			for x := 0; x+1 < len(src); x += 2 {
				out[x>>1] = src[x]<<4 | src[x+1]
			}
		case 2:
			for x := 0; x+3 < len(src); x += 4 {
				out[x>>2] = src[x]<<6 | src[x+1]<<4 | src[x+2]<<2 | src[x+3]
			}
		case 1:
			for x := 0; x+7 < len(src); x += 8 {
				s := src[x : x+8 : x+8]
				out[x>>3] = s[0]<<7 | s[1]<<6 | s[2]<<5 | s[3]<<4 | s[4]<<3 | s[5]<<2 | s[6]<<1 | s[7]
			}
		}
		// The last, partly filled byte.
		d := uint(depth)
		for x := len(src) / per * per; x < len(src); x++ {
			out[x/per] |= src[x] << (8 - d*uint(x%per+1))
		}
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
