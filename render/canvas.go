package render

import (
	"image"
	"image/color"
	"math"
	"math/bits"
)

// One is the fixed-point weight of a pixel fully covered by one opaque dot.
// Coverage is summed in integers so that addition order cannot change a
// pixel: the same dots give the same bytes in any order.
const One = 1 << 12

// Canvas accumulates per-category coverage for one image. A canvas holds
// either coverage in units of One (Add, AddStamp; composite with Composite)
// or dot counts (Count; composite with CompositeCounts).
type Canvas struct {
	W, H int
	// NCat is the number of categories.
	NCat int
	// A pixel covered by one category only (below 7) keeps its coverage
	// in tot[y*W+x]; a pixel covered by several keeps it per category in
	// cov[(y*W+x)*NCat+cat], which is zero elsewhere. Most pixels of a dot
	// map hold one category, and tot is a fifth the size of cov.
	tot []uint32
	cov []uint32
	// rows[y] is set once coverage lands on row y; bit x%64 of
	// mask[y*wpr+x/64] once it lands on pixel (x, y). Compositing and
	// clearing visit the marked pixels only.
	rows []bool
	mask []uint64
	wpr  int // mask words per row
	// cats[y*W+x] has bit k set when category k (k < 7) has coverage
	// on the pixel, and bit 7 when any category from 7 on has; a pixel is
	// single when cats is one bit below bit 7.
	cats    []uint8
	touched bool
	// stampCells are the cells of stamp as offsets into this canvas
	// (bindStamp).
	stamp      *Stamp
	stampCells [Sub * Sub][]boundCell
}

// catBit is the bit of category k in Canvas.cats.
func catBit(k int) uint8 { return 1 << min(k, 7) }

// single reports whether a pixel with category bits cb holds exactly one
// category, known by its bit.
func single(cb uint8) bool { return cb != 0 && cb&(cb-1) == 0 && cb < 1<<7 }

// deposit adds w to category cat of pixel q.
func (c *Canvas) deposit(q, cat int, w uint32) {
	cb := c.cats[q]
	if bit := catBit(cat); cat < 7 && (cb == 0 || cb == bit) {
		c.tot[q] += w
		c.cats[q] = bit
		return
	}
	c.mixed(q, cat, cb)[cat] += w
}

// mixed marks pixel q (category bits cb) as holding category cat besides
// what it holds, moving a single category's coverage from tot into its
// cell, and returns the pixel's cells.
func (c *Canvas) mixed(q, cat int, cb uint8) []uint32 {
	n := c.NCat
	cell := c.cov[q*n : q*n+n : q*n+n]
	if single(cb) {
		cell[bits.TrailingZeros8(cb)] = c.tot[q]
		c.tot[q] = 0
	}
	c.cats[q] = cb | catBit(cat)
	return cell
}

// Coverage is the coverage (or count) of category cat at pixel (x, y).
func (c *Canvas) Coverage(x, y, cat int) uint32 {
	q := y*c.W + x
	if cb := c.cats[q]; single(cb) {
		if bits.TrailingZeros8(cb) == cat {
			return c.tot[q]
		}
		return 0
	}
	return c.cov[q*c.NCat+cat]
}

// NewCanvas returns an empty w × h canvas for ncat categories.
func NewCanvas(w, h, ncat int) *Canvas {
	wpr := (w + 63) / 64
	return &Canvas{W: w, H: h, NCat: ncat, tot: make([]uint32, w*h), cov: make([]uint32, w*h*ncat),
		rows: make([]bool, h), mask: make([]uint64, wpr*h), wpr: wpr, cats: make([]uint8, w*h)}
}

// mark records that pixels x0 ≤ x < x1 (x0 < x1) of row y received
// coverage.
func (c *Canvas) mark(y, x0, x1 int) {
	c.rows[y] = true
	m := c.mask[y*c.wpr : (y+1)*c.wpr]
	w0, w1 := x0>>6, (x1-1)>>6
	lo := ^uint64(0) << (x0 & 63)
	hi := ^uint64(0) >> (63 - (x1-1)&63)
	if w0 == w1 {
		m[w0] |= lo & hi
		return
	}
	m[w0] |= lo
	for w := w0 + 1; w < w1; w++ {
		m[w] = ^uint64(0)
	}
	m[w1] |= hi
}

// mark1 records that pixel (x, y) received coverage.
func (c *Canvas) mark1(x, y int) {
	c.rows[y] = true
	c.mask[y*c.wpr+x>>6] |= 1 << (x & 63)
}

// Reset clears the canvas for reuse.
func (c *Canvas) Reset() {
	if !c.touched {
		return
	}
	n := c.NCat
	for y, used := range c.rows {
		if !used {
			continue
		}
		m := c.mask[y*c.wpr : (y+1)*c.wpr]
		for wi, bitsLeft := range m {
			for bitsLeft != 0 {
				p := y*c.W + wi<<6 + bits.TrailingZeros64(bitsLeft)
				bitsLeft &= bitsLeft - 1
				c.clearPixel(p, n)
			}
			m[wi] = 0
		}
		c.rows[y] = false
	}
	c.touched = false
}

// clearPixel empties pixel p.
func (c *Canvas) clearPixel(p, n int) {
	if !single(c.cats[p]) {
		clear(c.cov[p*n : p*n+n])
	}
	c.tot[p] = 0
	c.cats[p] = 0
}

// Empty reports whether no dot has touched the canvas.
func (c *Canvas) Empty() bool { return !c.touched }

// Dot is the look of a dot at one zoom.
type Dot struct {
	// Diameter in pixels.
	Diameter float64
	// Opacity from 0 to 1: the share of a pixel's ink one dot gives.
	Opacity float64
}

// Mass is the ink of one dot in pixels of full cover: its area times its
// opacity.
func (d Dot) Mass() float64 { r := d.Diameter / 2; return math.Pi * r * r * d.Opacity }

// Add deposits one dot of category cat centred at (x, y).
//
// A dot at least a pixel wide is an anti-aliased disc: each pixel gets the
// share of it the disc covers, estimated from the distance of the pixel
// centre to the disc's edge (clamp(r + 0.5 − d, 0, 1)). A smaller dot puts
// its area's worth of ink on the four nearest pixels, split bilinearly, so
// that low zooms keep the total ink of every dot and read as density.
func (c *Canvas) Add(cat int, x, y float64, d Dot) {
	r := d.Diameter / 2
	if d.Diameter < 1 {
		c.splat(cat, x-0.5, y-0.5, math.Pi*r*r*d.Opacity)
		return
	}
	ink := d.Opacity * One
	x0 := int(math.Floor(x - r - 0.5))
	x1 := int(math.Ceil(x + r + 0.5))
	y0 := int(math.Floor(y - r - 0.5))
	y1 := int(math.Ceil(y + r + 0.5))
	x0, y0 = max(x0, 0), max(y0, 0)
	x1, y1 = min(x1, c.W), min(y1, c.H)
	for py := y0; py < y1; py++ {
		dy := float64(py) + 0.5 - y
		row := py * c.W
		for px := x0; px < x1; px++ {
			dx := float64(px) + 0.5 - x
			cov := r + 0.5 - math.Sqrt(dx*dx+dy*dy)
			if cov <= 0 {
				continue
			}
			if cov > 1 {
				cov = 1
			}
			w := uint32(cov*ink + 0.5)
			if w == 0 {
				continue
			}
			c.deposit(row+px, cat, w)
			c.mark1(px, py)
			c.touched = true
		}
	}
}

// splat spreads mass (in pixels of full ink) bilinearly over the four pixels
// whose centres surround (x+0.5, y+0.5).
func (c *Canvas) splat(cat int, x, y, mass float64) {
	fx, fy := math.Floor(x), math.Floor(y)
	ix, iy := int(fx), int(fy)
	ax, ay := x-fx, y-fy
	m := mass * One
	w := [4]float64{(1 - ax) * (1 - ay), ax * (1 - ay), (1 - ax) * ay, ax * ay}
	for i, wi := range w {
		px, py := ix+i&1, iy+i>>1
		if px < 0 || py < 0 || px >= c.W || py >= c.H {
			continue
		}
		v := uint32(wi*m + 0.5)
		if v == 0 {
			continue
		}
		c.deposit(py*c.W+px, cat, v)
		c.mark1(px, py)
		c.touched = true
	}
}

// Count adds one dot of category cat to pixel (px, py) of a count canvas,
// saturating at the largest uint32.
func (c *Canvas) Count(cat, px, py int) {
	p := py*c.W + px
	cb := c.cats[p]
	if bit := catBit(cat); cat < 7 && (cb == 0 || cb == bit) {
		if c.tot[p] != math.MaxUint32 {
			c.tot[p]++
		}
		c.cats[p] = bit
	} else if cell := c.mixed(p, cat, cb); cell[cat] != math.MaxUint32 {
		cell[cat]++
	}
	c.mark1(px, py)
	c.touched = true
}

// CountN adds n dots of category cat to pixel (px, py) of a count canvas,
// saturating at the largest uint32: the same as n calls of Count.
func (c *Canvas) CountN(cat, px, py int, n uint32) {
	if n == 0 {
		return
	}
	sat := func(v uint32) uint32 {
		if s := v + n; s >= v {
			return s
		}
		return math.MaxUint32
	}
	p := py*c.W + px
	cb := c.cats[p]
	if bit := catBit(cat); cat < 7 && (cb == 0 || cb == bit) {
		c.tot[p] = sat(c.tot[p])
		c.cats[p] = bit
	} else {
		cell := c.mixed(p, cat, cb)
		cell[cat] = sat(cell[cat])
	}
	c.mark1(px, py)
	c.touched = true
}

// AddHalf adds count canvas src, shrunk to half its width and height, into
// quadrant (qx, qy) (each 0 or 1) of count canvas c of the same size and
// categories: src's pixel (x, y) adds its counts to c's pixel
// (qx·W/2 + x/2, qy·H/2 + y/2). The four tiles of zoom z+1 under a tile of
// zoom z, added this way, give the counts of the zoom-z tile exactly, for a
// count pixel is a power-of-two block of world cells; sums saturate like
// Count, so the result does not depend on the order either.
func (c *Canvas) AddHalf(src *Canvas, qx, qy int) {
	ox, oy := qx*c.W/2, qy*c.H/2
	n := src.NCat
	for y, used := range src.rows {
		if !used {
			continue
		}
		py := oy + y>>1
		m := src.mask[y*src.wpr : (y+1)*src.wpr]
		for wi, left := range m {
			for left != 0 {
				x := wi<<6 + bits.TrailingZeros64(left)
				left &= left - 1
				p := y*src.W + x
				px := ox + x>>1
				if cb := src.cats[p]; single(cb) {
					c.CountN(bits.TrailingZeros8(cb), px, py, src.tot[p])
					continue
				}
				for k, v := range src.cov[p*n : p*n+n] {
					c.CountN(k, px, py, v)
				}
			}
		}
	}
}

// Composite writes the canvas into dst (same size): a pixel's colour is the
// coverage-weighted mean of its categories' colours, and its alpha is the
// total coverage, clipped at fully opaque. colors has one entry per category.
func (c *Canvas) Composite(colors []color.NRGBA, dst *image.NRGBA) {
	c.composite(colors, 1<<gainBits, dst)
}

// CompositeCounts composites a count canvas: every dot gives mass pixels of
// full ink (Dot.Mass), so a pixel's alpha is its dot count times mass,
// clipped at fully opaque, and its colour the count-weighted mean. Counts
// are summed in integers, so this too is independent of order.
func (c *Canvas) CompositeCounts(colors []color.NRGBA, mass float64, dst *image.NRGBA) {
	c.composite(colors, countGain(mass), dst)
}

// CompositeTile composites like Composite into t and leaves the canvas
// empty: it clears each pixel as it reads it, which costs less than Reset.
func (c *Canvas) CompositeTile(colors []color.NRGBA, t *Tile) {
	t.start()
	c.compositeInto(colors, 1<<gainBits, t.Image.Pix, t.Image.Stride, t, true)
}

// CompositeCountsTile composites like CompositeCounts into t and leaves the
// canvas empty.
func (c *Canvas) CompositeCountsTile(colors []color.NRGBA, mass float64, t *Tile) {
	t.start()
	c.compositeInto(colors, countGain(mass), t.Image.Pix, t.Image.Stride, t, true)
}

// CompositeCountsKeep composites like CompositeCountsTile but leaves the
// canvas as it was, for a count canvas that is still to be added into
// another (AddHalf).
func (c *Canvas) CompositeCountsKeep(colors []color.NRGBA, mass float64, t *Tile) {
	t.start()
	c.compositeInto(colors, countGain(mass), t.Image.Pix, t.Image.Stride, t, false)
}

// countGain is the fixed-point gain that turns a dot count into coverage
// for dots of the given mass.
func countGain(mass float64) uint64 {
	g := math.Round(mass * One * (1 << gainBits))
	if g < 1 {
		g = 1
	}
	if g > 1<<40 {
		g = 1 << 40
	}
	return uint64(g)
}

// gainBits is the fixed-point precision of the coverage gain.
const gainBits = 16

func (c *Canvas) composite(colors []color.NRGBA, gain uint64, dst *image.NRGBA) {
	c.compositeInto(colors, gain, dst.Pix, dst.Stride, nil, false)
}

// compositeInto writes the canvas's pixels as NRGBA rows of stride bytes
// into pix and, when t is not nil, their palette indices into t. With
// drain, it clears every pixel it reads, leaving the canvas empty.
func (c *Canvas) compositeInto(colors []color.NRGBA, gain uint64, pix []uint8, stride int, t *Tile, drain bool) {
	n := c.NCat
	const full = One << gainBits
	// A sum at or above sat is fully opaque whatever the gain.
	sat := (uint64(full) + gain - 1) / gain
	var cr, cg, cb [64]uint64
	var solid [64]uint32 // each category's colour at full alpha, packed
	for k := 0; k < n && k < len(colors); k++ {
		cr[k], cg[k], cb[k] = uint64(colors[k].R), uint64(colors[k].G), uint64(colors[k].B)
		solid[k] = uint32(colors[k].R)<<24 | uint32(colors[k].G)<<16 | uint32(colors[k].B)<<8
	}
	for py := 0; py < c.H; py++ {
		row := pix[py*stride : py*stride+4*c.W]
		switch {
		case t == nil:
			clear(row)
		case t.dirty[py]:
			// A tile's rows are cleared only where its last image had
			// ink.
			clear(row)
			t.clearRow(py)
			t.dirty[py] = false
		}
		if !c.rows[py] {
			continue
		}
		if t != nil {
			t.dirty[py] = true
		}
		m := c.mask[py*c.wpr : (py+1)*c.wpr]
		for wi, left := range m {
			if drain {
				m[wi] = 0
			}
			for left != 0 {
				px := wi<<6 + bits.TrailingZeros64(left)
				left &= left - 1
				p := py*c.W + px
				var sum uint64
				var rgb uint32 // packed colour, alpha byte zero
				if pc := c.cats[p]; single(pc) {
					// One category (the common case): its own colour.
					sum = uint64(c.tot[p])
					rgb = solid[bits.TrailingZeros8(pc)]
					if drain {
						c.tot[p] = 0
						c.cats[p] = 0
					}
				} else {
					if pc == 0 {
						continue
					}
					cell := c.cov[p*n : p*n+n : p*n+n]
					var inked uint64 // bit k: category k has coverage here
					for k, w := range cell {
						sum += uint64(w)
						inked |= uint64((w|-w)>>31) << k
					}
					if inked == 0 {
						continue
					}
					rgb = solid[bits.TrailingZeros64(inked)]
					if inked&(inked-1) != 0 {
						var r, g, b uint64
						for k, w := range cell {
							ww := uint64(w)
							r += ww * cr[k]
							g += ww * cg[k]
							b += ww * cb[k]
						}
						rgb = uint32((r+sum/2)/sum)<<24 | uint32((g+sum/2)/sum)<<16 | uint32((b+sum/2)/sum)<<8
					}
					if drain {
						clear(cell)
						c.cats[p] = 0
					}
				}
				var a uint64 = 255
				if sum < sat {
					a = (sum*gain*255 + full/2) / full
				}
				if a == 0 {
					continue
				}
				col := rgb | uint32(a)
				o := row[4*px : 4*px+4 : 4*px+4]
				o[0], o[1], o[2], o[3] = uint8(col>>24), uint8(col>>16), uint8(col>>8), uint8(col)
				if t != nil {
					t.add(py, px, col)
				}
			}
		}
		if drain {
			c.rows[py] = false
		}
	}
	if drain {
		c.touched = false
	}
}
