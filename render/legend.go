package render

import (
	"fmt"
	"image"
	"image/color"
	"strings"
	"sync"

	"github.com/fogleman/gg"
	"github.com/golang/freetype/truetype"
	"golang.org/x/image/font"
	"golang.org/x/image/font/gofont/gobold"
	"golang.org/x/image/font/gofont/goregular"
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
	Credit  string
}

// DotNote returns the note for a dot value: "1 dot = 25 people".
func DotNote(perDot float64) string {
	if perDot == 1 {
		return "1 dot = 1 person"
	}
	return fmt.Sprintf("1 dot = %s people", FormatCount(perDot))
}

// Caution is the standard caution printed with every map.
const Caution = "Each dot is placed at random inside the area its people were counted in; " +
	"it does not mark where anyone lives. Counts for small areas, and survey estimates, carry error."

// FormatCount writes a count with thin grouping: 1234567 → "1,234,567";
// fractions keep up to two decimals.
func FormatCount(v float64) string {
	whole := int64(v)
	frac := v - float64(whole)
	s := fmt.Sprint(whole)
	var b strings.Builder
	for i, r := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	if frac > 0.005 {
		f := fmt.Sprintf("%.2f", frac)
		b.WriteString(strings.TrimRight(strings.TrimPrefix(f, "0"), "0"))
	}
	return b.String()
}

var (
	fontsOnce        sync.Once
	regular, boldTTF *truetype.Font
)

func loadFonts() {
	fontsOnce.Do(func() {
		regular, _ = truetype.Parse(goregular.TTF)
		boldTTF, _ = truetype.Parse(gobold.TTF)
	})
}

// Face returns the Go font at size points for the given scale; bold picks
// the bold cut. The fonts ship inside the binary (golang.org/x/image).
func Face(size, scale float64, bold bool) font.Face {
	loadFonts()
	f := regular
	if bold {
		f = boldTTF
	}
	return truetype.NewFace(f, &truetype.Options{Size: size * scale, DPI: 72, Hinting: font.HintingFull})
}

// Legend colours: ink #1f2328 on white has a WCAG 2.x contrast of 15.8:1,
// the muted #57606a 6.4:1 (both above the 4.5:1 AA level; checked in tests).
var (
	legendInk   = color.NRGBA{0x1f, 0x23, 0x28, 0xff}
	legendMuted = color.NRGBA{0x57, 0x60, 0x6a, 0xff}
)

// DrawLegend draws the legend as an image width pixels wide at scale 1 (the
// result is width*scale wide), on a white card.
func DrawLegend(l Legend, width int, scale float64) image.Image {
	const pad, rowH, sw = 14.0, 24.0, 12.0
	W := float64(width)
	measure := gg.NewContext(1, 1)
	measure.SetFontFace(Face(11, 1, false))
	caution := measure.WordWrap(l.Caution, W-2*pad)
	credit := measure.WordWrap(l.Credit, W-2*pad)
	measure.SetFontFace(Face(15, 1, true))
	title := measure.WordWrap(l.Title, W-2*pad)

	h := pad + float64(len(title))*20 + 6 + float64(len(l.Entries))*rowH + 8 + 18 +
		float64(len(caution))*15 + 6 + float64(len(credit))*15 + pad
	dc := gg.NewContext(int(W*scale+0.5), int(h*scale+0.5))
	dc.Scale(scale, scale)
	dc.SetColor(color.White)
	dc.Clear()
	y := pad
	dc.SetColor(legendInk)
	dc.SetFontFace(Face(15, scale, true))
	dc.Scale(1/scale, 1/scale) // text is drawn with a scaled face in device pixels
	text := func(s string, x, y float64, ax float64) {
		dc.DrawStringAnchored(s, x*scale, y*scale, ax, 0.8)
	}
	for _, line := range title {
		text(line, pad, y, 0)
		y += 20
	}
	y += 6
	dc.SetFontFace(Face(12, scale, false))
	for _, e := range l.Entries {
		dc.SetColor(e.Color)
		dc.DrawCircle((pad+sw/2)*scale, (y+rowH/2-4)*scale, sw/2*scale)
		dc.Fill()
		dc.SetColor(legendInk)
		text(e.Label, pad+sw+8, y+rowH/2-10, 0)
		dc.SetColor(legendMuted)
		text(FormatCount(e.People), W-pad, y+rowH/2-10, 1)
		y += rowH
	}
	y += 8
	dc.SetColor(legendInk)
	dc.SetFontFace(Face(12, scale, true))
	text(l.Note, pad, y, 0)
	y += 18
	dc.SetColor(legendMuted)
	dc.SetFontFace(Face(11, scale, false))
	for _, line := range caution {
		text(line, pad, y, 0)
		y += 15
	}
	y += 6
	for _, line := range credit {
		text(line, pad, y, 0)
		y += 15
	}
	return dc.Image()
}
