package page

import (
	"image"
	"image/color"
	"math"

	"github.com/fogleman/gg"
	"github.com/go-pdf/fpdf"
	"github.com/paulmach/orb"
)

// Reference is one reference layer printed with the dots: areas (water,
// parks) filled, lines (roads, rivers) stroked, or place labels set as
// text (vector text in the PDF).
type Reference struct {
	// Kind is "labels", "lines" or "areas".
	Kind string
	// Above draws the layer over the dots, else under them.
	Above bool
	Color color.NRGBA
	// WidthMM is the line width on paper (lines; areas' outline, 0 none).
	WidthMM float64
	Labels  []Label
	Lines   []orb.LineString
	Areas   []orb.Polygon
	// Key, when not "", lists the layer in the page's legend, after the
	// dot note: a square swatch of Color with this label, under the
	// heading KeyTitle (shared by consecutive keyed layers).
	Key, KeyTitle string
}

// Label is a place name at a point; rank 1 is placed first.
type Label struct {
	Name string
	Rank int
	At   orb.Point
}

// labelSize is a label's text size in points by rank, before the page's
// font scale.
func labelSize(rank int) (float64, bool) {
	switch {
	case rank <= 1:
		return 10, true
	case rank == 2:
		return 8, true
	}
	return 6.5, false
}

// project projects a line to page mm, breaking it where the projection
// has no point; parts wholly outside the frame are dropped.
func (l *Layout) projectLine(pts []orb.Point) [][][2]float64 {
	var out [][][2]float64
	var cur [][2]float64
	f := l.frame
	flush := func() {
		if len(cur) > 1 {
			minX, minY, maxX, maxY := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
			for _, p := range cur {
				minX, minY, maxX, maxY = math.Min(minX, p[0]), math.Min(minY, p[1]), math.Max(maxX, p[0]), math.Max(maxY, p[1])
			}
			if maxX >= f.X && minX <= f.X+f.W && maxY >= f.Y && minY <= f.Y+f.H {
				out = append(out, cur)
			}
		}
		cur = nil
	}
	for _, p := range pts {
		x, y := l.Project(p[0], p[1])
		if math.IsNaN(x) || math.IsNaN(y) {
			flush()
			continue
		}
		cur = append(cur, [2]float64{x, y})
	}
	flush()
	return out
}

// referenceItems returns the display items of the spec's reference layers
// drawn under the dots and over them. Labels are placed greedily, rank 1
// first (the order of the spec's labels within a rank), each centred on
// its point; a label whose box would leave the frame or overlap a label
// already placed is left out.
func (l *Layout) referenceItems() (under, over []item) {
	var placed [][4]float64
	f := l.frame
	for _, r := range l.spec.References {
		c := r.Color
		var items []item
		switch r.Kind {
		case "areas":
			var rings [][][2]float64
			for _, poly := range r.Areas {
				for _, ring := range poly {
					rings = append(rings, l.projectLine(ring)...)
				}
			}
			if len(rings) > 0 {
				it := item{kind: kArea, rings: rings, fill: &c}
				if r.WidthMM > 0 {
					it.stroke, it.lineW = &c, r.WidthMM
				}
				items = append(items, it)
			}
		case "lines":
			var rings [][][2]float64
			for _, ln := range r.Lines {
				rings = append(rings, l.projectLine(ln)...)
			}
			if len(rings) > 0 {
				items = append(items, item{kind: kPath, rings: rings, stroke: &c, lineW: r.WidthMM})
			}
		case "labels":
			ls := append([]Label(nil), r.Labels...)
			sortLabels(ls)
			pad := 0.8 * l.fs
			for _, lb := range ls {
				size, bold := labelSize(lb.Rank)
				size *= l.fs
				x, y := l.Project(lb.At[0], lb.At[1])
				if math.IsNaN(x) || math.IsNaN(y) {
					continue
				}
				w, h := l.tf.textWidth(lb.Name, size, bold), size*mmPerPt
				b := [4]float64{x - w/2 - pad, y - h/2 - pad, x + w/2 + pad, y + h/2 + pad}
				if b[0] < f.X || b[2] > f.X+f.W || b[1] < f.Y || b[3] > f.Y+f.H {
					continue
				}
				free := true
				for _, o := range placed {
					if b[0] < o[2] && o[0] < b[2] && b[1] < o[3] && o[1] < b[3] {
						free = false
						break
					}
				}
				if !free {
					continue
				}
				placed = append(placed, b)
				items = append(items, textItem(lb.Name, x-w/2, y+l.tf.ascentMM(size)-h/2, size, bold, c))
			}
		}
		if r.Above {
			over = append(over, items...)
		} else {
			under = append(under, items...)
		}
	}
	return under, over
}

func sortLabels(ls []Label) {
	// A stable insertion by rank keeps the given order within a rank.
	for i := 1; i < len(ls); i++ {
		for j := i; j > 0 && ls[j].Rank < ls[j-1].Rank; j-- {
			ls[j], ls[j-1] = ls[j-1], ls[j]
		}
	}
}

// withReferences puts the reference items round the dots item.
func (l *Layout) withReferences(items []item) []item {
	if len(l.spec.References) == 0 {
		return items
	}
	under, over := l.referenceItems()
	var out []item
	for _, it := range items {
		if it.kind == kDots {
			out = append(out, under...)
			out = append(out, it)
			out = append(out, over...)
			continue
		}
		out = append(out, it)
	}
	return out
}

// drawUnder draws the items under the dots into dst, whose origin is the
// frame's top-left pixel: the PDF's dot raster is opaque, so what lies
// under the dots is drawn into it.
func (p *Page) drawUnder(dst *image.RGBA) {
	dc := gg.NewContextForRGBA(dst)
	k := p.ppm
	ox, oy := float64(p.framePx.Min.X), float64(p.framePx.Min.Y)
	for _, it := range p.items {
		if it.kind == kDots {
			return
		}
		// Outlines come after the dots: every shape before them is a
		// reference layer's.
		if it.kind == kArea || it.kind == kPath {
			p.rasterShape(dc, it, k, -ox, -oy)
		}
	}
}

// rasterShape draws an area or path item with gg at k pixels per mm,
// shifted by (dx, dy) pixels and clipped to the frame.
func (p *Page) rasterShape(dc *gg.Context, it item, k, dx, dy float64) {
	f := p.frame
	dc.DrawRectangle(f.X*k+dx, f.Y*k+dy, f.W*k, f.H*k)
	dc.Clip()
	for _, ring := range it.rings {
		dc.MoveTo(ring[0][0]*k+dx, ring[0][1]*k+dy)
		for _, pt := range ring[1:] {
			dc.LineTo(pt[0]*k+dx, pt[1]*k+dy)
		}
		if it.kind == kArea {
			dc.ClosePath()
		}
	}
	if it.kind == kArea {
		dc.SetFillRuleEvenOdd()
		dc.SetColor(*it.fill)
		if it.stroke != nil {
			dc.FillPreserve()
			dc.SetColor(*it.stroke)
			dc.SetLineWidth(math.Max(it.lineW*k, 0.5))
			dc.Stroke()
		} else {
			dc.Fill()
		}
	} else {
		dc.SetColor(*it.stroke)
		dc.SetLineWidth(math.Max(it.lineW*k, 0.5))
		dc.SetLineJoinRound()
		dc.SetLineCapRound()
		dc.Stroke()
	}
	dc.ResetClip()
}

// pdfArea fills an area item (even-odd) in the PDF, clipped to the frame.
func (p *Page) pdfArea(pdf *fpdf.Fpdf, it item) {
	f := p.frame
	pdf.ClipRect(f.X, f.Y, f.W, f.H, false)
	pdf.SetFillColor(int(it.fill.R), int(it.fill.G), int(it.fill.B))
	style := "F*"
	if it.stroke != nil {
		pdf.SetDrawColor(int(it.stroke.R), int(it.stroke.G), int(it.stroke.B))
		pdf.SetLineWidth(it.lineW)
		style = "FD*"
	}
	for _, ring := range it.rings {
		pdf.MoveTo(ring[0][0], ring[0][1])
		for _, pt := range ring[1:] {
			pdf.LineTo(pt[0], pt[1])
		}
		pdf.ClosePath()
	}
	pdf.DrawPath(style)
	pdf.ClipEnd()
}

// referenceKey lays out the keyed reference layers (Reference.Key) at x, y
// in a column w wide: each KeyTitle as a heading, then a square swatch and
// label per layer. It returns the items and the y below them (y itself
// when no layer has a key).
func (l *Layout) referenceKey(items []item, x, y, w float64) ([]item, float64) {
	fs := l.fs
	sz, hs := 8*fs, 8*fs
	title := ""
	first := true
	for _, r := range l.spec.References {
		if r.Key == "" {
			continue
		}
		if first || r.KeyTitle != title {
			y += 2.5 * fs
			items, y = l.textBlock(items, l.tf.wrap(r.KeyTitle, hs, true, w), x, y, hs, true, ink)
			y += 0.8 * fs
			title, first = r.KeyTitle, false
		}
		pitch := math.Max(4.2*fs, lineMM(sz)+0.8*fs)
		c := r.Color
		side := 3 * fs
		items = append(items, item{kind: kRect, x: x + 0.2*fs, y: y + (pitch-side)/2, w: side, h: side, fill: &c, stroke: &muted, lineW: 0.1})
		lines := l.tf.wrap(r.Key, sz, false, math.Max(w-5*fs, 10))
		b := y + pitch/2 + l.tf.ascentMM(sz)/2 - 0.15*fs
		for i, ln := range lines {
			items = append(items, textItem(ln, x+5*fs, b+float64(i)*lineMM(sz), sz, false, ink))
		}
		y += pitch + float64(len(lines)-1)*lineMM(sz)
	}
	return items, y
}
