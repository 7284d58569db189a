package render

import (
	"image"
	"image/color"
	"math"
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
	// Cov holds coverage as Cov[(y*W+x)*NCat+cat].
	Cov []uint32
	// tot[y*W+x] is the pixel's coverage summed over categories
	// (saturating), so compositing skips empty pixels with one load.
	tot []uint32
	// rows[y] is set once coverage lands on row y, and x0[y] ≤ x < x1[y]
	// bounds the pixels it touched there.
	rows    []bool
	x0, x1  []int32
	touched bool
}

// NewCanvas returns an empty w × h canvas for ncat categories.
func NewCanvas(w, h, ncat int) *Canvas {
	c := &Canvas{W: w, H: h, NCat: ncat, Cov: make([]uint32, w*h*ncat), tot: make([]uint32, w*h), rows: make([]bool, h), x0: make([]int32, h), x1: make([]int32, h)}
	for y := range c.x0 {
		c.x0[y] = int32(w)
	}
	return c
}

// mark records that pixels x0 ≤ x < x1 of row y received coverage.
func (c *Canvas) mark(y, x0, x1 int) {
	c.rows[y] = true
	if int32(x0) < c.x0[y] {
		c.x0[y] = int32(x0)
	}
	if int32(x1) > c.x1[y] {
		c.x1[y] = int32(x1)
	}
}

// Reset clears the canvas for reuse.
func (c *Canvas) Reset() {
	if !c.touched {
		return
	}
	n := c.W * c.NCat
	for y, used := range c.rows {
		if used {
			clear(c.Cov[y*n+int(c.x0[y])*c.NCat : y*n+int(c.x1[y])*c.NCat])
			clear(c.tot[y*c.W+int(c.x0[y]) : y*c.W+int(c.x1[y])])
			c.rows[y] = false
			c.x0[y], c.x1[y] = int32(c.W), 0
		}
	}
	c.touched = false
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
	n := c.NCat
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
			c.Cov[(row+px)*n+cat] += w
			c.addTot(row+px, w)
			c.mark(py, px, px+1)
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
		c.Cov[(py*c.W+px)*c.NCat+cat] += v
		c.addTot(py*c.W+px, v)
		c.mark(py, px, px+1)
		c.touched = true
	}
}

func (c *Canvas) addTot(p int, w uint32) {
	if t := c.tot[p] + w; t >= w {
		c.tot[p] = t
	} else {
		c.tot[p] = math.MaxUint32
	}
}

// Count adds one dot of category cat to pixel (px, py) of a count canvas,
// saturating at the largest uint32.
func (c *Canvas) Count(cat, px, py int) {
	p := py*c.W + px
	i := p*c.NCat + cat
	if c.Cov[i] != math.MaxUint32 {
		c.Cov[i]++
	}
	if c.tot[p] != math.MaxUint32 {
		c.tot[p]++
	}
	c.rows[py] = true
	if int32(px) < c.x0[py] {
		c.x0[py] = int32(px)
	}
	if int32(px) >= c.x1[py] {
		c.x1[py] = int32(px) + 1
	}
	c.touched = true
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
	g := math.Round(mass * One * (1 << gainBits))
	if g < 1 {
		g = 1
	}
	if g > 1<<40 {
		g = 1 << 40
	}
	c.composite(colors, uint64(g), dst)
}

// gainBits is the fixed-point precision of the coverage gain.
const gainBits = 16

func (c *Canvas) composite(colors []color.NRGBA, gain uint64, dst *image.NRGBA) {
	n := c.NCat
	const full = One << gainBits
	// A sum at or above sat is fully opaque whatever the gain.
	sat := (uint64(full) + gain - 1) / gain
	var cr, cg, cb [64]uint64
	for k := 0; k < n && k < len(colors); k++ {
		cr[k], cg[k], cb[k] = uint64(colors[k].R), uint64(colors[k].G), uint64(colors[k].B)
	}
	for py := 0; py < c.H; py++ {
		row := dst.Pix[py*dst.Stride : py*dst.Stride+4*c.W]
		if !c.rows[py] {
			clear(row)
			continue
		}
		cov := c.Cov[py*c.W*n : (py+1)*c.W*n]
		tot := c.tot[py*c.W : (py+1)*c.W]
		x0, x1 := int(c.x0[py]), int(c.x1[py])
		clear(row[:4*x0])
		clear(row[4*x1:])
		for px := x0; px < x1; px++ {
			o := row[4*px : 4*px+4 : 4*px+4]
			t := tot[px]
			if t == 0 {
				o[0], o[1], o[2], o[3] = 0, 0, 0, 0
				continue
			}
			cell := cov[px*n : px*n+n]
			var sum, r, g, b uint64
			single := -1
			for k, w := range cell {
				if w == 0 {
					continue
				}
				if w == t && single < 0 && t != math.MaxUint32 {
					single = k // the pixel holds one category only
					break
				}
				ww := uint64(w)
				sum += ww
				r += ww * cr[k]
				g += ww * cg[k]
				b += ww * cb[k]
			}
			if single >= 0 {
				sum = uint64(t)
			}
			var a uint64 = 255
			if sum < sat {
				a = (sum*gain*255 + full/2) / full
			}
			if a == 0 {
				o[0], o[1], o[2], o[3] = 0, 0, 0, 0
				continue
			}
			if single >= 0 {
				o[0], o[1], o[2] = uint8(cr[single]), uint8(cg[single]), uint8(cb[single])
			} else {
				o[0] = uint8((r + sum/2) / sum)
				o[1] = uint8((g + sum/2) / sum)
				o[2] = uint8((b + sum/2) / sum)
			}
			o[3] = uint8(a)
		}
	}
}
