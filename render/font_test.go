package render

import (
	"image"
	"math"
	"strings"
	"testing"

	"github.com/fogleman/gg"
	"github.com/go-fonts/liberation/liberationserifbold"
	"github.com/go-fonts/liberation/liberationserifregular"
)

func TestParseFontRefusesWhatThePDFCannotEmbed(t *testing.T) {
	for _, c := range []struct {
		name string
		data []byte
		want string
	}{
		{"CFF OpenType", append([]byte("OTTO"), make([]byte, 60)...), "CFF"},
		{"WOFF", append([]byte("wOFF"), make([]byte, 60)...), "WOFF"},
		{"text", []byte("not a font at all"), "not a TrueType font"},
	} {
		if _, err := ParseFont(c.data, nil); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: err %v; want one naming %q", c.name, err, c.want)
		}
	}
	f, err := ParseFont(liberationserifregular.TTF, nil)
	if err != nil {
		t.Fatal(err)
	}
	if f.Family != "Liberation Serif" || !f.BoldIsRegular {
		t.Errorf("family %q, bold is regular %v", f.Family, f.BoldIsRegular)
	}
	if DefaultFont().Family != "Liberation Sans" {
		t.Errorf("default family %q", DefaultFont().Family)
	}
}

// inkColumns is the leftmost and rightmost column of r holding ink (not
// the paper) in img.
func inkColumns(img image.Image, r image.Rectangle) (int, int) {
	x0, x1 := math.MaxInt, -1
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			cr, cg, cb, _ := img.At(x, y).RGBA()
			if cr>>8 < 0xc0 && cg>>8 < 0xc0 && cb>>8 < 0xc0 {
				x0, x1 = min(x0, x), max(x1, x)
			}
		}
	}
	return x0, x1
}

// TestLegendInThemeFont: a legend given a font draws its PNG in it and
// names its family in the SVG. The PNG's title is as wide as the font
// says the title is (advance widths from the font's hmtx table, via
// gg's MeasureString), and not as wide as in the default face.
func TestLegendInThemeFont(t *testing.T) {
	serif, err := ParseFont(liberationserifregular.TTF, liberationserifbold.TTF)
	if err != nil {
		t.Fatal(err)
	}
	l := Legend{Title: "Home languages, invented town", Note: DotNote(5), Caution: Caution, Credit: "Invented data", Font: serif}
	width := func(f *Font) float64 {
		dc := gg.NewContext(1, 1)
		dc.SetFontFace(f.Face(15, 1, true))
		w, _ := dc.MeasureString(l.Title)
		return w
	}
	wSerif, wSans := width(serif), width(DefaultFont())
	if math.Abs(wSerif-wSans) < 8 {
		t.Fatalf("test title too short to tell the faces apart: %.1f vs %.1f px", wSerif, wSans)
	}
	img := DrawLegend(l, 400, 1)
	x0, x1 := inkColumns(img, image.Rect(0, int(legendPad), 400, int(legendPad)+20))
	if got := float64(x1 - x0 + 1); math.Abs(got-wSerif) > 3 {
		t.Errorf("title ink %v px wide; Liberation Serif Bold sets it %.1f px, Liberation Sans Bold %.1f", got, wSerif, wSans)
	}
	svg := string(LegendSVG(l, 400))
	if !strings.Contains(svg, `font-family="&#39;Liberation Serif&#39;, sans-serif"`) {
		t.Errorf("legend.svg does not name Liberation Serif:\n%s", svg[:min(len(svg), 600)])
	}
	def := string(LegendSVG(Legend{Title: "x"}, 300))
	if !strings.Contains(def, `font-family="&#39;Liberation Sans&#39;, Arial, Helvetica, sans-serif"`) {
		t.Errorf("default legend.svg family wrong:\n%s", def)
	}
}
