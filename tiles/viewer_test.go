package tiles

import (
	"context"
	"encoding/json"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// Colours of the viewer's stylesheet, by custom property name.
func cssColours(t *testing.T) map[string]string {
	t.Helper()
	css, err := viewerFiles.ReadFile("viewer/viewer.css")
	if err != nil {
		t.Fatal(err)
	}
	root := regexp.MustCompile(`(?s):root\s*\{(.*?)\}`).FindSubmatch(css)
	if root == nil {
		t.Fatal("viewer.css has no :root block")
	}
	vars := map[string]string{}
	for _, m := range regexp.MustCompile(`--([a-z-]+):\s*(#[0-9a-fA-F]{6})`).FindAllSubmatch(root[1], -1) {
		vars[string(m[1])] = string(m[2])
	}
	return vars
}

// TestCSSTextContrast computes the WCAG 2.x contrast ratio (W3C WCAG 2.x,
// relative luminance and contrast ratio definitions; checked against the
// worked values in render's tests) of every text colour of the viewer on
// the ground it sits on, and requires 4.5:1 (success criterion 1.4.3, AA).
// Focus rings and control edges are not text: 1.4.11 asks 3:1 of them.
func TestCSSTextContrast(t *testing.T) {
	v := cssColours(t)
	for _, c := range []struct {
		text, ground, where string
		min                 float64
	}{
		{"ink", "card", "legend, buttons, scale bar", 4.5},
		{"muted", "card", "counts, credit, side labels", 4.5},
		{"ink", "tint", "caution box, hovered buttons", 4.5},
		{"muted", "tint", "disabled buttons on hover", 4.5},
		{"on-accent", "accent", "pressed buttons, chosen layer", 4.5},
		{"ink", "paper", "anything over the bare map", 4.5},
		{"focus", "paper", "focus ring on the map (non-text)", 3},
		{"focus", "card", "focus ring on panels (non-text)", 3},
		{"mark", "tint", "caution rule (non-text)", 3},
	} {
		a, err1 := render.ParseHex(v[c.text])
		b, err2 := render.ParseHex(v[c.ground])
		if err1 != nil || err2 != nil {
			t.Fatalf("--%s or --%s missing from viewer.css", c.text, c.ground)
		}
		r := render.Contrast(a, b)
		if r < c.min {
			t.Errorf("%s (--%s %s on --%s %s): contrast %.2f; want at least %.1f", c.where, c.text, v[c.text], c.ground, v[c.ground], r, c.min)
		}
		t.Logf("%-34s %.2f:1", c.where, r)
	}
}

// TestCSSColoursAreNamed makes sure the contrast test sees every colour:
// text and backgrounds in the stylesheet use the named colours only.
func TestCSSColoursAreNamed(t *testing.T) {
	css, _ := viewerFiles.ReadFile("viewer/viewer.css")
	body := regexp.MustCompile(`(?s):root\s*\{.*?\}`).ReplaceAll(css, nil)
	body = regexp.MustCompile(`(?s)/\*.*?\*/`).ReplaceAll(body, nil)
	for _, m := range regexp.MustCompile(`(?m)(?:^|[;{\s])(color|background|background-color)\s*:\s*([^;}]+)`).FindAllSubmatch(body, -1) {
		val := strings.TrimSpace(string(m[2]))
		if strings.HasPrefix(val, "var(--") || val == "transparent" || val == "currentColor" || val == "inherit" {
			continue
		}
		t.Errorf("viewer.css sets %s: %s; use a named colour from :root", m[1], val)
	}
}

func evilMeta() *Metadata {
	return &Metadata{
		Format: "stipple-map/1", Title: `</title><script>alert(1)</script>`, Credit: `<a href="javascript:alert(2)">x</a> & co`,
		Layer: `"><svg onload=alert(3)>` + "\u2028", LayerLabel: `<b onmouseover=alert(4)>`,
		Bounds: [4]float64{1, 2, 3, 4}, Center: [3]float64{2, 3, 5}, MinZoom: 0, MaxZoom: 2, TileSize: 256,
		Tiles: "{z}/{x}/{y}.png", PeoplePerDot: 5, Note: render.DotNote(5), Caution: render.Caution,
		Categories: []Category{
			{Key: "a", Label: `<img src=x onerror=alert(5)>`, Color: "#0072B2", People: 1234},
			{Key: "b", Label: `Ünïcødé & "quotes" 'single'`, Color: `red;background:url(http://x)`, People: 10},
		},
	}
}

func TestWriteViewerEscapes(t *testing.T) {
	dir := t.TempDir()
	m := evilMeta()
	if err := os.MkdirAll(filepath.Join(dir, "1", "0"), 0o755); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(dir, "1", "0", "0.png"), []byte("x"), 0o644)
	if err := WriteViewer(dir, m); err != nil {
		t.Fatal(err)
	}
	for _, page := range []string{ViewerPage, EmbedPage} {
		b, err := os.ReadFile(filepath.Join(dir, page))
		if err != nil {
			t.Fatal(err)
		}
		s := string(b)
		for _, bad := range []string{"<script>alert", "<img src=x", "<svg", "<b onmouseover", `<a href="javascript`, "url(http://x)"} {
			if strings.Contains(s, bad) {
				t.Errorf("%s holds %q unescaped", page, bad)
			}
		}
		for _, good := range []string{"&lt;img src=x onerror=alert(5)&gt;", "&lt;/title&gt;&lt;script&gt;alert(1)&lt;/script&gt;", `data-color="#808080"`, `data-color="#0072b2"`} {
			if !strings.Contains(s, good) {
				t.Errorf("%s lacks %q", page, good)
			}
		}
		// The Content-Security-Policy forbids loads from other origins, and
		// the page has no inline script, style or event handler it would need.
		if !strings.Contains(s, `http-equiv="Content-Security-Policy" content="default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' data:; connect-src 'none';`) {
			t.Errorf("%s: no strict Content-Security-Policy", page)
		}
		if regexp.MustCompile(`<script>|<script [^>]*>[^<]|<style|<[a-zA-Z][^>]*\s(style|on[a-z]+)=`).MatchString(s) {
			t.Errorf("%s has inline script, style or a handler attribute", page)
		}
	}
	js, err := os.ReadFile(filepath.Join(dir, DataScript))
	if err != nil {
		t.Fatal(err)
	}
	s := string(js)
	if strings.ContainsAny(s, "<>&\u2028") {
		t.Errorf("map-data.js holds a raw <, >, & or U+2028: %s", s)
	}
	raw, ok := strings.CutPrefix(s, "window.stippleMap = ")
	raw, ok2 := strings.CutSuffix(raw, ";\n")
	var d viewerData
	if !ok || !ok2 || json.Unmarshal([]byte(raw), &d) != nil {
		t.Fatalf("map-data.js is not one JSON assignment: %s", s)
	}
	if d.Layers[0].Key != m.Layer || d.Sets[0].Zooms[0] != 1 || d.Sets[0].Tiles != "{z}/{x}/{y}.png" {
		t.Errorf("map-data.js decoded as %+v", d)
	}
	idx, err := os.ReadFile(filepath.Join(dir, IndexDir, "0-1.js"))
	if err != nil || string(idx) != `stippleTileIndex(0,1,{"x0":0,"y0":0,"rows":[[0,1]]});`+"\n" {
		t.Errorf("tile index %q, %v", idx, err)
	}
}

// decodeIndex is the reference reading of a tile index: the set of tiles.
func decodeIndex(idx tileIndex) map[[2]int]bool {
	out := map[[2]int]bool{}
	for i, r := range idx.Rows {
		at := idx.X0
		for j := 0; j+1 < len(r); j += 2 {
			at += r[j]
			for k := 0; k < r[j+1]; k++ {
				out[[2]int{at + k, idx.Y0 + i}] = true
			}
			at += r[j+1]
		}
	}
	return out
}

func TestIndexRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for trial := 0; trial < 200; trial++ {
		want := map[[2]int]bool{}
		rows := map[int][]int{}
		n := 1 + rng.IntN(60)
		for i := 0; i < n; i++ {
			x, y := 100+rng.IntN(12), 40+rng.IntN(6)
			if trial%3 == 0 {
				x = 100 + rng.IntN(300) // sparse
			}
			want[[2]int{x, y}] = true
			rows[y] = append(rows[y], x, x) // duplicates must not matter
		}
		got := decodeIndex(encodeIndex(rows))
		if len(got) != len(want) {
			t.Fatalf("trial %d: %d tiles back for %d", trial, len(got), len(want))
		}
		for k := range want {
			if !got[k] {
				t.Fatalf("trial %d: tile %v lost", trial, k)
			}
		}
	}
}

func TestScanZoomReadsOnlyTiles(t *testing.T) {
	dir := t.TempDir()
	for _, p := range []string{"3/2/5.png", "3/2/6.png", "3/4/5.png", "3/7/7.png", // tiles
		"3/2/5.png.tmp", "3/2/x.png", "3/9/1.png", "3/-1/2.png", "3/notes/1.png", "3/3/8.png", "3/3/2.jpg"} { // not tiles of zoom 3
		os.MkdirAll(filepath.Join(dir, filepath.Dir(p)), 0o755)
		os.WriteFile(filepath.Join(dir, p), []byte("x"), 0o644)
	}
	idx, ok, err := scanZoom(context.Background(), sink.NewDir(dir), "3/", 3, ".png")
	if err != nil || !ok {
		t.Fatal(ok, err)
	}
	got := decodeIndex(idx)
	want := map[[2]int]bool{{2, 5}: true, {2, 6}: true, {4, 5}: true, {7, 7}: true}
	if len(got) != len(want) {
		t.Errorf("found %v; want %v", got, want)
	}
	for k := range want {
		if !got[k] {
			t.Errorf("tile %v missing from %v", k, got)
		}
	}
	if _, ok, err := scanZoom(context.Background(), sink.NewDir(dir), "4/", 4, ".png"); ok || err != nil {
		t.Errorf("a missing zoom folder: ok %v err %v", ok, err)
	}
}

func TestLayerPrefixAndTemplate(t *testing.T) {
	for _, c := range []struct{ in, want, err string }{
		{"", "", ""}, {".", "", ""}, {"2010", "2010/", ""}, {"a b/c#d", "a%20b/c%23d/", ""}, {"x/../y", "y/", ""},
		{"../up", "", "outside"}, {"/abs", "", "relative"}, {`a\b`, "", "relative"}, {"..", "", "outside"},
	} {
		got, err := layerPrefix(c.in)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("layerPrefix(%q): err %v; want one saying %q", c.in, err, c.err)
			}
			continue
		}
		if err != nil || got != c.want {
			t.Errorf("layerPrefix(%q) = %q, %v; want %q", c.in, got, err, c.want)
		}
	}
	for _, c := range []struct{ in, prefix, ext string }{
		{"{z}/{x}/{y}.png", "", ".png"}, {"outline/{z}/{x}/{y}.png", "outline/", ".png"}, {"t/{z}/{x}/{y}@2x.png", "t/", "@2x.png"},
		{"{x}/{y}/{z}.png", "", ""}, {"../{z}/{x}/{y}.png", "", ""}, {"{z}/{x}/{y}/a.png", "", ""}, {"/abs/{z}/{x}/{y}.png", "", ""},
	} {
		p, e, err := splitTemplate(c.in)
		if c.ext == "" {
			if err == nil {
				t.Errorf("splitTemplate(%q) took it", c.in)
			}
			continue
		}
		if err != nil || p != c.prefix || e != c.ext {
			t.Errorf("splitTemplate(%q) = %q, %q, %v", c.in, p, e, err)
		}
	}
}

func TestWriteViewerLayersRefuses(t *testing.T) {
	dir := t.TempDir()
	m := evilMeta()
	n := *m
	for _, c := range []struct {
		name   string
		layers []ViewerLayer
		want   string
	}{
		{"none", nil, "no layers"},
		{"nil", []ViewerLayer{{}}, "no metadata"},
		{"dup", []ViewerLayer{{Meta: m}, {Meta: &n}}, "also another layer's"},
		{"outside", []ViewerLayer{{Dir: "../x", Meta: m}}, "outside"},
	} {
		err := WriteViewerLayers(dir, c.layers)
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "tiles: ") {
			t.Errorf("%s: %v; want an error saying %q", c.name, err, c.want)
		}
	}
}

func TestNotDrawnText(t *testing.T) {
	m := &Metadata{}
	if s := NotDrawnText(m); s != "" {
		t.Errorf("everyone drawn: %q", s)
	}
	m.NotDrawn = NotDrawn{People: 1250, Dots: 125, RowsWithoutArea: 40}
	want := "1,250 people (125 dots) are not drawn; map.json lists the areas and why. 40 people are in count rows that match no area and are not on the map."
	if s := NotDrawnText(m); s != want {
		t.Errorf("NotDrawnText = %q\nwant %q", s, want)
	}
}

func TestViewerKeysAreUniqueDefaults(t *testing.T) {
	// Two layers with no keys get "1" and "2", in their sub-folders.
	dir := t.TempDir()
	a, b := evilMeta(), evilMeta()
	a.Layer, b.Layer = "", ""
	if err := WriteViewerLayers(dir, []ViewerLayer{{Dir: "x", Meta: a}, {Dir: "y z", Meta: b}}); err != nil {
		t.Fatal(err)
	}
	js, _ := os.ReadFile(filepath.Join(dir, DataScript))
	var d viewerData
	json.Unmarshal([]byte(strings.TrimSuffix(strings.TrimPrefix(string(js), "window.stippleMap = "), ";\n")), &d)
	keys := []string{d.Layers[0].Key, d.Layers[1].Key}
	if !slices.Equal(keys, []string{"1", "2"}) || d.Sets[1].Tiles != "y%20z/{z}/{x}/{y}.png" {
		t.Errorf("keys %q, second tiles %q", keys, d.Sets[1].Tiles)
	}
	page, _ := os.ReadFile(filepath.Join(dir, ViewerPage))
	if !strings.Contains(string(page), `id="st-compare"`) {
		t.Error("two layers but no compare button")
	}
}
