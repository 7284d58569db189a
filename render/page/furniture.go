package page

import (
	"image/color"
	"math"
	"strconv"

	"github.com/stipple-maps/stipple/geo/proj"
	"github.com/stipple-maps/stipple/render"
)

// kind says what an item of the display list is.
type kind int

const (
	kText   kind = iota // Text at X, Y (baseline, left end)
	kRect               // rectangle X, Y, W, H: Fill and/or Stroke
	kCircle             // disc centred X, Y, radius R, filled
	kPath               // polyline rings in Rings, stroked, clipped to the frame
	kDots               // the dots, inside the frame
	kArea               // polygon rings in Rings, filled even-odd (and stroked), clipped to the frame
)

// item is one mark on the page, in millimetres. Both the PNG and the PDF
// writer draw the same list, so the two agree.
type item struct {
	kind       kind
	x, y, w, h float64
	r          float64
	text       string
	size       float64 // text size, points
	bold       bool
	fill       *color.NRGBA
	stroke     *color.NRGBA
	lineW      float64 // stroke width, mm
	rings      [][][2]float64
}

func textItem(s string, x, y, size float64, bold bool, c color.NRGBA) item {
	return item{kind: kText, x: x, y: y, text: s, size: size, bold: bold, fill: &c}
}

// textBlock appends lines of text whose first line's top is at y and
// returns the y below the last line.
func (l *Layout) textBlock(items []item, lines []string, x, y, size float64, bold bool, c color.NRGBA) ([]item, float64) {
	for _, ln := range lines {
		items = append(items, textItem(ln, x, y+l.tf.ascentMM(size)+(lineMM(size)-size*mmPerPt)/2, size, bold, c))
		y += lineMM(size)
	}
	return items, y
}

// panelHeight measures the furniture for a panel width wide.
func (l *Layout) panelHeight(width float64) float64 {
	counts := make([]int, len(l.spec.Entries))
	if l.portrait {
		w := (width - l.colGap) / 2
		_, h1 := l.legendColumn(0, 0, w, counts)
		_, h2 := l.notesColumn(0, 0, w, nil)
		return math.Max(h1, h2)
	}
	_, h1 := l.legendColumn(0, 0, width, counts)
	_, h2 := l.notesColumn(0, 0, width, nil)
	return h1 + 5*l.fs + h2
}

// furniture returns the display list: title, frame, dots, outlines,
// legend with counts (dots per category on the page) and notes.
func (l *Layout) furniture(counts []int, outlines [][][2]float64) []item {
	items := append([]item(nil), l.head...)
	f := l.frame
	items = append(items, item{kind: kDots, x: f.X, y: f.Y, w: f.W, h: f.H})
	if outlines != nil {
		c := color.NRGBA{0x4b, 0x52, 0x5a, 0xff}
		items = append(items, item{kind: kPath, rings: outlines, stroke: &c, lineW: 0.1 * math.Max(1, l.fs)})
	}
	items = append(items, item{kind: kRect, x: f.X, y: f.Y, w: f.W, h: f.H, stroke: &line, lineW: 0.25})
	p := l.panel
	bar := l.scaleBar(math.Min(55*l.fs, 0.75*p.W))
	if l.portrait {
		w := (p.W - l.colGap) / 2
		leg, _ := l.legendColumn(p.X, p.Y, w, counts)
		notes, _ := l.notesColumn(p.X+w+l.colGap, p.Y, w, &bar)
		items = append(items, leg...)
		items = append(items, notes...)
	} else {
		leg, h := l.legendColumn(p.X, p.Y, p.W, counts)
		notes, _ := l.notesColumn(p.X, p.Y+h+5*l.fs, p.W, &bar)
		items = append(items, leg...)
		items = append(items, notes...)
	}
	return items
}

// legendColumn lays out the legend: a header, one row per category with
// its swatch, label, people and dots, a total row and the dot note.
func (l *Layout) legendColumn(x, y, w float64, counts []int) ([]item, float64) {
	fs := l.fs
	y0 := y
	var items []item
	sz, hs := 9*fs, 7*fs
	numW := l.tf.textWidth("000,000,000", sz, false)
	dotsR := x + w
	peopleR := dotsR - numW - 3*fs
	labelX := x + 5*fs
	labelW := peopleR - numW - 2*fs - labelX
	right := func(s string, r, y, size float64, bold bool, c color.NRGBA) item {
		return textItem(s, r-l.tf.textWidth(s, size, bold), y, size, bold, c)
	}
	base := y + l.tf.ascentMM(hs)
	items = append(items, right(l.words.People, peopleR, base, hs, false, muted), right(l.words.Dots, dotsR, base, hs, false, muted))
	y += lineMM(hs) + 1*fs
	pitch := math.Max(5*fs, lineMM(sz)+1.2*fs)
	var people float64
	total := 0
	for k, e := range l.spec.Entries {
		lines := l.tf.wrap(e.Label, sz, false, math.Max(labelW, 10))
		rowH := pitch + float64(len(lines)-1)*lineMM(sz)
		mid := y + pitch/2
		c := e.Color
		items = append(items, item{kind: kCircle, x: x + 1.6*fs, y: mid, r: 1.4 * fs, fill: &c})
		b := mid + l.tf.ascentMM(sz)/2 - 0.15*fs
		for i, ln := range lines {
			items = append(items, textItem(ln, labelX, b+float64(i)*lineMM(sz), sz, false, ink))
		}
		items = append(items, right(render.FormatCount(e.People), peopleR, b, sz, false, ink),
			right(render.FormatCount(float64(counts[k])), dotsR, b, sz, false, ink))
		people += e.People
		total += counts[k]
		y += rowH
	}
	if len(l.spec.Entries) > 1 {
		items = append(items, item{kind: kRect, x: x, y: y + 0.6*fs, w: w, h: 0.15 * fs, fill: &muted})
		y += 1.2 * fs
		b := y + pitch/2 + l.tf.ascentMM(sz)/2 - 0.15*fs
		items = append(items, textItem(l.words.All, labelX, b, sz, true, ink),
			right(render.FormatCount(people), peopleR, b, sz, true, ink),
			right(render.FormatCount(float64(total)), dotsR, b, sz, true, ink))
		y += pitch
	}
	y += 2 * fs
	items, y = l.textBlock(items, l.tf.wrap(l.spec.Note, 10*fs, true, w), x, y, 10*fs, true, ink)
	items, y = l.referenceKey(items, x, y, w)
	return items, y - y0
}

// notesColumn lays out the scale bar (when bar is not nil; otherwise its
// room), the projection, the caution, footnotes and the credit.
func (l *Layout) notesColumn(x, y, w float64, bar *scaleBar) ([]item, float64) {
	fs := l.fs
	y0 := y
	var items []item
	small := 7 * fs
	// Scale bar: a caption, the bar and its tick labels.
	capY := y
	y += lineMM(small)
	barY := y + 0.6*fs
	barH := 1.6 * fs
	y = barY + barH + 0.8*fs
	tickY := y
	y += lineMM(small) + 2*fs
	if bar != nil {
		if bar.ok {
			items, _ = l.textBlock(items, []string{bar.caption}, x, capY, small, false, ink)
			seg := bar.length / 4
			for i := 0; i < 4; i++ {
				fill := ink
				if i%2 == 1 {
					fill = white
				}
				items = append(items, item{kind: kRect, x: x + float64(i)*seg, y: barY, w: seg, h: barH, fill: &fill, stroke: &ink, lineW: 0.15})
			}
			for i, t := range bar.ticks {
				pos := x + float64(i)*bar.length/2
				tw := l.tf.textWidth(t, small, false)
				if i == len(bar.ticks)-1 {
					items = append(items, textItem(t, pos-l.tf.textWidth(bar.last, small, false)/2, tickY+l.tf.ascentMM(small), small, false, ink))
					continue
				}
				items = append(items, textItem(t, pos-tw/2, tickY+l.tf.ascentMM(small), small, false, ink))
			}
		} else {
			items, _ = l.textBlock(items, []string{bar.caption}, x, capY, small, false, muted)
		}
	}
	items, y = l.textBlock(items, l.tf.wrap(l.words.Describe(l.spec.Projection)+".", small, false, w), x, y, small, false, muted)
	y += 1.5 * fs
	items, y = l.textBlock(items, l.tf.wrap(l.spec.Caution, small, false, w), x, y, small, false, ink)
	for _, fn := range l.spec.Footnotes {
		y += 1.5 * fs
		items, y = l.textBlock(items, l.tf.wrap(fn, small, false, w), x, y, small, false, muted)
	}
	if l.spec.Credit != "" {
		y += 1.5 * fs
		items, y = l.textBlock(items, l.tf.wrap(l.spec.Credit, small, false, w), x, y, small, false, muted)
	}
	return items, y - y0
}

// scaleBar is a bar true to scale at the map's centre.
type scaleBar struct {
	ok      bool
	ground  float64 // metres the bar stands for
	length  float64 // mm on the page
	ticks   []string
	last    string // the last tick's number without the unit (for centring)
	caption string
	// denominator is the representative fraction's N in 1 : N.
	denominator float64
}

// scaleBar finds the longest bar of 1, 2 or 5 × 10^n metres no longer
// than maxLen mm. The scale at the centre is k of proj.ScaleAt (the scale
// along the parallel, which runs along the page's x axis at the central
// meridian of the conic and azimuthal maps made here), so the bar is true
// there and only there.
func (l *Layout) scaleBar(maxLen float64) scaleBar {
	p := l.spec.Projection
	lon, lat := p.Inverse(l.cx, l.cy)
	_, k := proj.ScaleAt(p, lon, lat)
	perGround := l.scale * k // page mm per ground metre
	if math.IsNaN(perGround) || !(perGround > 0) {
		return scaleBar{caption: l.words.ScaleUndefined}
	}
	d := math.Pow(10, math.Floor(math.Log10(maxLen/perGround)))
	for _, m := range []float64{5, 2, 1} {
		if m*d*perGround <= maxLen {
			d *= m
			break
		}
	}
	b := scaleBar{ok: true, ground: d, length: d * perGround, denominator: 1000 / perGround}
	unit, div := "m", 1.0
	if d >= 1000 {
		unit, div = "km", 1000
	}
	num := func(v float64) string { return strconv.FormatFloat(v/div, 'f', -1, 64) }
	b.last = num(d)
	b.ticks = []string{"0", num(d / 2), b.last + " " + unit}
	b.caption = fill(l.words.Scale, "{denominator}", render.FormatCount(roundSig(b.denominator, 3)), "{latitude}", l.words.latitude(lat))
	return b
}

// roundSig rounds v to n significant digits.
func roundSig(v float64, n int) float64 {
	if v == 0 {
		return 0
	}
	p := math.Pow(10, float64(n)-math.Ceil(math.Log10(math.Abs(v))))
	return math.Round(v*p) / p
}
