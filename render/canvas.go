package render

import (
	"encoding/binary"
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
	// cov holds one plane of W·H values per category: the coverage of
	// category k at pixel p is cov[k*plane+p]. A dot adds to one plane
	// only, and a row of a dot is a run of adjacent values.
	cov   []uint32
	plane int // W·H
	// cats[y*W+x] has bit k set when category k (k < 7) has coverage
	// on the pixel, and bit 7 when any category from 7 on has; a pixel is
	// single when cats is one bit below bit 7. Most pixels of a dot map
	// hold one category, and compositing reads one plane for them. cats
	// has 64 spare bytes at its end, so that any row can be read in
	// words of 8 or 64 pixels past its end.
	cats []uint8
	// rows[y] is set once coverage may have landed on row y: compositing
	// and clearing read the rows so marked only, and in them the pixels
	// whose cats are not zero.
	rows    []bool
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

// deposit adds w (not zero) to category cat of pixel q.
func (c *Canvas) deposit(q, cat int, w uint32) {
	c.cov[cat*c.plane+q] += w
	c.cats[q] |= catBit(cat)
}

// eachCat calls fn with every category whose bit is set in cb: those
// below 7 by their own bits, and all from 7 on when bit 7 is set.
func (c *Canvas) eachCat(cb uint8, fn func(k int)) {
	for m := cb & 0x7f; m != 0; m &= m - 1 {
		fn(bits.TrailingZeros8(m))
	}
	if cb&0x80 != 0 {
		for k := 7; k < c.NCat; k++ {
			fn(k)
		}
	}
}

// Coverage is the coverage (or count) of category cat at pixel (x, y).
func (c *Canvas) Coverage(x, y, cat int) uint32 {
	return c.cov[cat*c.plane+y*c.W+x]
}

// NewCanvas returns an empty w × h canvas for ncat categories.
func NewCanvas(w, h, ncat int) *Canvas {
	return &Canvas{W: w, H: h, NCat: ncat, cov: make([]uint32, w*h*ncat), plane: w * h,
		rows: make([]bool, h), cats: make([]uint8, w*h+64)}
}

// inked returns a bit for each of the 64 pixels from (x, y) on (x a
// multiple of 64), set when the pixel holds coverage; bits beyond the
// row's end are zero. It reads cats eight pixels at a time.
func (c *Canvas) inked(y, x int) uint64 {
	b := c.cats[y*c.W+x:][:64]
	// No branch per word: on a dot tile, words with and without ink
	// alternate.
	m := nonZeroBytes(binary.LittleEndian.Uint64(b[0:])) |
		nonZeroBytes(binary.LittleEndian.Uint64(b[8:]))<<8 |
		nonZeroBytes(binary.LittleEndian.Uint64(b[16:]))<<16 |
		nonZeroBytes(binary.LittleEndian.Uint64(b[24:]))<<24 |
		nonZeroBytes(binary.LittleEndian.Uint64(b[32:]))<<32 |
		nonZeroBytes(binary.LittleEndian.Uint64(b[40:]))<<40 |
		nonZeroBytes(binary.LittleEndian.Uint64(b[48:]))<<48 |
		nonZeroBytes(binary.LittleEndian.Uint64(b[56:]))<<56
	if n := c.W - x; n < 64 {
		m &= 1<<n - 1
	}
	return m
}

// nonZeroBytes has bit k set when byte k of w (little-endian) is not zero.
func nonZeroBytes(w uint64) uint64 {
	const lo7, hi1 = 0x7f7f7f7f7f7f7f7f, 0x8080808080808080
	// The top bit of every non-zero byte, then those eight bits gathered
	// into the top byte, byte k's as bit k (the products land on distinct
	// bits, so nothing carries).
	t := ((w&lo7 + lo7) | w) & hi1
	return t >> 7 * 0x0102040810204080 >> 56
}

// Reset clears the canvas for reuse.
func (c *Canvas) Reset() {
	if !c.touched {
		return
	}
	for y, used := range c.rows {
		if !used {
			continue
		}
		for x := 0; x < c.W; x += 64 {
			for left := c.inked(y, x); left != 0; left &= left - 1 {
				c.clearPixel(y*c.W + x + bits.TrailingZeros64(left))
			}
		}
		c.rows[y] = false
	}
	c.touched = false
}

// clearPixel empties pixel p.
func (c *Canvas) clearPixel(p int) {
	c.eachCat(c.cats[p], func(k int) { c.cov[k*c.plane+p] = 0 })
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
			c.rows[py] = true
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
		c.rows[py] = true
		c.touched = true
	}
}

// Count adds one dot of category cat to pixel (px, py) of a count canvas,
// saturating at the largest uint32.
func (c *Canvas) Count(cat, px, py int) {
	p := py*c.W + px
	if v := &c.cov[cat*c.plane+p]; *v != math.MaxUint32 {
		*v++
	}
	c.cats[p] |= catBit(cat)
	c.rows[py] = true
	c.touched = true
}

// CountN adds n dots of category cat to pixel (px, py) of a count canvas,
// saturating at the largest uint32: the same as n calls of Count.
func (c *Canvas) CountN(cat, px, py int, n uint32) {
	if n == 0 {
		return
	}
	p := py*c.W + px
	v := &c.cov[cat*c.plane+p]
	if s := *v + n; s >= *v {
		*v = s
	} else {
		*v = math.MaxUint32
	}
	c.cats[p] |= catBit(cat)
	c.rows[py] = true
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
	for y, used := range src.rows {
		if !used {
			continue
		}
		py := oy + y>>1
		for x0 := 0; x0 < src.W; x0 += 64 {
			for left := src.inked(y, x0); left != 0; left &= left - 1 {
				x := x0 + bits.TrailingZeros64(left)
				p := y*src.W + x
				px := ox + x>>1
				src.eachCat(src.cats[p], func(k int) { c.CountN(k, px, py, src.cov[k*src.plane+p]) })
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
		for x0 := 0; x0 < c.W; x0 += 64 {
			left := c.inked(py, x0)
			if left == 0 {
				continue
			}
			var inked uint64 // the pixels of these 64 given ink
			for left != 0 {
				i := bits.TrailingZeros64(left)
				left &= left - 1
				px := x0 + i
				p := py*c.W + px
				var sum uint64
				var rgb uint32 // packed colour, alpha byte zero
				if pc := c.cats[p]; single(pc) {
					// One category (the common case): its own colour.
					k := bits.TrailingZeros8(pc)
					v := &c.cov[k*c.plane+p]
					sum = uint64(*v)
					rgb = solid[k]
					if drain {
						*v = 0
						c.cats[p] = 0
					}
				} else {
					// The categories whose bits are set: below 7 each
					// has coverage (no bit is set without; were one,
					// the weighted mean below would give the same
					// colour), from 7 on each may.
					var r, g, b uint64
					has := uint64(pc & 0x7f) // bit k: category k has coverage
					add := func(k int) uint64 {
						i := k*c.plane + p
						w := uint64(c.cov[i])
						sum += w
						r += w * cr[k]
						g += w * cg[k]
						b += w * cb[k]
						if drain {
							c.cov[i] = 0
						}
						return w
					}
					for m := pc & 0x7f; m != 0; m &= m - 1 {
						add(bits.TrailingZeros8(m))
					}
					if pc&0x80 != 0 {
						for k := 7; k < n; k++ {
							w := add(k)
							has |= (w | -w) >> 63 << k
						}
					}
					if drain {
						c.cats[p] = 0
					}
					if sum == 0 {
						continue
					}
					rgb = solid[bits.TrailingZeros64(has)]
					if has&(has-1) != 0 {
						rgb = uint32((r+sum/2)/sum)<<24 | uint32((g+sum/2)/sum)<<16 | uint32((b+sum/2)/sum)<<8
					}
				}
				// From sat on the pixel is opaque; min, not a branch,
				// as edges and centres of dots alternate.
				a := min((min(sum, sat)*gain*255+full/2)/full, 255)
				if a == 0 {
					continue
				}
				col := rgb | uint32(a)
				binary.BigEndian.PutUint32(row[4*px:], col)
				inked |= 1 << i
				if t != nil && t.paletted {
					t.index(py, px, col)
				}
			}
			if t != nil && inked != 0 {
				t.inkWord(py, x0, inked)
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
