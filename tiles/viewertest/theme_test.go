package viewertest

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
	"github.com/go-fonts/liberation/liberationserifbold"
	"github.com/go-fonts/liberation/liberationserifregular"
	"github.com/stipple-maps/stipple/geo/demo"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// TestThemeFontAndGround renders the demo with a [theme] naming a font
// file (Liberation Serif from github.com/go-fonts/liberation) and a ground
// colour, and opens the viewer in Chromium over HTTP and from file://:
// the computed font-family of the page names the family, the browser
// loaded the font face from the output folder (the CSS Font Loading API's
// FontFace.status, W3C CSS Font Loading Module Level 3, §2) without a
// Content-Security-Policy complaint, and the map shows the theme's ground.
func TestThemeFontAndGround(t *testing.T) {
	dir := filepath.Join(tmpRoot, "themed")
	if err := os.MkdirAll(filepath.Join(dir, "fonts"), 0o755); err != nil {
		t.Fatal(err)
	}
	for name, b := range map[string][]byte{"fonts/serif.ttf": liberationserifregular.TTF, "fonts/serif-bold.ttf": liberationserifbold.TTF} {
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	var b strings.Builder
	b.WriteString("title = \"Quillmere in a desk's house style (invented demo)\"\npeople_per_dot = 25\n")
	b.WriteString("[input]\nfile = \"built-in.geojson\"\nid = \"code\"\n[tiles]\nmin_zoom = 10\nmax_zoom = 11\n")
	b.WriteString("[theme]\nground = \"#e3e8e0\"\nfont = \"fonts/serif.ttf\"\nfont_bold = \"fonts/serif-bold.ttf\"\n")
	b.WriteString("text.caution_short = \"Ein Punkt ist keine Wohnung.\"\n")
	for _, g := range demo.Groups {
		fmt.Fprintf(&b, "\n[[category]]\nkey = %q\nlabel = %q\ncolor = %q\nfields = [%q]\n", g.Field, g.Label, g.Color, g.Field)
	}
	m, err := mapfile.Parse(filepath.Join(dir, "map.toml"), []byte(b.String()))
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	m.Out = out
	if _, err := mapjob.Run(context.Background(), m, mapjob.Options{Layer: demo.City(1)}); err != nil {
		t.Fatal(err)
	}
	srv := serve(t, out)
	for _, url := range []string{srv.URL + "/" + tiles.ViewerPage, fileURL(filepath.Join(out, tiles.ViewerPage))} {
		tb := newTab(t, 1280, 800)
		tb.open(url)
		if fam := eval[string](tb, `getComputedStyle(document.body).fontFamily`); !strings.HasPrefix(fam, `"Liberation Serif"`) {
			t.Errorf("%s: body font-family %s; want Liberation Serif first", url, fam)
		}
		if fam := eval[string](tb, `getComputedStyle(document.querySelector(".st-title")).fontFamily`); !strings.HasPrefix(fam, `"Liberation Serif"`) {
			t.Errorf("%s: title font-family %s", url, fam)
		}
		loaded := eval[string](tb, `document.fonts.ready.then(function () {
			var s = [];
			document.fonts.forEach(function (f) { s.push(f.family.replace(/"/g, "") + " " + f.weight + " " + f.status); });
			return s.sort().join("; ");
		})`, chromedp.EvalAwaitPromise)
		if loaded != "Liberation Serif 400 loaded; Liberation Serif 700 loaded" {
			t.Errorf("%s: font faces %q; want both cuts of Liberation Serif loaded", url, loaded)
		}
		if bg := eval[string](tb, `getComputedStyle(document.getElementById("st-map")).backgroundColor`); bg != "rgb(227, 232, 224)" {
			t.Errorf("%s: map ground %s; want the theme's #e3e8e0", url, bg)
		}
		if s := eval[string](tb, `document.querySelector(".st-caution-short").textContent`); s != "Ein Punkt ist keine Wohnung." {
			t.Errorf("%s: short caution %q", url, s)
		}
		for _, msg := range tb.messages() {
			if strings.Contains(msg, "Content Security Policy") {
				t.Errorf("%s: %s", url, msg)
			}
		}
		tb.clean()
	}
	csp, err := os.ReadFile(filepath.Join(out, tiles.ViewerPage))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(csp), "font-src 'self';") {
		t.Errorf("index.html CSP does not allow fonts from the folder only")
	}
}
