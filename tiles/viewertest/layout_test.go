package viewertest

import (
	"fmt"
	"math"
	"path/filepath"
	"testing"

	"github.com/chromedp/chromedp"
	"github.com/stipple-maps/stipple/tiles"
)

// rect is a bounding box in CSS pixels, from getBoundingClientRect.
type rect struct {
	What                     string
	Left, Top, Right, Bottom float64
}

func (r rect) overlaps(o rect) bool {
	return r.Left < o.Right && o.Left < r.Right && r.Top < o.Bottom && o.Top < r.Bottom
}

func (r rect) inside(o rect) bool {
	return r.Left >= o.Left-0.5 && r.Right <= o.Right+0.5 && r.Top >= o.Top-0.5 && r.Bottom <= o.Bottom+0.5
}

// pageBoxes is what the layout tests read from a page: the key, each
// control group, each swatch and label of the shown legends, the short
// caution, the map and the viewport.
type pageBoxes struct {
	Key, Map, View rect
	Folded         bool
	Controls       []rect
	Swatches       []rect
	Labels         []rect
	Short          rect
}

func readBoxes(tb *tab) pageBoxes {
	tb.t.Helper()
	return eval[pageBoxes](tb, `(function () {
		function box(e, what) { var r = e.getBoundingClientRect(); return { what: what || e.id || e.className, left: r.left, top: r.top, right: r.right, bottom: r.bottom }; }
		var q = function (s) { return Array.prototype.slice.call(document.querySelectorAll(s)); };
		var shown = ".st-legend:not([hidden]) ";
		return {
			key: box(document.getElementById("st-key")),
			map: box(document.getElementById("st-map")),
			view: { what: "viewport", left: 0, top: 0, right: innerWidth, bottom: innerHeight },
			folded: document.getElementById("st-key").classList.contains("st-folded"),
			controls: q(".st-bar, .st-tools, .st-scale").map(function (e) { return box(e); }),
			swatches: q(shown + ".st-swatch").map(function (e) { return box(e, e.nextElementSibling.textContent); }),
			labels: q(shown + ".st-label").map(function (e) { return box(e, e.textContent); }),
			short: box(document.querySelector(".st-caution-short"))
		};
	})()`)
}

// TestOpeningViewAndKeyLayout opens the demo with no view in the URL at
// the window sizes of issue 15 (and 16:9 embeds) and checks the layout a
// reader meets: the map's bounds (map.json) fill the free part of the map
// (≥ 80% of its width or height) and lie inside it; no control overlaps
// the key; on a phone and in an embed the key opens folded and still shows
// every swatch and label inside the viewport, with the short caution; an
// embed's key takes at most a quarter of its height.
func TestOpeningViewAndKeyLayout(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	b := f.Layers[0].Meta.Bounds
	for _, c := range []struct {
		page  string
		w, h  int64
		scale float64
	}{
		{"index.html", 1440, 900, 1}, {"index.html", 1280, 800, 1}, {"index.html", 390, 844, 1},
		{"index.html", 390, 844, 2}, {"index.html", 1280, 800, 2},
		{"embed.html", 640, 360, 1}, {"embed.html", 960, 540, 1}, {"embed.html", 1280, 720, 1},
	} {
		t.Run(fmt.Sprintf("%s-%dx%d@%v", c.page, c.w, c.h, c.scale), func(t *testing.T) {
			tb := newTab(t, c.w, c.h, chromedp.EmulateScale(c.scale))
			st := tb.open(srv.URL + "/" + c.page)
			bx := readBoxes(tb)
			narrow := c.w < 720 || c.page == "embed.html"
			if bx.Folded != narrow {
				t.Errorf("key folded at open: %v; want %v", bx.Folded, narrow)
			}
			// The free part of the map: right of the key where the key
			// lies over the map.
			free := bx.Map
			if bx.Key.overlaps(bx.Map) {
				free.Left = bx.Key.Right
			}
			k := 256 * math.Exp2(st.Z)
			mx, my := (bx.Map.Left+bx.Map.Right)/2, (bx.Map.Top+bx.Map.Bottom)/2
			bb := rect{What: "map bounds",
				Left: mx + (lonX(b[0])-lonX(st.Lon))*k, Right: mx + (lonX(b[2])-lonX(st.Lon))*k,
				Top: my + (latY(b[3])-latY(st.Lat))*k, Bottom: my + (latY(b[1])-latY(st.Lat))*k}
			fw := (bb.Right - bb.Left) / (free.Right - free.Left)
			fh := (bb.Bottom - bb.Top) / (free.Bottom - free.Top)
			if !bb.inside(free) || (fw < 0.8 && fh < 0.8) {
				t.Errorf("opening view z %.2f: map bounds %+v span %.0f%% × %.0f%% of the free map %+v; want inside it and ≥ 80%% one way",
					st.Z, bb, 100*fw, 100*fh, free)
			}
			for _, ctl := range bx.Controls {
				if ctl.overlaps(bx.Key) {
					t.Errorf("control %+v overlaps the key %+v", ctl, bx.Key)
				}
				if !ctl.inside(bx.View) {
					t.Errorf("control %+v is not all in the viewport", ctl)
				}
			}
			if len(bx.Swatches) != 5 || len(bx.Labels) != 5 {
				t.Fatalf("%d swatches and %d labels in the shown legend; the demo has 5 groups", len(bx.Swatches), len(bx.Labels))
			}
			for _, r := range append(bx.Swatches, bx.Labels...) {
				if r.Right-r.Left < 1 || r.Bottom-r.Top < 1 || !r.inside(bx.View) || !r.inside(bx.Key) {
					t.Errorf("key entry %+v: want non-zero size, inside the key and the viewport", r)
				}
			}
			if bx.Folded && (bx.Short.Right-bx.Short.Left < 1 || !bx.Short.inside(bx.View)) {
				t.Errorf("folded key: the short caution %+v is not in view", bx.Short)
			}
			share := (bx.Key.Bottom - bx.Key.Top) / (bx.View.Bottom - bx.View.Top)
			if c.page == "embed.html" && share > 0.25 {
				t.Errorf("embed: the key takes %.0f%% of the height; want at most 25%%", 100*share)
			}
			if c.w < 720 && share > 0.25 {
				t.Errorf("phone: the key takes %.0f%% of the height at open; want at most 25%%", 100*share)
			}
			// Shown, the key and the controls still keep apart.
			tb.do(chromedp.Click(chromedp.CSS("#st-fold")))
			tb.waitTiles()
			bx = readBoxes(tb)
			for _, ctl := range bx.Controls {
				if ctl.overlaps(bx.Key) {
					t.Errorf("key %s: control %+v overlaps it (%+v)", map[bool]string{true: "folded", false: "shown"}[bx.Folded], ctl, bx.Key)
				}
			}
			if bx.Folded && (bx.Short.Right-bx.Short.Left < 1 || !bx.Short.inside(bx.View)) {
				t.Errorf("folded key: the short caution %+v is not in view", bx.Short)
			}
			tb.clean()
		})
	}
}

// TestOpensCentredAcrossTheAntimeridian opens the block map, whose
// map.json bounds cross 180° (RFC 7946 §5.2: west 179.95 > east −179.95),
// and checks the view the viewer reports: centred within the extent (not
// over the other side of the world), and a hash naming the extent's centre
// from the west (−180°) or the east (180°) opens on the same map.
func TestOpensCentredAcrossTheAntimeridian(t *testing.T) {
	f := block(t)
	srv := serve(t, f.Dir)
	b := f.Layers[0].Meta.Bounds
	if b[0] <= b[2] {
		t.Fatalf("fixture bounds %v do not cross 180°", b)
	}
	// inExtent: lon lies in the wrapping interval [west, east].
	inExtent := func(lon float64) bool { return lon >= b[0] || lon <= b[2] }
	// dist is the distance in degrees around the circle.
	dist := func(a, c float64) float64 { d := math.Mod(math.Abs(a-c), 360); return math.Min(d, 360-d) }
	for _, c := range []struct {
		w, h int64
		hash string
	}{{1280, 800, ""}, {390, 844, ""}, {1280, 800, "#z=12.00&lat=0.00000&lon=-180.00000"}, {1280, 800, "#z=12.00&lat=0.00000&lon=179.99000"}} {
		tb := newTab(t, c.w, c.h)
		st := tb.open(srv.URL + "/index.html" + c.hash)
		// Half the extent is 0.05°; the view may sit off centre by the
		// key's width at most (320 px at z ≥ 12: under 0.03°).
		if !inExtent(st.Lon) || dist(st.Lon, 180) > 0.04 || math.Abs(st.Lat) > 0.04 {
			t.Errorf("%dx%d %q: centre %.5f, %.5f; want within the extent %v, near 180°", c.w, c.h, c.hash, st.Lon, st.Lat, b)
		}
		if st.Lon < -180 || st.Lon >= 180 || st.Loaded == 0 {
			t.Errorf("%dx%d %q: state %+v; want a longitude in [−180, 180) and tiles", c.w, c.h, c.hash, st)
		}
		tb.clean()
	}
	// A wide extent that crosses 180°, shaped like a country whose islands
	// reach past it (west 172.4°, east −66.9°: a made-up frame, no data).
	// Its centre on the circle of longitudes is −127.25°; the middle of
	// the free part of the map (right of the key) must lie over it, between
	// −130° and −90°, and the view's centre inside the extent.
	wide := *f.Layers[0].Meta
	wide.Bounds = [4]float64{172.4, 18.9, -66.9, 71.4}
	dir := t.TempDir()
	if err := tiles.WriteViewer(dir, &wide); err != nil {
		t.Fatal(err)
	}
	for _, size := range [][2]int64{{1440, 900}, {1280, 800}, {390, 844}} {
		tb := newTab(t, size[0], size[1])
		tb.do(chromedp.Navigate(fileURL(filepath.Join(dir, tiles.ViewerPage))))
		if _, err := chromedp.Run(tb.ctx, chromedp.Poll[bool](`!!window.stippleViewer && stippleViewer.state().ready`)); err != nil {
			t.Fatal(err)
		}
		st := tb.state()
		bx := readBoxes(tb)
		free := bx.Map
		if bx.Key.overlaps(bx.Map) {
			free.Left = bx.Key.Right
		}
		k := 256 * math.Exp2(st.Z)
		mid := st.Lon + ((free.Left+free.Right)/2-(bx.Map.Left+bx.Map.Right)/2)/k*360
		if !(st.Lon >= 172.4 || st.Lon <= -66.9) || mid < -130 || mid > -90 {
			t.Errorf("%v: view centre %.2f°, middle of the free map %.2f°; want inside [172.4°, −66.9°] and between −130° and −90°", size, st.Lon, mid)
		}
		tb.clean()
	}
}
