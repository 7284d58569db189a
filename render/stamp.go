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
	// row; spans[f] cuts them into runs of at most 64 adjacent pixels of
	// one row, whose weights lie in weights; rows top[f] ≤ dy <
	// top[f]+nrows[f] hold them (padded, maybe with rows below them that
	// hold none).
	cells   [Sub * Sub][]stampCell
	spans   [Sub * Sub][]stampSpan
	top     [Sub * Sub]int32
	nrows   [Sub * Sub]int32
	weights []uint32
}

// stampSpan is the run x0 ≤ dx < x0+n (n ≤ 64) of row dy that a stamp
// inks, with weights[wi : wi+n].
type stampSpan struct {
	dy, x0, n, wi int32
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
			f := fy*Sub + fx
			var cells []stampCell
			for dy := -s.reach; dy <= s.reach; dy++ {
				for dx := -s.reach; dx <= s.reach; dx++ {
					if w := stampWeight(r, ink, dx, dy, fx, fy); w > 0 {
						cells = append(cells, stampCell{int8(dx), int8(dy), uint16(w)})
					}
				}
			}
			s.cells[f] = cells
			var spans []stampSpan
			for _, e := range cells {
				k := len(spans) - 1
				if k >= 0 && spans[k].dy == int32(e.dy) && spans[k].x0+spans[k].n == int32(e.dx) && spans[k].n < 64 {
					spans[k].n++
				} else {
					spans = append(spans, stampSpan{int32(e.dy), int32(e.dx), 1, int32(len(s.weights))})
				}
				s.weights = append(s.weights, uint32(e.w))
			}
			s.spans[f] = spans
			if len(spans) > 0 {
				s.top[f] = spans[0].dy
				s.nrows[f] = spans[len(spans)-1].dy + 1 - spans[0].dy
			}
		}
	}
	s.pad()
	return s
}

// pad makes every offset's cells and rows as many as the longest
// offset's, when every offset has at least one cell, so that drawing loops
// run the same number of times whatever the offset: the extra cells repeat
// the first with weight 0 (adding nothing to a pixel the dot inks anyway),
// and the extra rows, below the last, are marked as maybe inked, which
// costs compositing a look at them and changes no pixel. Rows are padded
// only when the padded ones all stay within the reach, where AddStamp's
// test for a dot inside the canvas vouches for them.
func (s *Stamp) pad() {
	nc, nr := 0, int32(0)
	for f := range s.cells {
		if len(s.cells[f]) == 0 {
			return
		}
		nc, nr = max(nc, len(s.cells[f])), max(nr, s.nrows[f])
	}
	rowsFit := true
	for f := range s.cells {
		rowsFit = rowsFit && s.top[f]+nr-1 <= int32(s.reach)
	}
	for f := range s.cells {
		e := s.cells[f][0]
		e.w = 0
		for len(s.cells[f]) < nc {
			s.cells[f] = append(s.cells[f], e)
		}
		if rowsFit {
			s.nrows[f] = nr
		}
	}
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
	if R := s.reach; ix < R || iy < R || ix+R >= c.W || iy+R >= c.H {
		c.addClipped(cat, ix, iy, f, s)
		return
	}
	// Wholly inside: no clipping, and (with a padded stamp) loops of the
	// same length for every dot.
	if c.stamp != s {
		c.bindStamp(s)
	}
	pl := c.cov[cat*c.plane:][:c.plane]
	cats := c.cats[:c.plane]
	bit := catBit(cat)
	pix := iy*c.W + ix
	for _, e := range c.stampCells[f] {
		q := pix + int(e.off)
		pl[q] += e.w
		cats[q] |= bit
	}
	r := c.rows[iy+int(s.top[f]):][:s.nrows[f]]
	for i := range r {
		r[i] = true
	}
	c.touched = true
}

// addClipped is AddStamp for a dot that may reach beyond the canvas (base
// pixel ix, iy; offset f): each span is clipped to the canvas.
func (c *Canvas) addClipped(cat, ix, iy, f int, s *Stamp) {
	pl := c.cov[cat*c.plane:][:c.plane]
	bit := catBit(cat)
	for _, sp := range s.spans[f] {
		y := iy + int(sp.dy)
		if y < 0 || y >= c.H {
			continue
		}
		x0 := ix + int(sp.x0)
		a, b := max(x0, 0), min(x0+int(sp.n), c.W)
		if a >= b {
			continue
		}
		w0 := int(sp.wi) + a - x0
		ws := s.weights[w0 : w0+b-a]
		q := y*c.W + a
		dst := pl[q : q+len(ws)]
		cb := c.cats[q : q+len(ws)]
		for i, w := range ws {
			dst[i] += w
			cb[i] |= bit
		}
		c.rows[y] = true
		c.touched = true
	}
}
