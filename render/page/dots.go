package page

import (
	"fmt"
	"image"
	"image/color"
	"math"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/render"
)

// DotSource yields dots as longitude, latitude (degrees) and category; it
// stops when yield returns false. A Page calls it once.
type DotSource func(yield func(lon, lat float64, cat int) bool)

// Page is a laid-out page with its dots, ready to be drawn.
type Page struct {
	*Layout
	// Dots on the page: frame-relative pixel centres and categories,
	// grouped by band (see bands).
	xs, ys []float32
	cats   []uint8
	// bandStart[b] is the index of band b's first dot; bandH its height
	// in pixels.
	bandStart []int
	bandH     int
	counts    []int
	items     []item
}

// maxBandBytes bounds the coverage buffer of one band: the page is
// rasterised in horizontal bands so that memory does not grow with the
// page height times the number of categories.
const maxBandBytes = 64 << 20

// Place projects the dots onto the page and returns the finished page.
// Dots whose centres fall outside the map frame are left out; Counts says
// how many of each category are drawn. A category outside the legend is
// an error.
func (l *Layout) Place(dots DotSource) (*Page, error) {
	p := &Page{Layout: l, counts: make([]int, len(l.spec.Entries))}
	pr := l.spec.Projection
	fw, fh := float64(l.framePx.Dx()), float64(l.framePx.Dy())
	nc := len(l.spec.Entries)
	var xs, ys []float32
	var cats []uint8
	bad := -1
	f := l.frame
	dots(func(lon, lat float64, cat int) bool {
		if cat < 0 || cat >= nc {
			bad = cat
			return false
		}
		x, y := pr.Forward(lon, lat)
		// Frame-relative pixels.
		px := ((x-l.cx)*l.scale + f.W/2) * l.ppm
		py := (f.H/2 - (y-l.cy)*l.scale) * l.ppm
		if !(px >= 0 && px < fw && py >= 0 && py < fh) { // also drops NaN
			return true
		}
		xs, ys, cats = append(xs, float32(px)), append(ys, float32(py)), append(cats, uint8(cat))
		p.counts[cat]++
		return true
	})
	if bad >= 0 {
		return nil, fmt.Errorf("page: a dot has category %d; the legend has %d", bad, nc)
	}
	// Bands: tall enough that a dot reaches at most into the next band,
	// short enough that one band's coverage fits maxBandBytes.
	bh := maxBandBytes / max(1, l.framePx.Dx()*nc*4)
	p.xs, p.ys, p.cats = xs, ys, cats
	p.bucket(bh)
	var outlines [][][2]float64
	if l.spec.Outlines != nil {
		outlines = l.outlines()
	}
	p.items = l.withReferences(l.furniture(p.counts, outlines))
	return p, nil
}

// bucket groups the dots into horizontal bands of bh pixels (at least
// the dot radius plus two, so a dot reaches at most into the next band),
// with a stable counting sort: within a band the dots keep their order.
func (p *Page) bucket(bh int) {
	r := int(math.Ceil(p.spec.DotMM * p.ppm / 2))
	bh = max(bh, r+2, 16)
	bh = min(bh, max(1, p.framePx.Dy()))
	p.bandH = bh
	nb := (p.framePx.Dy() + bh - 1) / bh
	start := make([]int, nb+1)
	for _, y := range p.ys {
		start[int(y)/bh+1]++
	}
	for b := 1; b <= nb; b++ {
		start[b] += start[b-1]
	}
	next := append([]int(nil), start[:nb]...)
	n := len(p.xs)
	xs, ys, cats := make([]float32, n), make([]float32, n), make([]uint8, n)
	for i, y := range p.ys {
		b := int(y) / bh
		j := next[b]
		next[b]++
		xs[j], ys[j], cats[j] = p.xs[i], y, p.cats[i]
	}
	p.xs, p.ys, p.cats, p.bandStart = xs, ys, cats, start
}

// Counts returns the number of dots of each category on the page.
func (p *Page) Counts() []int { return append([]int(nil), p.counts...) }

// Len is the number of dots on the page.
func (p *Page) Len() int { return len(p.xs) }

// Dot returns dot i's centre on the page (mm) and its category, for
// i < Len.
func (p *Page) Dot(i int) (x, y float64, cat int) {
	return p.frame.X + float64(p.xs[i])/p.ppm, p.frame.Y + float64(p.ys[i])/p.ppm, int(p.cats[i])
}

// colors returns the categories' colours.
func (p *Page) colors() []color.NRGBA {
	c := make([]color.NRGBA, len(p.spec.Entries))
	for i, e := range p.spec.Entries {
		c[i] = e.Color
	}
	return c
}

// look is the dot as render.Canvas draws it at the page's DPI.
func (p *Page) look() render.Dot {
	return render.Dot{Diameter: p.spec.DotMM * p.ppm, Opacity: p.spec.Opacity}
}

// drawDots composites the dots over dst, frame pixel (i, j) landing on
// dst pixel (ox+i, oy+j). Colour per pixel is render.Canvas's order-free
// coverage-weighted mean, laid over what dst holds with the coverage as
// alpha.
func (p *Page) drawDots(dst *image.RGBA, ox, oy int) {
	w, h := p.framePx.Dx(), p.framePx.Dy()
	nc := len(p.spec.Entries)
	bh := p.bandH
	cv := render.NewCanvas(w, bh, nc)
	band := image.NewNRGBA(image.Rect(0, 0, w, bh))
	colors := p.colors()
	d := p.look()
	nb := len(p.bandStart) - 1
	for b := 0; b < nb; b++ {
		cv.Reset()
		top := b * bh
		// A dot reaches at most one band beyond its own.
		for i := p.bandStart[max(0, b-1)]; i < p.bandStart[min(nb, b+2)]; i++ {
			cv.Add(int(p.cats[i]), float64(p.xs[i]), float64(p.ys[i])-float64(top), d)
		}
		if cv.Empty() {
			continue
		}
		cv.Composite(colors, band)
		for y := 0; y < bh && top+y < h; y++ {
			src := band.Pix[y*band.Stride : y*band.Stride+4*w]
			do := dst.PixOffset(ox, oy+top+y)
			row := dst.Pix[do : do+4*w]
			blendRow(row, src)
		}
	}
}

// blendRow lays non-premultiplied src pixels over opaque dst pixels.
func blendRow(dst, src []uint8) {
	for i := 0; i+3 < len(src); i += 4 {
		a := uint32(src[i+3])
		if a == 0 {
			continue
		}
		for c := 0; c < 3; c++ {
			dst[i+c] = uint8((uint32(src[i+c])*a + uint32(dst[i+c])*(255-a) + 127) / 255)
		}
		dst[i+3] = 255
	}
}

// outlines projects the outline polygons to page mm, densifying edges
// longer than 0.25° so that lines of longitude and latitude bend as the
// projection bends them. Rings entirely outside the frame are dropped.
func (l *Layout) outlines() [][][2]float64 {
	var rings [][][2]float64
	f := l.frame
	for _, mp := range l.spec.Outlines {
		for _, poly := range mp {
			for _, ring := range poly {
				if !l.Shows(ring.Bound()) {
					continue
				}
				var out [][2]float64
				minX, minY, maxX, maxY := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
				add := func(pt orb.Point) {
					x, y := l.Project(pt[0], pt[1])
					if math.IsNaN(x) || math.IsNaN(y) {
						if len(out) > 1 {
							rings = append(rings, out)
						}
						out = nil
						return
					}
					out = append(out, [2]float64{x, y})
					minX, minY, maxX, maxY = math.Min(minX, x), math.Min(minY, y), math.Max(maxX, x), math.Max(maxY, y)
				}
				for i, pt := range ring {
					if i > 0 {
						prev := ring[i-1]
						n := int(math.Max(math.Abs(pt[0]-prev[0]), math.Abs(pt[1]-prev[1])) / 0.25)
						for j := 1; j <= n; j++ {
							t := float64(j) / float64(n+1)
							add(orb.Point{prev[0] + t*(pt[0]-prev[0]), prev[1] + t*(pt[1]-prev[1])})
						}
					}
					add(pt)
				}
				if len(out) > 1 && maxX >= f.X && minX <= f.X+f.W && maxY >= f.Y && minY <= f.Y+f.H {
					rings = append(rings, out)
				}
			}
		}
	}
	if rings == nil {
		rings = [][][2]float64{}
	}
	return rings
}
