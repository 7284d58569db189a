package render

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"strconv"
	"strings"

	"github.com/fogleman/gg"
	"golang.org/x/image/font"
)

// LegendEntry is one category row of a legend.
type LegendEntry struct {
	Label  string
	Color  color.NRGBA
	People float64
	Dots   int
}

// Legend is everything a legend shows. The same values go into the tile
// metadata, so the picture and the viewer always agree.
type Legend struct {
	Title   string
	Entries []LegendEntry
	// Note is the "1 dot = N people" line, made from the N actually used.
	Note string
	// Caution says that dots are placed at random within each area.
	Caution string
	// Credit names the source; the legend prints it as CreditLine does.
	Credit string
	// NotDrawn, when set, says how many people have no dot and why.
	NotDrawn string
	// CreditPrefix goes before the credit (see CreditLineWith); ""
	// is DefaultCreditPrefix.
	CreditPrefix string
	// Font sets the legend's text; nil is DefaultFont. legend.svg names
	// its family.
	Font *Font
}

// DotNote returns the note for a dot value: "1 dot = 25 people".
func DotNote(perDot float64) string {
	if perDot == 1 {
		return "1 dot = 1 person"
	}
	return fmt.Sprintf("1 dot = %s people", FormatCount(perDot))
}

// DefaultCreditPrefix is the word CreditLine puts before a credit.
const DefaultCreditPrefix = "Source: "

// CreditLine is a map's credit as every output prints it:
// CreditLineWith(DefaultCreditPrefix, credit).
func CreditLine(credit string) string { return CreditLineWith(DefaultCreditPrefix, credit) }

// CreditLineWith is the credit after prefix ("Source: ", "Quelle : "),
// unless the credit already starts with a word and a colon of its own
// ("Source: …", "Data: …", "Sources: …") or with the prefix itself, which
// is kept as written, so no output says "Source: Source: …". An empty
// prefix is DefaultCreditPrefix.
func CreditLineWith(prefix, credit string) string {
	credit = strings.TrimSpace(credit)
	if credit == "" {
		return ""
	}
	if prefix == "" {
		prefix = DefaultCreditPrefix
	}
	if p := strings.TrimSpace(prefix); p != "" && strings.HasPrefix(strings.ToLower(credit), strings.ToLower(p)) {
		return credit
	}
	if head, rest, ok := strings.Cut(credit, ":"); ok && head != "" && len(head) <= 24 && !strings.ContainsAny(head, " \t/") && strings.HasPrefix(rest, " ") {
		return credit
	}
	return prefix + credit
}

// Caution is the standard caution printed with every map.
const Caution = "Each dot is placed at random inside the area its people were counted in; " +
	"it does not mark where anyone lives. Counts for small areas, and survey estimates, carry error. " +
	"Maps of groups can be misused: this one shows how many people an area holds, not who anyone is."

// CautionShort is the one-line caution that stays in view when a legend is
// folded away.
const CautionShort = "Dots are placed at random inside each area: a dot is not anyone's home."

// OkabeIto is the colour-blind-safe palette of M. Okabe and K. Ito (2008),
// "Color Universal Design (CUD): how to make figures and presentations that
// are friendly to colorblind people", in the order they give it: black,
// orange, sky blue, bluish green, yellow, blue, vermillion, reddish purple.
var OkabeIto = []string{"#000000", "#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"}

// DefaultGround is the map ground the viewer shows under the dots: a cool
// light grey.
const DefaultGround = "#eceff3"

// DefaultPalette is the colours stipple hands to a new map's categories,
// in order. It starts from Okabe & Ito (2008) and keeps every colour at
// 3:1 or more of WCAG 2.x contrast against DefaultGround (WCAG 2.1,
// 1.4.11 Non-text Contrast), which five of their eight do not reach:
//
//   - blue #0072B2 and vermillion #D55E00 are theirs, unchanged;
//   - bluish green #009E73 is darkened to #00896A, reddish purple #CC79A7
//     to #B5508A;
//   - sky blue #56B4E9 gives way to a violet #4B2F8F;
//   - orange #E69F00 and yellow #F0E442 are left out: darkened to 3:1 they
//     turn ochre and olive and, seen with protanopia, match the vermillion;
//   - black stays last (it reads as ink, not as a group).
//
// The changed colours were chosen so that every two colours stay apart
// (CIELAB ΔE*ab at least 10) in normal vision and in the simulations of
// protanopia, deuteranopia and tritanopia of Machado, Oliveira &
// Fernandes (2009); TestDefaultPalette checks both rules.
var DefaultPalette = []string{"#0072B2", "#D55E00", "#00896A", "#B5508A", "#4B2F8F", "#000000"}

// ParseHex reads a #rrggbb colour.
func ParseHex(s string) (color.NRGBA, error) {
	if len(s) != 7 || s[0] != '#' {
		return color.NRGBA{}, fmt.Errorf("render: colour %q: want #rrggbb", s)
	}
	var v [3]uint8
	for i := range v {
		hi, ok1 := hexDigit(s[1+2*i])
		lo, ok2 := hexDigit(s[2+2*i])
		if !ok1 || !ok2 {
			return color.NRGBA{}, fmt.Errorf("render: colour %q: want #rrggbb", s)
		}
		v[i] = hi<<4 | lo
	}
	return color.NRGBA{v[0], v[1], v[2], 255}, nil
}

func hexDigit(c byte) (uint8, bool) {
	switch {
	case c >= '0' && c <= '9':
		return c - '0', true
	case c >= 'a' && c <= 'f':
		return c - 'a' + 10, true
	case c >= 'A' && c <= 'F':
		return c - 'A' + 10, true
	}
	return 0, false
}

// Hex writes c as #rrggbb (alpha is ignored).
func Hex(c color.NRGBA) string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }

// Luminance is the relative luminance of an opaque sRGB colour as W3C WCAG
// 2.x defines it: 0.2126 R + 0.7152 G + 0.0722 B of the linearised channels
// (c/12.92 up to 0.04045, ((c+0.055)/1.055)^2.4 above).
func Luminance(c color.NRGBA) float64 {
	lin := func(v uint8) float64 {
		s := float64(v) / 255
		if s <= 0.04045 {
			return s / 12.92
		}
		return math.Pow((s+0.055)/1.055, 2.4)
	}
	return 0.2126*lin(c.R) + 0.7152*lin(c.G) + 0.0722*lin(c.B)
}

// Contrast is the WCAG 2.x contrast ratio (L1 + 0.05) / (L2 + 0.05) of two
// opaque colours, L1 the lighter: from 1 to 21. Body text wants 4.5 (AA).
func Contrast(a, b color.NRGBA) float64 {
	la, lb := Luminance(a), Luminance(b)
	if la < lb {
		la, lb = lb, la
	}
	return (la + 0.05) / (lb + 0.05)
}

// Over composites c with opacity alpha (0–1) over the opaque ground g, in
// sRGB values as browsers blend: the colour text on a translucent panel
// really sits on.
func Over(c color.NRGBA, alpha float64, g color.NRGBA) color.NRGBA {
	mix := func(a, b uint8) uint8 { return uint8(math.Round(float64(a)*alpha + float64(b)*(1-alpha))) }
	return color.NRGBA{mix(c.R, g.R), mix(c.G, g.G), mix(c.B, g.B), 255}
}

// FormatCount writes a count with thin grouping: 1234567 → "1,234,567";
// fractions keep up to two decimals.
func FormatCount(v float64) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return "∞"
	case math.IsInf(v, -1):
		return "−∞"
	}
	sign := ""
	if v < 0 {
		sign, v = "-", -v
	}
	// Round to hundredths first, so 0.999 becomes 1, not "0" and ".1".
	if v >= 1<<62 {
		return sign + strconv.FormatFloat(v, 'g', 6, 64)
	}
	var whole, frac int64
	if v >= 1e12 {
		// Past a trillion a float64 has no hundredths to show.
		whole = int64(math.Round(v))
	} else {
		cents := int64(math.Round(v * 100))
		whole, frac = cents/100, cents%100
	}
	s := strconv.FormatInt(whole, 10)
	var b strings.Builder
	b.WriteString(sign)
	for i, r := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	if frac > 0 {
		b.WriteString(strings.TrimRight(fmt.Sprintf(".%02d", frac), "0"))
	}
	return b.String()
}

// Face returns DefaultFont at size points for the given scale; bold picks
// the bold cut.
func Face(size, scale float64, bold bool) font.Face {
	return DefaultFont().Face(size, scale, bold)
}

// Legend colours, shared by the PNG and SVG legends: ink and muted text on
// the paper card. Their WCAG 2.x contrast on the card is checked in tests
// (at least 4.5:1, the AA level for body text).
var (
	LegendPaper = color.NRGBA{0xff, 0xfe, 0xfb, 0xff}
	LegendInk   = color.NRGBA{0x1c, 0x22, 0x27, 0xff}
	LegendMuted = color.NRGBA{0x4a, 0x53, 0x5c, 0xff}
	// LegendRing outlines each swatch so that light colours (yellow) still
	// show on the card.
	LegendRing = color.NRGBA{0x1c, 0x22, 0x27, 0x66}
)

// Legend layout, in CSS pixels at scale 1.
const (
	legendPad    = 14.0
	legendSwatch = 12.0
	legendRowH   = 24.0
)

// legendItem is one thing the legend draws: a line of text with its
// baseline at (X, Y), or (Swatch) a disc of radius R centred at (X, Y).
type legendItem struct {
	X, Y   float64
	Text   string
	Size   float64
	Bold   bool
	Color  color.NRGBA
	Right  bool // Text ends at X
	Swatch bool
	R      float64
}

// legendLayout places everything the legend shows; DrawLegend (PNG) and
// LegendSVG draw the same layout, so the two agree line for line.
func legendLayout(l Legend, width int) (items []legendItem, height float64) {
	W := float64(width)
	measure := gg.NewContext(1, 1)
	wrap := func(s string, size float64, bold bool, w float64) []string {
		if s == "" {
			return nil
		}
		measure.SetFontFace(l.Font.Face(size, 1, bold))
		// Leave room for a fallback font a little wider, which the SVG may
		// be shown in.
		return measure.WordWrap(s, w*0.94)
	}
	textW := func(s string, size float64) float64 {
		measure.SetFontFace(l.Font.Face(size, 1, false))
		w, _ := measure.MeasureString(s)
		return w
	}
	y := legendPad
	lines := func(ss []string, size, lh float64, bold bool, c color.NRGBA) {
		for _, s := range ss {
			items = append(items, legendItem{X: legendPad, Y: y + lh*0.5 + size*0.36, Text: s, Size: size, Bold: bold, Color: c})
			y += lh
		}
	}
	lines(wrap(l.Title, 15, true, W-2*legendPad), 15, 20, true, LegendInk)
	y += 6
	for _, e := range l.Entries {
		count := FormatCount(e.People)
		labelX := legendPad + legendSwatch + 8
		label := wrap(e.Label, 12, false, W-legendPad-labelX-textW(count, 12)-10)
		if len(label) == 0 {
			label = []string{""}
		}
		rowH := legendRowH + 15*float64(len(label)-1)
		items = append(items, legendItem{X: legendPad + legendSwatch/2, Y: y + legendRowH/2, Swatch: true, R: legendSwatch / 2, Color: e.Color})
		for i, s := range label {
			items = append(items, legendItem{X: labelX, Y: y + legendRowH/2 + 4.3 + 15*float64(i), Text: s, Size: 12, Color: LegendInk})
		}
		items = append(items, legendItem{X: W - legendPad, Y: y + legendRowH/2 + 4.3, Text: count, Size: 12, Color: LegendMuted, Right: true})
		y += rowH
	}
	y += 6
	lines(wrap(l.Note, 12, true, W-2*legendPad), 12, 18, true, LegendInk)
	lines(wrap(l.NotDrawn, 11, false, W-2*legendPad), 11, 15, false, LegendInk)
	y += 2
	lines(wrap(l.Caution, 11, false, W-2*legendPad), 11, 15, false, LegendMuted)
	y += 6
	if l.Credit != "" {
		lines(wrap(CreditLineWith(l.CreditPrefix, l.Credit), 11, false, W-2*legendPad), 11, 15, false, LegendMuted)
	}
	return items, y + legendPad
}

// DrawLegend draws the legend as an image width pixels wide at scale 1 (the
// result is width*scale wide), on the paper card.
func DrawLegend(l Legend, width int, scale float64) image.Image {
	items, h := legendLayout(l, width)
	dc := gg.NewContext(int(float64(width)*scale+0.5), int(h*scale+0.5))
	dc.SetColor(LegendPaper)
	dc.Clear()
	for _, it := range items {
		if it.Swatch {
			dc.DrawCircle(it.X*scale, it.Y*scale, it.R*scale)
			dc.SetColor(it.Color)
			dc.FillPreserve()
			dc.SetColor(LegendRing)
			dc.SetLineWidth(scale)
			dc.Stroke()
			continue
		}
		dc.SetFontFace(l.Font.Face(it.Size, scale, it.Bold))
		dc.SetColor(it.Color)
		x := it.X * scale
		if it.Right {
			w, _ := dc.MeasureString(it.Text)
			x -= w
		}
		dc.DrawString(it.Text, x, it.Y*scale)
	}
	return dc.Image()
}
