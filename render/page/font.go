package page

import (
	"reflect"
	"strings"
	"sync"

	"github.com/golang/freetype/truetype"
	"github.com/stipple-maps/stipple/render"
	"golang.org/x/image/font"
	"golang.org/x/image/math/fixed"
)

// A page is set in Spec.Font (render.DefaultFont, Liberation Sans, when
// nil): the same TrueType files are drawn into the PNG and embedded in the
// PDF, so the two measure and draw the same glyphs. Text is measured
// unhinted and without kerning, which is also how the PDF places it.
type typeface struct {
	font *render.Font
	// measureReg and measureBd are 1000-pixel faces used to measure text
	// precisely.
	measureReg, measureBd font.Face
	// ascent is the regular cut's ascent as a share of the em.
	ascent float64
}

const measureSize = 1000

// typefaces keeps one typeface per font, so pages of one font share their
// measuring faces.
var typefaces sync.Map // *render.Font → *typeface

func typefaceOf(f *render.Font) *typeface {
	if f == nil {
		f = render.DefaultFont()
	}
	if t, ok := typefaces.Load(f); ok {
		return t.(*typeface)
	}
	opt := &truetype.Options{Size: measureSize, DPI: 72, Hinting: font.HintingNone}
	t := &typeface{font: f, measureReg: truetype.NewFace(f.TrueType(false), opt), measureBd: truetype.NewFace(f.TrueType(true), opt)}
	t.ascent = fix(t.measureReg.Metrics().Ascent) / measureSize
	got, _ := typefaces.LoadOrStore(f, t)
	return got.(*typeface)
}

func fix(v fixed.Int26_6) float64 { return float64(v) / 64 }

// textWidth returns the width of s in millimetres at size points.
func (t *typeface) textWidth(s string, size float64, bold bool) float64 {
	f := t.measureReg
	if bold {
		f = t.measureBd
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
func (t *typeface) ascentMM(size float64) float64 {
	return t.ascent * size * mmPerPt
}

// lineMM is the line pitch for text of size points: 1.25 em (common
// practice for small text).
func lineMM(size float64) float64 { return 1.25 * size * mmPerPt }

// wrap breaks s into lines no wider than width millimetres, at spaces; a
// single word wider than the line stays whole on its own line.
func (t *typeface) wrap(s string, size float64, bold bool, width float64) []string {
	var lines []string
	for _, para := range strings.Split(s, "\n") {
		words := strings.Fields(para)
		if len(words) == 0 {
			continue
		}
		line := words[0]
		for _, w := range words[1:] {
			if t.textWidth(line+" "+w, size, bold) <= width {
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
func (t *typeface) rasterFace(size, dpi float64, bold bool) font.Face {
	return truetype.NewFace(t.font.TrueType(bold), &truetype.Options{Size: size, DPI: dpi, Hinting: font.HintingNone})
}

// pdfFamily is the name the PDF gives the font: its family without
// spaces, which pdffonts and other tools list.
func (t *typeface) pdfFamily() string {
	return strings.NewReplacer(" ", "", "/", "", "(", "", ")", "", "<", "", ">", "", "[", "", "]", "", "{", "", "}", "", "%", "", "#", "").Replace(t.font.Family)
}

// Words are a page's own words, for a desk to translate; empty fields are
// DefaultWords'. Scale holds {denominator} and {latitude}; the projection
// notes and the four hemisphere forms hold the placeholders DefaultWords
// shows.
type Words struct {
	People, Dots, All     string
	Scale, ScaleUndefined string
	// Albers (standard parallels {parallel1} and {parallel2}), AlbersOne
	// ({parallel}), LAEA ({latitude} {longitude}), EqualEarth
	// ({longitude}), Mercator and PlateCarree describe the projection
	// (Describe); the page adds a full stop.
	Albers, AlbersOne, LAEA, EqualEarth, Mercator, PlateCarree string
	// North, South, East and West write {degrees} of latitude or
	// longitude: "{degrees}°N".
	North, South, East, West string
}

// DefaultWords are the English words of a page.
var DefaultWords = Words{
	People: "people", Dots: "dots", All: "All",
	Scale:          "Scale 1 : {denominator}, true at the map centre ({latitude})",
	ScaleUndefined: "Scale not defined at the map centre.",
	Albers:         "Albers equal-area conic, standard parallels {parallel1} and {parallel2}, WGS 84",
	AlbersOne:      "Albers equal-area conic, standard parallel {parallel}, WGS 84",
	LAEA:           "Lambert azimuthal equal-area, centred at {latitude} {longitude}, WGS 84",
	EqualEarth:     "Equal Earth, central meridian {longitude}, WGS 84",
	Mercator:       "Web Mercator (EPSG:3857), not equal-area: dots thin out towards the poles",
	PlateCarree:    "Plate carrée (equirectangular), not equal-area",
	North:          "{degrees}°N", South: "{degrees}°S", East: "{degrees}°E", West: "{degrees}°W",
}

// or is w with DefaultWords in its empty fields.
func (w Words) or() Words {
	v, d := reflect.ValueOf(&w).Elem(), reflect.ValueOf(DefaultWords)
	for i := range v.NumField() {
		if v.Field(i).String() == "" {
			v.Field(i).SetString(d.Field(i).String())
		}
	}
	return w
}
