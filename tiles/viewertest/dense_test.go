package viewertest

import (
	"fmt"
	"image"
	"net/http"
	"net/http/httptest"
	"path/filepath"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
)

// drawnTile is one dot tile on the page: its URL, its own width in pixels
// and its width on screen in CSS pixels.
type drawnTile struct {
	Src     string  `json:"src"`
	Natural int     `json:"natural"`
	CSS     float64 `json:"css"`
}

func drawnTiles(tb *tab) []drawnTile {
	tb.t.Helper()
	return eval[[]drawnTile](tb, `Array.prototype.map.call(document.querySelectorAll(".st-level img"), function (i) {
		return { src: i.currentSrc || i.src, natural: i.naturalWidth, css: i.getBoundingClientRect().width };
	})`)
}

// checkDrawn wants every tile in view drawn 256 CSS pixels wide, from the
// @2x file (512 px) when dense and from the 1× file (256 px) otherwise.
func checkDrawn(t *testing.T, what string, tb *tab, st viewState, dense bool) {
	t.Helper()
	ds := drawnTiles(tb)
	if len(ds) < st.Loaded || st.Loaded == 0 {
		t.Fatalf("%s: %d tiles on the page for %d loaded", what, len(ds), st.Loaded)
	}
	want := 256
	if dense {
		want = 512
	}
	for _, d := range ds {
		if strings.HasSuffix(d.Src, "@2x.png") != dense || d.Natural != want || d.CSS < 255.5 || d.CSS > 256.5 {
			t.Errorf("%s: tile %s is %d px, %.2f CSS px wide; want the %s file, %d px, 256 CSS px", what, d.Src, d.Natural, d.CSS,
				map[bool]string{true: "@2x", false: "1×"}[dense], want)
		}
	}
}

// TestDenseTilesOnDenseScreens opens a map rendered with @2x tiles at
// device scale 1 and 2: at 2 the viewer asks for the @2x tiles only and
// draws them at the 1× size; at 1 it asks for the 1× tiles only.
func TestDenseTilesOnDenseScreens(t *testing.T) {
	f := demoDense(t)
	if f.Layers[0].Meta.Tiles2x != tiles.Tiles2xTemplate {
		t.Fatalf("map.json of a render with HiDPI: tiles_2x %q", f.Layers[0].Meta.Tiles2x)
	}
	srv := serve(t, f.Dir)
	for _, scale := range []float64{1, 2} {
		t.Run(fmt.Sprintf("scale=%v", scale), func(t *testing.T) {
			dense := scale > 1
			tb := newTab(t, 1000, 700, chromedp.EmulateScale(scale))
			st := tb.open(srv.URL + "/index.html" + demoView)
			if dpr := eval[float64](tb, `window.devicePixelRatio`); dpr != scale {
				t.Fatalf("devicePixelRatio %v; want %v", dpr, scale)
			}
			if st.TileZoom != 11 || st.Loaded != st.Tiles {
				t.Fatalf("state: %+v", st)
			}
			n1, n2 := 0, 0
			for u, code := range tb.tileResponses() {
				if code != 200 {
					t.Errorf("tile %s: HTTP %d", u, code)
				}
				if strings.HasSuffix(u, "@2x.png") {
					n2++
				} else {
					n1++
				}
			}
			if dense && (n2 < st.Loaded || n1 != 0) || !dense && (n1 < st.Loaded || n2 != 0) {
				t.Errorf("scale %v: %d 1× and %d @2x tile responses for %d tiles", scale, n1, n2, st.Loaded)
			}
			checkDrawn(t, "served", tb, st, dense)
			tb.clean()

			// The same from file://, where there are no responses to count.
			fb := newTab(t, 1000, 700, chromedp.EmulateScale(scale))
			fst := fb.open(fileURL(filepath.Join(f.Dir, tiles.ViewerPage)) + demoView)
			checkDrawn(t, "file://", fb, fst, dense)
			fb.clean()
		})
	}

	// A map without @2x tiles is drawn from the 1× tiles at scale 2 too.
	plain := demoTwo(t)
	tb := newTab(t, 1000, 700, chromedp.EmulateScale(2))
	st := tb.open(fileURL(filepath.Join(plain.Dir, tiles.ViewerPage)) + demoView)
	checkDrawn(t, "no @2x tiles", tb, st, false)
	tb.clean()
}

// TestDenseTileFallsBackTo1x serves the @2x map with every @2x tile of
// zoom 11 missing: at device scale 2 the viewer asks for each, gets 404,
// and draws the 1× tile in its place.
func TestDenseTileFallsBackTo1x(t *testing.T) {
	f := demoDense(t)
	files := http.FileServer(http.Dir(f.Dir))
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if strings.HasPrefix(r.URL.Path, "/11/") && strings.HasSuffix(r.URL.Path, "@2x.png") {
			http.NotFound(w, r)
			return
		}
		files.ServeHTTP(w, r)
	}))
	t.Cleanup(srv.Close)
	tb := newTab(t, 1000, 700, chromedp.EmulateScale(2))
	st := tb.open(srv.URL + "/index.html" + demoView)
	if st.TileZoom != 11 || st.Loaded != st.Tiles {
		t.Fatalf("state: %+v", st)
	}
	missing, plain := 0, 0
	for u, code := range tb.tileResponses() {
		switch {
		case strings.HasSuffix(u, "@2x.png") && code == 404:
			missing++
		case !strings.HasSuffix(u, "@2x.png") && code == 200:
			plain++
		default:
			t.Errorf("tile %s: HTTP %d", u, code)
		}
	}
	if missing < st.Loaded || plain < st.Loaded {
		t.Errorf("%d missing @2x tiles and %d 1× ones for %d tiles", missing, plain, st.Loaded)
	}
	checkDrawn(t, "fallback", tb, st, false)
	tb.mu.Lock()
	defer tb.mu.Unlock()
	for _, m := range tb.console {
		if m.Type == chromedp.ConsoleException {
			t.Errorf("exception: %s", m.String())
		}
	}
}

// TestDenseDotSizeOnScreen opens the one-dot map with @2x tiles (a dot 30
// px wide at zoom 14) at device scale 2: the dot is drawn from the @2x tile
// and is 30 CSS pixels (60 device pixels) wide, not twice that.
func TestDenseDotSizeOnScreen(t *testing.T) {
	f := oneDotDense(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800, chromedp.EmulateScale(2))
	st := tb.open(srv.URL + fmt.Sprintf("/index.html#z=14.00&lat=%.5f&lon=%.5f", dotAt[1], dotAt[0]))
	checkDrawn(t, "one dot", tb, st, true)
	img := tb.screenshot(2560)
	want, _ := render.ParseHex(dotColor)
	paper, _ := render.ParseHex(render.DefaultGround)
	// Device pixels: the dot's centre is at (1280, 800), its radius 30.
	for _, p := range []image.Point{{1280, 800}, {1280 - 25, 800}, {1280 + 25, 800}, {1280, 800 - 25}, {1280, 800 + 25}} {
		if !near(img, p, want) {
			t.Errorf("pixel %v is %v; want the category colour %s", p, img.At(p.X, p.Y), dotColor)
		}
	}
	for _, p := range []image.Point{{1280 - 36, 800}, {1280 + 36, 800}, {1280, 800 - 36}, {1280, 800 + 36}} {
		if !near(img, p, paper) {
			t.Errorf("pixel %v is %v; want the map ground (a dot twice too big reaches it)", p, img.At(p.X, p.Y))
		}
	}
	tb.clean()
}
