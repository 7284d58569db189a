package page

import (
	"strings"
	"sync"

	"github.com/golang/freetype/truetype"
	"golang.org/x/image/font"
	"golang.org/x/image/font/gofont/gobold"
	"golang.org/x/image/font/gofont/goregular"
	"golang.org/x/image/math/fixed"
)

// The page uses the Go fonts (golang.org/x/image/font/gofont), shipped in
// the binary and embedded in the PDF, so the PNG and the PDF measure and
// draw the same glyphs. Text is measured unhinted and without kerning
// (the Go fonts have no kern table), which is also how the PDF places it.
var (
	fontOnce        sync.Once
	fontReg, fontBd *truetype.Font
	// measureFaces are 1000-pixel faces used to measure text precisely.
	measureReg, measureBd font.Face
	// ascent is the fonts' ascent as a share of the em (the same in both cuts).
	ascent float64
)

const measureSize = 1000

func loadFonts() {
	fontOnce.Do(func() {
		var err error
		if fontReg, err = truetype.Parse(goregular.TTF); err != nil {
			panic("page: the embedded Go Regular font does not parse: " + err.Error()) // a build defect, not input
		}
		if fontBd, err = truetype.Parse(gobold.TTF); err != nil {
			panic("page: the embedded Go Bold font does not parse: " + err.Error())
		}
		opt := &truetype.Options{Size: measureSize, DPI: 72, Hinting: font.HintingNone}
		measureReg = truetype.NewFace(fontReg, opt)
		measureBd = truetype.NewFace(fontBd, opt)
		ascent = fix(measureReg.Metrics().Ascent) / measureSize
	})
}

func fix(v fixed.Int26_6) float64 { return float64(v) / 64 }

// textWidth returns the width of s in millimetres at size points.
func textWidth(s string, size float64, bold bool) float64 {
	loadFonts()
	f := measureReg
	if bold {
		f = measureBd
	}
	var w fixed.Int26_6
	for _, r := range s {
		a, ok := f.GlyphAdvance(r)
		if !ok {
			a, _ = f.GlyphAdvance('\ufffd')
		}
		w += a
	}
	return fix(w) / measureSize * size * mmPerPt
}

// ascentMM is the height of the font's ascent above the baseline at size
// points, in millimetres.
func ascentMM(size float64) float64 {
	loadFonts()
	return ascent * size * mmPerPt
}

// lineMM is the line pitch for text of size points: 1.25 em (common
// practice for small text).
func lineMM(size float64) float64 { return 1.25 * size * mmPerPt }

// wrap breaks s into lines no wider than width millimetres, at spaces; a
// single word wider than the line stays whole on its own line.
func wrap(s string, size float64, bold bool, width float64) []string {
	var lines []string
	for _, para := range strings.Split(s, "\n") {
		words := strings.Fields(para)
		if len(words) == 0 {
			continue
		}
		line := words[0]
		for _, w := range words[1:] {
			if textWidth(line+" "+w, size, bold) <= width {
				line += " " + w
				continue
			}
			lines = append(lines, line)
			line = w
		}
		lines = append(lines, line)
	}
	return lines
}

// rasterFace returns a face for drawing text of size points at dpi.
func rasterFace(size, dpi float64, bold bool) font.Face {
	loadFonts()
	f := fontReg
	if bold {
		f = fontBd
	}
	return truetype.NewFace(f, &truetype.Options{Size: size, DPI: dpi, Hinting: font.HintingNone})
}
