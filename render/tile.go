package render

import (
	"image"
	"image/color"
	"math/bits"
)

// Tile is a composited image laid out for the PNG encoder: its NRGBA rows
// are already PNG scanlines (each led by a filter-type byte), and while it
// has at most 256 colours it also holds them as palette indices, gathered as
// the pixels are composited. Fill it with Canvas.CompositeTile or
// CompositeCountsTile and write it with Encoder.EncodeTile.
type Tile struct {
	// Image is the composited picture. Its rows lie 4·W+1 bytes apart.
	Image *image.NRGBA
	w, h  int
	rgba  []byte // rows of 1 + 4·W bytes: filter type 0, then pixels
	ind   []byte // rows of 1 + W bytes: filter type 0, then indices
	// pal holds the colours in order of first appearance, packed
	// 0xRRGGBBAA; pal[0] is transparent.
	pal   []uint32
	inked int // pixels with ink
	// ink has bit x%64 of word y*wpr+x/64 set for every pixel with ink.
	ink      []uint64
	wpr      int
	dirty    []bool // rows that may hold ink
	paletted bool
	table    colorTable
	last     uint32
	lastIdx  uint8
}

// NewTile returns a transparent w × h tile.
func NewTile(w, h int) *Tile {
	wpr := (w + 63) / 64
	t := &Tile{w: w, h: h, rgba: make([]byte, h*(1+4*w)), ind: make([]byte, h*(1+w)), ink: make([]uint64, h*wpr), wpr: wpr, dirty: make([]bool, h)}
	t.Image = &image.NRGBA{Pix: t.rgba[1:], Stride: 1 + 4*w, Rect: image.Rect(0, 0, w, h)}
	t.start()
	return t
}

// Colors reports the tile's distinct colours, transparent first, when it
// has at most 256 of them; ok is false when it has more.
func (t *Tile) Colors() (pal []color.NRGBA, ok bool) {
	if !t.paletted {
		return nil, false
	}
	for _, c := range t.pal {
		pal = append(pal, color.NRGBA{uint8(c >> 24), uint8(c >> 16), uint8(c >> 8), uint8(c)})
	}
	return pal, true
}

// start forgets the palette before the tile is composited again.
func (t *Tile) start() {
	t.table.clear()
	t.pal = append(t.pal[:0], 0)
	t.table.index(0, 0)
	t.paletted = true
	t.last, t.lastIdx = 0, 0
	t.inked = 0
}

// clearRow forgets the indices and ink of row y.
func (t *Tile) clearRow(y int) {
	clear(t.ind[y*(1+t.w)+1 : (y+1)*(1+t.w)])
	clear(t.ink[y*t.wpr : (y+1)*t.wpr])
}

// inkWord records the pixels of row y from x0 (a multiple of 64) on whose
// bits are set in m (bit i: pixel x0+i) as inked.
func (t *Tile) inkWord(y, x0 int, m uint64) {
	t.inked += bits.OnesCount64(m)
	t.ink[y*t.wpr+x0>>6] |= m
}

// index records the palette index of pixel (x, y), of colour col (not
// transparent), while the tile is paletted.
func (t *Tile) index(y, x int, col uint32) {
	i := y*(1+t.w) + 1 + x
	if col == t.last {
		t.ind[i] = t.lastIdx
		return
	}
	idx, isNew := t.table.index(col, len(t.pal))
	if isNew {
		if len(t.pal) == 256 {
			t.paletted = false
			return
		}
		t.pal = append(t.pal, col)
	}
	t.last, t.lastIdx = col, idx
	t.ind[i] = idx
}

// colorTable maps packed colours to palette indices: open addressing, and a
// generation count so that clearing it costs nothing.
type colorTable struct {
	keys [paletteSlots]uint32
	idx  [paletteSlots]uint8
	gen  [paletteSlots]uint32
	cur  uint32
}

const paletteSlots = 1024 // 4 × 256: short probe chains

// clear forgets every colour.
func (t *colorTable) clear() {
	t.cur++
	if t.cur == 0 { // wrapped: forget every slot
		t.gen = [paletteSlots]uint32{}
		t.cur = 1
	}
}

// index returns c's index. A colour not yet in the table is added with
// index next unless next is 256 (the table is then full); isNew reports
// either case.
func (t *colorTable) index(c uint32, next int) (idx uint8, isNew bool) {
	slot := (c * 0x9E3779B1) >> 22
	for t.gen[slot] == t.cur && t.keys[slot] != c {
		slot = (slot + 1) & (paletteSlots - 1)
	}
	if t.gen[slot] == t.cur {
		return t.idx[slot], false
	}
	if next < 256 {
		t.gen[slot], t.keys[slot], t.idx[slot] = t.cur, c, uint8(next)
	}
	return uint8(next), true
}
