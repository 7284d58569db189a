package page

import (
	"os"
	"os/exec"
	"strings"
	"testing"

	"github.com/go-fonts/liberation/liberationserifbold"
	"github.com/go-fonts/liberation/liberationserifregular"
	"github.com/stipple-maps/stipple/geo/reftool"
	"github.com/stipple-maps/stipple/render"
)

// TestPDFEmbedsThemeFont: a page set in a theme's font embeds that font
// in the PDF (poppler's pdffonts lists each font with "emb" yes), and the
// theme's words reach the page (pdftotext reads them back).
func TestPDFEmbedsThemeFont(t *testing.T) {
	pdffonts := reftool.Need(t, "pdffonts")
	pdftotext := reftool.Need(t, "pdftotext")
	serif, err := render.ParseFont(liberationserifregular.TTF, liberationserifbold.TTF)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name string
		font *render.Font
		want string
	}{{"theme", serif, "LiberationSerif"}, {"default", nil, "LiberationSans"}} {
		spec := testSpec(t, A4, 72)
		spec.Font = c.font
		spec.Words = Words{People: "Personen", Dots: "Punkte", All: "Alle"}
		p := testPage(t, spec, testDots(300, 3))
		path := writeTemp(t, "page.pdf", func(f *os.File) error { return p.WritePDF(f, DotsAuto) })
		out, err := exec.Command(pdffonts, path).CombinedOutput()
		if err != nil {
			t.Fatalf("pdffonts: %v\n%s", err, out)
		}
		var fonts []string
		for _, ln := range strings.Split(string(out), "\n")[2:] {
			if f := strings.Fields(ln); len(f) > 0 {
				fonts = append(fonts, ln)
				// fpdf writes the family lower-cased after "utf8".
				if !strings.Contains(strings.ToLower(f[0]), strings.ToLower(c.want)) {
					t.Errorf("%s: pdffonts lists %q; want only %s", c.name, f[0], c.want)
				}
				if !strings.Contains(ln, " yes ") {
					t.Errorf("%s: font not embedded: %q", c.name, ln)
				}
			}
		}
		if len(fonts) != 2 {
			t.Errorf("%s: pdffonts lists %d fonts, want 2 (regular, bold):\n%s", c.name, len(fonts), out)
		}
		txt, err := exec.Command(pdftotext, "-layout", path, "-").CombinedOutput()
		if err != nil {
			t.Fatalf("pdftotext: %v\n%s", err, txt)
		}
		for _, w := range []string{"Personen", "Punkte", "Alle"} {
			if !strings.Contains(string(txt), w) {
				t.Errorf("%s: pdftotext finds no %q", c.name, w)
			}
		}
	}
}
