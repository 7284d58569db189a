package viewertest

import (
	"context"
	"fmt"
	"html"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"sort"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/demo"
	"github.com/stipple-maps/stipple/render/theme"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// frenchWords translates every viewer word of [theme.text] into French.
var frenchWords = map[string]string{
	"viewer_language":     "fr",
	"viewer_map_label":    "{title}. Carte par points : faites glisser ou utilisez les flèches pour vous déplacer, + et - pour zoomer.",
	"viewer_still_alt":    "{title} : une image fixe de toute la carte avec sa légende ; la carte zoomable demande JavaScript.",
	"viewer_controls":     "Vue de la carte",
	"viewer_zoom_in":      "Zoom avant",
	"viewer_zoom_in_tip":  "Zoom avant (+)",
	"viewer_zoom_out":     "Zoom arrière",
	"viewer_zoom_out_tip": "Zoom arrière (-)",
	"viewer_fit":          "Tout",
	"viewer_fit_tip":      "Montrer toute la carte (0)",
	"viewer_areas":        "Zones",
	"viewer_areas_tip":    "Tracer les limites des zones de comptage",
	"viewer_hide_key":     "Masquer la légende",
	"viewer_show_key":     "Afficher la légende",
	"viewer_share":        "{share} du total",
	"viewer_map_shown":    "Carte affichée",
	"viewer_compare":      "Comparer",
	"viewer_right_shows":  "À droite",
	"viewer_divider":      "Séparateur entre les deux cartes",
	"viewer_left_side":    "À gauche du séparateur",
	"viewer_right_side":   "À droite du séparateur",
}

const wordsTitle = "Quillmere en deux comptages (démo inventée)"

// viewerKeys lists the TOML keys of theme.Text that the viewer uses.
func viewerKeys() []string {
	var keys []string
	typ := reflect.TypeOf(theme.Text{})
	for i := range typ.NumField() {
		if k := typ.Field(i).Tag.Get("toml"); strings.HasPrefix(k, "viewer_") {
			keys = append(keys, k)
		}
	}
	return keys
}

// textOf is the text of key in tx.
func textOf(tx theme.Text, key string) string {
	v := reflect.ValueOf(tx)
	for i := range v.NumField() {
		if v.Type().Field(i).Tag.Get("toml") == key {
			return v.Field(i).String()
		}
	}
	panic("no key " + key)
}

// englishPatterns matches, whole, each English viewer word of
// theme.DefaultText, its placeholders standing for any text (the title for
// {title}). The language tag is left out: "en" is no word on screen.
func englishPatterns(title string) map[string]*regexp.Regexp {
	out := map[string]*regexp.Regexp{}
	for _, k := range viewerKeys() {
		if k == "viewer_language" {
			continue
		}
		p := regexp.QuoteMeta(textOf(theme.DefaultText, k))
		p = strings.ReplaceAll(p, `\{title\}`, regexp.QuoteMeta(title))
		p = strings.ReplaceAll(p, `\{share\}`, `.*`)
		out[k] = regexp.MustCompile(`^` + p + `$`)
	}
	return out
}

// TestFrenchThemeTranslatesTheViewer renders two layers of the invented
// demo city from a map file whose [theme.text] translates every viewer
// word into French, writes one viewer over both, and opens it in
// Chromium: the buttons' text, tooltips and aria-labels, the page's lang
// (HTML Living Standard, "The lang and xml:lang attributes"), the fold
// button after folding and the sides' headings in compare mode are the
// French words, and no text node or aria-label, title or alt attribute of
// the page is an English default, in any of those states.
func TestFrenchThemeTranslatesTheViewer(t *testing.T) {
	dir := filepath.Join(tmpRoot, "words")
	var themeText strings.Builder
	themeText.WriteString("[theme.text]\n")
	for _, k := range viewerKeys() {
		w, ok := frenchWords[k]
		if !ok {
			t.Fatalf("no French word for %s", k)
		}
		fmt.Fprintf(&themeText, "%s = %q\n", k, w)
	}
	city := demo.City(1)
	var polys []orb.MultiPolygon
	for _, f := range city.Features {
		polys = append(polys, f.Geometry)
	}
	var vl []tiles.ViewerLayer
	for _, l := range []struct {
		sub    string
		perDot int
	}{{"dix", 10}, {"quart", 25}} {
		var b strings.Builder
		fmt.Fprintf(&b, "title = %q\npeople_per_dot = %d\nseed = 1\n", wordsTitle, l.perDot)
		b.WriteString("[input]\nfile = \"built-in.geojson\"\nid = \"code\"\n[tiles]\nmin_zoom = 10\nmax_zoom = 11\n")
		for _, g := range demo.Groups {
			fmt.Fprintf(&b, "\n[[category]]\nkey = %q\nlabel = %q\ncolor = %q\nfields = [%q]\n", g.Field, g.Label, g.Color, g.Field)
		}
		b.WriteString("\n[theme]\n" + themeText.String())
		m, err := mapfile.Parse(filepath.Join(dir, l.sub+".toml"), []byte(b.String()))
		if err != nil {
			t.Fatal(err)
		}
		m.Out = filepath.Join(dir, l.sub)
		sum, err := mapjob.Run(context.Background(), m, mapjob.Options{Layer: city})
		if err != nil {
			t.Fatal(err)
		}
		if _, err := tiles.WriteOutlines(context.Background(), polys, tiles.OutlineOptions{Dir: m.Out, MinZoom: 11, MaxZoom: 11, TileSize: 256}); err != nil {
			t.Fatal(err)
		}
		md := sum.Metadata
		md.Layer, md.LayerLabel, md.Outline = l.sub, fmt.Sprintf("1 point = %d", l.perDot), tiles.OutlineTemplate
		vl = append(vl, tiles.ViewerLayer{Dir: l.sub, Meta: md})
	}
	if err := tiles.WriteViewerLayers(dir, vl); err != nil {
		t.Fatal(err)
	}

	srv := serve(t, dir)
	tb := newTab(t, 1280, 800)
	tb.open(srv.URL + "/" + tiles.ViewerPage)
	fr := func(k string) string { return frenchWords[k] }
	type attr struct{ sel, what, want string }
	checks := []attr{
		{"html", "lang", fr("viewer_language")},
		{"#st-map", "aria-label", strings.ReplaceAll(fr("viewer_map_label"), "{title}", wordsTitle)},
		{".st-bar", "aria-label", fr("viewer_controls")},
		{"#st-in", "aria-label", fr("viewer_zoom_in")},
		{"#st-in", "title", fr("viewer_zoom_in_tip")},
		{"#st-out", "aria-label", fr("viewer_zoom_out")},
		{"#st-out", "title", fr("viewer_zoom_out_tip")},
		{"#st-fit", "text", fr("viewer_fit")},
		{"#st-fit", "title", fr("viewer_fit_tip")},
		{"#st-outline", "text", fr("viewer_areas")},
		{"#st-outline", "title", fr("viewer_areas_tip")},
		{"#st-fold", "text", fr("viewer_hide_key")},
		{".st-layers legend", "text", fr("viewer_map_shown")},
		{"#st-compare", "text", fr("viewer_compare")},
		{"#st-right-wrap .st-vh", "text", fr("viewer_right_shows")},
		{"#st-divider", "aria-label", fr("viewer_divider")},
	}
	read := func(a attr) string {
		js := fmt.Sprintf(`document.querySelector(%q).getAttribute(%q)`, a.sel, a.what)
		if a.what == "text" {
			js = fmt.Sprintf(`document.querySelector(%q).textContent`, a.sel)
		}
		return eval[string](tb, js)
	}
	for _, c := range checks {
		if got := read(c); got != c.want {
			t.Errorf("%s %s = %q; want %q", c.sel, c.what, got, c.want)
		}
	}
	// A legend count's tooltip: the share, one decimal, then the words.
	share := regexp.MustCompile(`^\d{1,3}\.\d% du total$`)
	for _, s := range eval[[]string](tb, `Array.from(document.querySelectorAll(".st-count"), function (e) { return e.title; })`) {
		if !share.MatchString(s) {
			t.Errorf("count tooltip %q; want %s", s, share)
		}
	}

	english := englishPatterns(wordsTitle)
	noEnglish := func(state string) {
		t.Helper()
		words := eval[[]string](tb, `(function () {
			var out = [], w = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT), n;
			while ((n = w.nextNode())) {
				var p = n.parentNode.nodeName, s = n.nodeValue.trim();
				if (s && p !== "SCRIPT" && p !== "NOSCRIPT") out.push(s);
			}
			document.querySelectorAll("[aria-label], [title], [alt]").forEach(function (e) {
				["aria-label", "title", "alt"].forEach(function (a) { if (e.hasAttribute(a)) out.push(e.getAttribute(a)); });
			});
			return out;
		})()`)
		if len(words) < len(checks) {
			t.Fatalf("%s: only %d words on the page: %q", state, len(words), words)
		}
		var keys []string
		for k := range english {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, w := range words {
			for _, k := range keys {
				if english[k].MatchString(w) {
					t.Errorf("%s: %q is the English %s", state, w, k)
				}
			}
		}
	}
	noEnglish("at open")

	// Folding the key swaps the button's word for the theme's.
	tb.do(chromedp.Click(chromedp.CSS("#st-fold")))
	if got := read(attr{"#st-fold", "text", ""}); got != fr("viewer_show_key") {
		t.Errorf("folded key: button %q; want %q", got, fr("viewer_show_key"))
	}
	if got := read(attr{"#st-fold", "aria-expanded", ""}); got != "false" {
		t.Errorf("folded key: aria-expanded %q", got)
	}
	noEnglish("key folded")
	tb.do(chromedp.Click(chromedp.CSS("#st-fold")))
	if got := read(attr{"#st-fold", "text", ""}); got != fr("viewer_hide_key") {
		t.Errorf("key shown again: button %q; want %q", got, fr("viewer_hide_key"))
	}

	// Compare mode heads each shown legend with its side.
	tb.do(chromedp.Click(chromedp.CSS("#st-compare")))
	tb.waitTiles()
	sides := eval[[]string](tb, `Array.from(document.querySelectorAll(".st-legend:not([hidden]) .st-side:not([hidden])"), function (e) { return e.textContent; })`)
	if len(sides) != 2 || !(sides[0] == fr("viewer_left_side") && sides[1] == fr("viewer_right_side")) {
		t.Errorf("compare mode: side headings %q; want %q then %q", sides, fr("viewer_left_side"), fr("viewer_right_side"))
	}
	if got := read(attr{"#st-divider", "aria-label", ""}); got != fr("viewer_divider") {
		t.Errorf("divider aria-label %q", got)
	}
	noEnglish("comparing")
	tb.clean()

	// The embed of one layer: its still's alt text, in the page source
	// (the browser does not parse <noscript> when scripts run).
	one := filepath.Join(dir, "one")
	if err := os.MkdirAll(one, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := tiles.WriteViewerLayers(one, []tiles.ViewerLayer{{Dir: "", Meta: stillMeta(vl[0].Meta)}}); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(one, tiles.EmbedPage))
	if err != nil {
		t.Fatal(err)
	}
	wantAlt := strings.ReplaceAll(fr("viewer_still_alt"), "{title}", wordsTitle)
	if got := attrOf(t, string(b), "img", "alt"); got != wantAlt {
		t.Errorf("embed still alt %q; want %q", got, wantAlt)
	}
}

// stillMeta is a copy of m for a viewer of its own in a folder without
// tiles.
func stillMeta(m *tiles.Metadata) *tiles.Metadata {
	c := *m
	c.Layer, c.LayerLabel, c.Outline = "", "", ""
	return &c
}

// attrOf is attribute name of the first element that matches tag (an
// element name, or "#id"), unescaped; "" when absent.
func attrOf(t *testing.T, page, tag, name string) string {
	t.Helper()
	var re *regexp.Regexp
	if id, ok := strings.CutPrefix(tag, "#"); ok {
		re = regexp.MustCompile(`<[a-z]+\b[^>]*\bid="` + regexp.QuoteMeta(id) + `"[^>]*>`)
	} else {
		re = regexp.MustCompile(`<` + tag + `\b[^>]*>`)
	}
	el := re.FindString(page)
	if el == "" {
		t.Fatalf("no %s element in the page", tag)
	}
	m := regexp.MustCompile(`\s` + regexp.QuoteMeta(name) + `="([^"]*)"`).FindStringSubmatch(el)
	if m == nil {
		return ""
	}
	return html.UnescapeString(m[1])
}

// textOfElement is the text right inside the element with id, unescaped.
func textOfElement(t *testing.T, page, id string) string {
	t.Helper()
	m := regexp.MustCompile(`\bid="` + regexp.QuoteMeta(id) + `"[^>]*>([^<]*)<`).FindStringSubmatch(page)
	if m == nil {
		t.Fatalf("no element %s in the page", id)
	}
	return html.UnescapeString(m[1])
}

// TestDefaultViewerWordsAreEnglish writes, without a theme, a viewer over
// two maps (stand-in tiles and outlines) and one over a single map, and
// reads the pages: every interface word is the English the viewer had
// before the words moved into the theme (the page of commit 5acd597), so
// a map without [theme.text] shows the same page as before.
func TestDefaultViewerWordsAreEnglish(t *testing.T) {
	dir := filepath.Join(tmpRoot, "words-default")
	const title = "An invented town"
	meta := func(key string) *tiles.Metadata {
		return &tiles.Metadata{
			Title: title, Layer: key, LayerLabel: "Count of " + key,
			Bounds: [4]float64{4.5, 51.5, 4.6, 51.6}, Center: [3]float64{4.55, 51.55, 12},
			MinZoom: 12, MaxZoom: 12, TileSize: 256, Tiles: "{z}/{x}/{y}.png", Outline: tiles.OutlineTemplate, PeoplePerDot: 5,
			Categories: []tiles.Category{{Key: "a", Label: "Group A", Color: "#0072B2", People: 300}, {Key: "b", Label: "Group B", Color: "#D55E00", People: 100}},
		}
	}
	var layers []tiles.ViewerLayer
	for _, key := range []string{"2031", "2041"} {
		// Stand-ins for the tiles and outlines a render writes first.
		for _, p := range []string{"12/2100/1400.png", tiles.OutlineDir + "/12/2100/1400.png"} {
			f := filepath.Join(dir, key, filepath.FromSlash(p))
			if err := os.MkdirAll(filepath.Dir(f), 0o755); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(f, nil, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		layers = append(layers, tiles.ViewerLayer{Dir: key, Meta: meta(key)})
	}
	if err := tiles.WriteViewerLayers(dir, layers); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, tiles.ViewerPage))
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	for _, c := range []struct{ tag, what, want string }{
		{"html", "lang", "en"},
		{"#st-map", "aria-label", title + ". Dot-density map: drag or use the arrow keys to move, + and - to zoom."},
		{"#st-divider", "aria-label", "Divider between the two maps"},
		{"#st-out", "aria-label", "Zoom out"},
		{"#st-out", "title", "Zoom out (-)"},
		{"#st-in", "aria-label", "Zoom in"},
		{"#st-in", "title", "Zoom in (+)"},
		{"#st-fit", "title", "Show the whole map (0)"},
		{"#st-fit", "text", "Fit"},
		{"#st-outline", "title", "Draw the boundaries of the counting areas"},
		{"#st-outline", "text", "Areas"},
		{"#st-fold", "text", "Hide key"},
		{"#st-fold", "data-hide", "Hide key"},
		{"#st-fold", "data-show", "Show key"},
		{"#st-compare", "text", "Compare"},
		{".st-side", "data-left", "Left of the divider"},
		{".st-side", "data-right", "Right of the divider"},
		{".st-count", "title", "75.0% of all"},
	} {
		var got string
		switch {
		case c.what == "text":
			got = textOfElement(t, page, strings.TrimPrefix(c.tag, "#"))
		case strings.HasPrefix(c.tag, "."):
			m := regexp.MustCompile(`<[a-z]+ class="` + regexp.QuoteMeta(c.tag[1:]) + `"[^>]*>`).FindString(page)
			got = attrOf(t, m, "[a-z]+", c.what)
		default:
			got = attrOf(t, page, c.tag, c.what)
		}
		if got != c.want {
			t.Errorf("%s %s = %q; want %q", c.tag, c.what, got, c.want)
		}
	}
	for _, s := range []string{`<legend class="st-vh">Map shown</legend>`, `<span class="st-vh">Right side shows</span>`, `aria-label="Map view"`} {
		if !strings.Contains(page, s) {
			t.Errorf("index.html lacks %s", s)
		}
	}

	one := filepath.Join(dir, "one")
	if err := os.MkdirAll(one, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := tiles.WriteViewer(one, meta("")); err != nil {
		t.Fatal(err)
	}
	b, err = os.ReadFile(filepath.Join(one, tiles.EmbedPage))
	if err != nil {
		t.Fatal(err)
	}
	if got, want := attrOf(t, string(b), "img", "alt"), title+": a still of the whole map with its key; the zoomable map needs JavaScript."; got != want {
		t.Errorf("embed still alt %q; want %q", got, want)
	}
}
