package render

import "math"

// Sub is the number of sub-pixel steps per pixel at which AddStamp places
// dots: positions are quantised to 1/16 pixel, far below what the eye sees
// of a dot a few pixels wide.
const Sub = 16

// Stamp is a disc dot's coverage precomputed for each of Sub × Sub sub-pixel
// offsets, so that drawing a dot is a few integer additions.
type Stamp struct {
	d     Dot
	reach int
	// cells[f] lists the non-zero pixels of offset f = fy*Sub + fx, row by
	// row; spans[f] has one entry per row they cover.
	cells [Sub * Sub][]stampCell
	spans [Sub * Sub][]stampSpan
}

// stampSpan is the stretch x0 ≤ dx < x1 of row dy that a stamp inks.
type stampSpan struct {
	dy, x0, x1 int32
}

type stampCell struct {
	dx, dy int8
	w      uint16 // at most One
}

// MaxStampDiameter is the largest diameter NewStamp accepts; bigger dots are
// drawn with Add.
const MaxStampDiameter = 64

// NewStamp precomputes d, which must be at least 1 and at most
// MaxStampDiameter pixels wide.
func NewStamp(d Dot) *Stamp {
	s := &Stamp{d: d}
	r := d.Diameter / 2
	s.reach = int(math.Ceil(r+0.5)) + 1
	ink := d.Opacity * One
	for fy := 0; fy < Sub; fy++ {
		for fx := 0; fx < Sub; fx++ {
			var cells []stampCell
			for dy := -s.reach; dy <= s.reach; dy++ {
				for dx := -s.reach; dx <= s.reach; dx++ {
					if w := stampWeight(r, ink, dx, dy, fx, fy); w > 0 {
						cells = append(cells, stampCell{int8(dx), int8(dy), uint16(w)})
					}
				}
			}
			s.cells[fy*Sub+fx] = cells
			var spans []stampSpan
			for _, e := range cells {
				if k := len(spans) - 1; k >= 0 && spans[k].dy == int32(e.dy) {
					spans[k].x0 = min(spans[k].x0, int32(e.dx))
					spans[k].x1 = max(spans[k].x1, int32(e.dx)+1)
					continue
				}
				spans = append(spans, stampSpan{int32(e.dy), int32(e.dx), int32(e.dx) + 1})
			}
			s.spans[fy*Sub+fx] = spans
		}
	}
	return s
}

// stampWeight is the coverage of the pixel dx, dy from the base pixel of a
// dot whose centre lies at sub-pixel step (fx, fy) of it, i.e. at
// ((fx+0.5)/Sub, (fy+0.5)/Sub) within it; the same rule as Add.
func stampWeight(r, ink float64, dx, dy, fx, fy int) uint32 {
	ddx := float64(dx) + 0.5 - (float64(fx)+0.5)/Sub
	ddy := float64(dy) + 0.5 - (float64(fy)+0.5)/Sub
	cov := r + 0.5 - math.Sqrt(ddx*ddx+ddy*ddy)
	if cov <= 0 {
		return 0
	}
	if cov > 1 {
		cov = 1
	}
	return uint32(cov*ink + 0.5)
}

// boundCell is a stamp cell as an offset into one canvas's pixels.
type boundCell struct {
	off int32
	w   uint32
}

// bindStamp turns s's cells into offsets for c's width; AddStamp keeps the
// last stamp's, so drawing many dots of one stamp computes them once.
func (c *Canvas) bindStamp(s *Stamp) {
	c.stamp = s
	for f := range s.cells {
		bc := c.stampCells[f][:0]
		for _, e := range s.cells[f] {
			bc = append(bc, boundCell{int32(int(e.dy)*c.W + int(e.dx)), uint32(e.w)})
		}
		c.stampCells[f] = bc
	}
}

// Dot is the look the stamp draws.
func (s *Stamp) Dot() Dot { return s.d }

// Reach is how many pixels beyond its base pixel a dot can ink.
func (s *Stamp) Reach() int { return s.reach }

// AddStamp deposits one dot of category cat whose centre lies at (x, y) in
// units of 1/Sub pixel, counted from the canvas's top-left corner (negative
// values lie left of or above the canvas; such dots may still ink it).
func (c *Canvas) AddStamp(cat int, x, y int, s *Stamp) {
	ix, iy := x>>4, y>>4 // floor division by Sub
	f := (y&(Sub-1))*Sub + (x & (Sub - 1))
	cells := s.cells[f]
	R := s.reach
	if ix >= R && iy >= R && ix+R < c.W && iy+R < c.H {
		pix := iy*c.W + ix
		if c.stamp != s {
			c.bindStamp(s)
		}
		cells := c.stampCells[f]
		if cat < 7 {
			bit := uint8(1) << cat
			for _, e := range cells {
				q := pix + int(e.off)
				if cb := c.cats[q]; cb == 0 || cb == bit {
					c.tot[q] += e.w
					c.cats[q] = bit
				} else {
					c.mixed(q, cat, cb)[cat] += e.w
				}
			}
		} else {
			for _, e := range cells {
				q := pix + int(e.off)
				c.mixed(q, cat, c.cats[q])[cat] += e.w
			}
		}
		for _, sp := range s.spans[f] {
			c.mark(iy+int(sp.dy), ix+int(sp.x0), ix+int(sp.x1))
		}
		c.touched = true
		return
	}
	for _, e := range cells {
		px, py := ix+int(e.dx), iy+int(e.dy)
		if px < 0 || py < 0 || px >= c.W || py >= c.H {
			continue
		}
		c.deposit(py*c.W+px, cat, uint32(e.w))
		c.mark1(px, py)
		c.touched = true
	}
}
