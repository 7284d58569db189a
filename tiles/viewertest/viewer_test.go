package viewertest

import (
	"context"
	"fmt"
	"image"
	"math"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"github.com/chromedp/cdproto/input"
	"github.com/chromedp/chromedp"
	"github.com/chromedp/chromedp/kb"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
)

// demoView is a view of the demo city's centre at zoom 11.
const demoView = "#z=11.00&lat=-34.22500&lon=-128.41000"

func TestServedViewerLoadsCleanly(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800)
	st := tb.open(srv.URL + "/index.html")
	if st.Layer != "ten" || st.Loaded == 0 || st.TileZoom < 9 || st.TileZoom > 13 {
		t.Fatalf("state after load: %+v", st)
	}
	tilesSeen := 0
	for u, code := range tb.tileResponses() {
		if code != 200 {
			t.Errorf("tile %s: HTTP %d", u, code)
		}
		tilesSeen++
	}
	if tilesSeen < st.Loaded {
		t.Errorf("%d tile responses for %d tiles drawn", tilesSeen, st.Loaded)
	}
	tb.clean()
}

func TestFileViewerLoadsCleanly(t *testing.T) {
	f := demoTwo(t)
	for _, page := range []string{tiles.ViewerPage, tiles.EmbedPage} {
		tb := newTab(t, 1280, 800)
		st := tb.open(fileURL(filepath.Join(f.Dir, page)) + demoView)
		if st.Loaded == 0 || st.TileZoom != 11 {
			t.Fatalf("%s from file://: %+v", page, st)
		}
		// The tiles really are pictures: the browser decoded them.
		decoded := eval[int](tb, `Array.prototype.filter.call(document.querySelectorAll(".st-level img"), function (i) { return i.naturalWidth === 256; }).length`)
		if decoded < st.Loaded {
			t.Errorf("%s: %d of %d tiles decoded", page, decoded, st.Loaded)
		}
		tb.clean()
	}
}

func TestWheelZoomLoadsNextZoom(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800)
	st := tb.open(srv.URL + "/index.html" + demoView)
	if st.TileZoom != 11 {
		t.Fatalf("start: %+v", st)
	}
	before := len(tb.tileResponses())
	// One wheel step of 300 px toward the reader zooms in by one level.
	tb.do(chromedp.MouseEvent(input.DispatchMouseEventTypeMouseWheel, 800, 400, func(p *input.DispatchMouseEventParams) { p.DeltaX, p.DeltaY = 1e-9, -300 }))
	st = tb.waitTiles()
	if math.Abs(st.Z-12) > 1e-9 || st.TileZoom != 12 {
		t.Fatalf("after the wheel: z %v, tile zoom %d; want 12", st.Z, st.TileZoom)
	}
	z12 := 0
	for u, code := range tb.tileResponses() {
		if strings.Contains(u, "/ten/12/") && code == 200 {
			z12++
		}
	}
	if z12 == 0 || z12 < st.Loaded || len(tb.tileResponses()) <= before {
		t.Errorf("%d zoom-12 tiles arrived for %d drawn", z12, st.Loaded)
	}
	// The point under the pointer stays put: it was 160 px east of the
	// centre at zoom 11, so the centre moved 80 px (of zoom 12) toward it.
	wantLon := -128.41 + 160.0/(256*2048)*360 - 160.0/(256*4096)*360
	if math.Abs(st.Lon-wantLon) > 1e-7 {
		t.Errorf("centre lon %.7f after zooming at the pointer; want %.7f", st.Lon, wantLon)
	}
	tb.clean()
}

func TestKeyboardPanAndZoom(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800)
	st0 := tb.open(srv.URL + "/index.html" + demoView)
	tb.do(chromedp.Focus(chromedp.CSS("#st-map")), chromedp.KeyEvent(kb.ArrowRight))
	st1 := tb.waitTiles()
	// One arrow press moves the view 96 CSS pixels: 96/(256·2^z) of 360°.
	wantLon := st0.Lon + 96.0/(256*math.Exp2(st0.Z))*360
	if math.Abs(st1.Lon-wantLon) > 1e-9 || math.Abs(st1.Lat-st0.Lat) > 1e-12 {
		t.Errorf("ArrowRight: lon %.8f lat %.8f; want %.8f, %.8f", st1.Lon, st1.Lat, wantLon, st0.Lat)
	}
	tb.do(chromedp.KeyEvent(kb.ArrowDown))
	st2 := tb.waitTiles()
	if !(st2.Lat < st1.Lat) || st2.Lon != st1.Lon {
		t.Errorf("ArrowDown: lat %.6f → %.6f, lon %.6f → %.6f", st1.Lat, st2.Lat, st1.Lon, st2.Lon)
	}
	tb.do(chromedp.KeyEvent("+"))
	if st := tb.waitTiles(); st.Z != 12 || st.TileZoom != 12 {
		t.Errorf("+: z %v tile zoom %d; want 12", st.Z, st.TileZoom)
	}
	tb.do(chromedp.KeyEvent("-"), chromedp.KeyEvent("-"))
	if st := tb.waitTiles(); st.Z != 10 {
		t.Errorf("- twice: z %v; want 10", st.Z)
	}
	// The zoom limits come from the metadata: 9 to 13.
	for i := 0; i < 4; i++ {
		tb.do(chromedp.KeyEvent("-"))
	}
	if st := tb.waitTiles(); st.Z != 9 {
		t.Errorf("below min_zoom: z %v; want 9", st.Z)
	}
	if !eval[bool](tb, `document.getElementById("st-out").disabled`) {
		t.Error("zoom-out button enabled at the lowest zoom")
	}
	tb.clean()
}

func TestHashRoundTripsAView(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800)
	st := tb.open(srv.URL + "/index.html#z=12.50&lat=-34.20000&lon=-128.38000&layer=quarter&areas=1")
	if st.Z != 12.5 || math.Abs(st.Lat+34.2) > 1e-9 || math.Abs(st.Lon+128.38) > 1e-9 || st.Layer != "quarter" || !st.Outline {
		t.Fatalf("view from the hash: %+v", st)
	}
	// Drag the map, then share the URL the viewer wrote.
	tb.do(
		chromedp.MouseEvent(input.DispatchMouseEventTypeMousePressed, 900, 500, chromedp.ButtonLeft, chromedp.ClickCount(1)),
		chromedp.MouseEvent(input.DispatchMouseEventTypeMouseMoved, 850, 520, chromedp.ButtonLeft),
		chromedp.MouseEvent(input.DispatchMouseEventTypeMouseMoved, 780, 560, chromedp.ButtonLeft),
		chromedp.MouseEvent(input.DispatchMouseEventTypeMouseReleased, 780, 560, chromedp.ButtonLeft, chromedp.ClickCount(1)),
	)
	moved := tb.waitTiles()
	k := 256 * math.Exp2(12.5)
	if math.Abs((moved.Lon-st.Lon)/360*k-120) > 1e-6 {
		t.Errorf("drag by 120 px west moved the centre %.4f px", (moved.Lon-st.Lon)/360*k)
	}
	ctx, cancel := context.WithTimeout(tb.ctx, 5*time.Second)
	defer cancel()
	if _, err := chromedp.Run(ctx, chromedp.Poll[bool](`location.hash === stippleViewer.state().hash`)); err != nil {
		t.Fatalf("hash never caught up: %v", err)
	}
	shared := eval[string](tb, `location.href`)
	other := newTab(t, 1280, 800)
	got := other.open(shared)
	if math.Abs(got.Lon-moved.Lon) > 1e-5 || math.Abs(got.Lat-moved.Lat) > 1e-5 || got.Z != math.Round(moved.Z*100)/100 ||
		got.Layer != moved.Layer || got.Outline != moved.Outline {
		t.Errorf("shared %s\n opened as %+v\n want      %+v", shared, got, moved)
	}
	tb.clean()
	other.clean()
}

func TestLegendMatchesMapFile(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800)
	tb.open(srv.URL + "/index.html" + demoView)
	type row struct{ Label, Count, Color string }
	type legend struct {
		Rows                        []row
		Note, Caution, Credit, Side string
	}
	read := func(n int) legend {
		return eval[legend](tb, fmt.Sprintf(`(function () {
			var el = document.querySelector('.st-legend[data-layer="%d"]');
			if (el.hidden) return null;
			return {
				rows: Array.prototype.map.call(el.querySelectorAll(".st-groups li"), function (li) {
					return { label: li.querySelector(".st-label").textContent, count: li.querySelector(".st-count").textContent,
						color: getComputedStyle(li.querySelector(".st-swatch")).backgroundColor };
				}),
				note: el.querySelector(".st-note").textContent, caution: el.querySelector(".st-caution").textContent,
				credit: el.querySelector(".st-credit").textContent
			};
		})()`, n))
	}
	check := func(n int) {
		m, md := f.Layers[n].Map, f.Layers[n].Meta
		got := read(n)
		if len(got.Rows) != len(m.Categories) {
			t.Fatalf("layer %d: %d legend rows for %d categories", n, len(got.Rows), len(m.Categories))
		}
		for k, c := range m.Categories {
			col, _ := render.ParseHex(c.Color)
			want := row{c.Label, render.FormatCount(md.Categories[k].People), fmt.Sprintf("rgb(%d, %d, %d)", col.R, col.G, col.B)}
			if got.Rows[k] != want {
				t.Errorf("layer %d row %d: %+v; want %+v", n, k, got.Rows[k], want)
			}
		}
		if want := render.DotNote(m.PeoplePerDot); got.Note != want {
			t.Errorf("layer %d note %q; want %q", n, got.Note, want)
		}
		if got.Caution != render.Caution || got.Credit != "Source: "+m.Credit {
			t.Errorf("layer %d caution %q credit %q", n, got.Caution, got.Credit)
		}
	}
	check(0)
	if !eval[bool](tb, `document.querySelector('.st-legend[data-layer="1"]').hidden`) {
		t.Error("the second layer's legend shows before it is picked")
	}
	// The layer switch shows the other map and its legend.
	tb.do(chromedp.Click(chromedp.CSS(`input[name="st-layer"][value="1"]`)))
	if st := tb.waitTiles(); st.Layer != "quarter" {
		t.Fatalf("after the switch: layer %q", st.Layer)
	}
	check(1)
	quarter := 0
	for u := range tb.tileResponses() {
		if strings.Contains(u, "/quarter/") {
			quarter++
		}
	}
	if quarter == 0 {
		t.Error("no tiles of the second layer loaded")
	}
	tb.clean()
}

func TestCompareDividerMoves(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800)
	tb.open(srv.URL + "/index.html" + demoView)
	tb.do(chromedp.Click(chromedp.CSS("#st-compare")))
	st := tb.waitTiles()
	if st.Right != "quarter" || st.Split != 0.5 {
		t.Fatalf("compare: %+v", st)
	}
	clip := func() string {
		return eval[string](tb, `document.querySelector('.st-stack[data-side="b"]').style.clipPath`)
	}
	if c := clip(); c != "inset(0px 0px 0px 640px)" {
		t.Errorf("right map clipped at %q; want 640px", c)
	}
	x := eval[float64](tb, `(function () { var r = document.getElementById("st-divider").getBoundingClientRect(); return r.left + r.width / 2; })()`)
	if x != 640 {
		t.Errorf("divider centre at %v px; want 640", x)
	}
	tb.do(
		chromedp.MouseEvent(input.DispatchMouseEventTypeMousePressed, 640, 300, chromedp.ButtonLeft, chromedp.ClickCount(1)),
		chromedp.MouseEvent(input.DispatchMouseEventTypeMouseMoved, 700, 310, chromedp.ButtonLeft),
		chromedp.MouseEvent(input.DispatchMouseEventTypeMouseMoved, 832, 320, chromedp.ButtonLeft),
		chromedp.MouseEvent(input.DispatchMouseEventTypeMouseReleased, 832, 320, chromedp.ButtonLeft, chromedp.ClickCount(1)),
	)
	moved := tb.waitTiles()
	if math.Abs(moved.Split-832.0/1280) > 1e-9 || moved.Lon != st.Lon || moved.Lat != st.Lat {
		t.Errorf("after dragging the divider to 832 px: split %v (want %v), view %v,%v (want unchanged %v,%v)",
			moved.Split, 832.0/1280, moved.Lon, moved.Lat, st.Lon, st.Lat)
	}
	if c := clip(); c != "inset(0px 0px 0px 832px)" {
		t.Errorf("right map clipped at %q; want 832px", c)
	}
	if v := eval[string](tb, `document.getElementById("st-divider").getAttribute("aria-valuenow")`); v != "65" {
		t.Errorf("aria-valuenow %q; want 65", v)
	}
	tb.do(chromedp.KeyEvent(kb.ArrowLeft))
	if s := tb.waitTiles().Split; math.Abs(s-(832.0/1280-0.05)) > 1e-9 {
		t.Errorf("ArrowLeft on the divider: split %v", s)
	}
	// Both legends show, each saying which side it is.
	sides := eval[[]string](tb, `Array.prototype.map.call(document.querySelectorAll(".st-legend:not([hidden]) .st-side"), function (e) { return e.textContent; })`)
	if len(sides) != 2 {
		t.Errorf("legends in compare mode: %q", sides)
	}
	tb.clean()
}

func TestScaleBarFollowsZoomAndLatitude(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800)
	tb.open(srv.URL + "/index.html#z=12.30&lat=-34.20000&lon=-128.40000")
	// Microsoft, "Bing Maps Tile System": 78 271.5170 m/px at level 1 on the
	// equator; level 0 is 156 543.03392804 (computed, CHECKS.md).
	for _, c := range []struct{ lat, z, want float64 }{{0, 1, 78271.5170}, {0, 0, 156543.03392804}} {
		if got := eval[float64](tb, fmt.Sprintf("stippleViewer.groundResolution(%v, %v)", c.lat, c.z)); math.Abs(got-c.want) > 1e-4 {
			t.Errorf("ground resolution at lat %v, level %v: %.5f; want %.5f", c.lat, c.z, got, c.want)
		}
	}
	type bar struct {
		Px    float64
		Label string
	}
	type bars struct{ Metric, Imperial bar }
	for _, v := range []struct {
		hash string
		lat  float64
		z    float64
	}{{"#z=12.30&lat=-34.20000&lon=-128.40000", -34.2, 12.3}, {"#z=9.70&lat=-34.30000&lon=-128.40000", -34.3, 9.7}} {
		tb.do(chromedp.Evaluate[chromedp.Void](fmt.Sprintf("location.hash = %q", v.hash)))
		tb.waitTiles()
		drawn := eval[bars](tb, `(function () {
			function one(c) { var r = document.querySelector("." + c); return { px: r.querySelector(".st-line").getBoundingClientRect().width, label: r.querySelector(".st-scale-label").textContent }; }
			return { metric: one("st-metric"), imperial: one("st-imperial") };
		})()`)
		res := math.Cos(v.lat*math.Pi/180) * 2 * math.Pi * 6378137 / (256 * math.Exp2(v.z))
		metres := drawn.Metric.Px * res
		var num float64
		var unit string
		fmt.Sscanf(drawn.Metric.Label, "%g %s", &num, &unit)
		want := num
		if unit == "km" {
			want *= 1000
		}
		if math.Abs(metres-want) > 0.01*want || drawn.Metric.Px > 120 || drawn.Metric.Px < 24 {
			t.Errorf("%s: metric bar %.1f px = %.1f m, labelled %q", v.hash, drawn.Metric.Px, metres, drawn.Metric.Label)
		}
		fmt.Sscanf(drawn.Imperial.Label, "%g %s", &num, &unit)
		feet := drawn.Imperial.Px * res / 0.3048
		want = num
		if unit == "mi" {
			want *= 5280
		}
		if math.Abs(feet-want) > 0.01*want || drawn.Imperial.Px > 120 {
			t.Errorf("%s: imperial bar %.1f px = %.1f ft, labelled %q", v.hash, drawn.Imperial.Px, feet, drawn.Imperial.Label)
		}
	}
	tb.clean()
}

func TestFitShowsTheWholeMap(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800)
	tb.open(srv.URL + "/index.html#z=13.00&lat=-34.10000&lon=-128.30000")
	tb.do(chromedp.Click(chromedp.CSS("#st-fit")))
	st := tb.waitTiles()
	// Every corner of the map's bounds is on screen and right of the key.
	b := f.Layers[0].Meta.Bounds
	keyRight := eval[float64](tb, `document.getElementById("st-key").getBoundingClientRect().right`)
	k := 256 * math.Exp2(st.Z)
	cx, cy := lonX(st.Lon)*k, latY(st.Lat)*k
	for _, c := range [][2]float64{{b[0], b[1]}, {b[2], b[3]}, {b[0], b[3]}, {b[2], b[1]}} {
		x, y := lonX(c[0])*k-cx+640, latY(c[1])*k-cy+400
		if x < keyRight || x > 1280 || y < 0 || y > 800 {
			t.Errorf("after Fit, corner %v is at %.0f,%.0f px: off the free part of the screen", c, x, y)
		}
	}
	// … and one zoom step more would not fit.
	w := (lonX(b[2]) - lonX(b[0])) * k * 2
	h := (latY(b[1]) - latY(b[3])) * k * 2
	if w < 1280-keyRight-32 && h < 800-120 {
		t.Errorf("Fit chose zoom %v, but the map would fit at %v (%.0f × %.0f px)", st.Z, st.Z+1, w, h)
	}
	tb.clean()
}

func lonX(lon float64) float64 { return (lon + 180) / 360 }
func latY(lat float64) float64 {
	s := math.Sin(lat * math.Pi / 180)
	return 0.5 - math.Log((1+s)/(1-s))/(4*math.Pi)
}

func TestTouchPinchZoomsAndDragPans(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 390, 844, chromedp.EmulateMobile, chromedp.EmulateTouch)
	st0 := tb.open(srv.URL + "/index.html" + demoView)
	touch := func(typ input.DispatchTouchEventType, pts ...[2]float64) chromedp.Action[chromedp.Void] {
		return chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
			p := input.DispatchTouchEventParams{Type: typ, TouchPoints: []*input.TouchPoint{}}
			for i, q := range pts {
				id := float64(i)
				p.TouchPoints = append(p.TouchPoints, &input.TouchPoint{X: q[0], Y: q[1], ID: &id})
			}
			_, err := chromedp.Call(ctx, input.DispatchTouchEvent, p)
			return err
		})
	}
	// Two fingers 100 px apart spread to 200 px: one zoom level in.
	tb.do(
		touch(input.DispatchTouchEventTypeTouchStart, [2]float64{145, 200}, [2]float64{245, 200}),
		touch(input.DispatchTouchEventTypeTouchMove, [2]float64{120, 200}, [2]float64{270, 200}),
		touch(input.DispatchTouchEventTypeTouchMove, [2]float64{95, 200}, [2]float64{295, 200}),
		touch(input.DispatchTouchEventTypeTouchEnd),
	)
	st1 := tb.waitTiles()
	if math.Abs(st1.Z-(st0.Z+1)) > 1e-6 {
		t.Errorf("pinch from 100 to 200 px: z %v → %v; want +1", st0.Z, st1.Z)
	}
	// One finger drags the map 80 px to the left: the centre moves east.
	tb.do(
		touch(input.DispatchTouchEventTypeTouchStart, [2]float64{250, 300}),
		touch(input.DispatchTouchEventTypeTouchMove, [2]float64{210, 300}),
		touch(input.DispatchTouchEventTypeTouchMove, [2]float64{170, 300}),
		touch(input.DispatchTouchEventTypeTouchEnd),
	)
	st2 := tb.waitTiles()
	if px := (st2.Lon - st1.Lon) / 360 * 256 * math.Exp2(st1.Z); math.Abs(px-80) > 1e-6 {
		t.Errorf("one-finger drag of 80 px moved the centre %.3f px", px)
	}
	tb.clean()
}

func TestControlsAreLargeEnough(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	for _, size := range [][2]int64{{390, 844}, {1280, 800}} {
		tb := newTab(t, size[0], size[1])
		tb.open(srv.URL + "/index.html" + demoView + "&right=quarter")
		type box struct {
			What string
			W, H float64
		}
		boxes := eval[[]box](tb, `Array.prototype.map.call(document.querySelectorAll("button, .st-seg span, select, #st-divider"), function (e) {
			var r = e.getBoundingClientRect();
			return { what: e.id || e.className || e.textContent, w: r.width, h: r.height };
		}).filter(function (b) { return b.w > 0; })`)
		if len(boxes) < 7 {
			t.Fatalf("%v: only %d controls found", size, len(boxes))
		}
		for _, b := range boxes {
			if b.W < 44 || b.H < 44 {
				t.Errorf("%v: control %q is %.0f × %.0f px; want at least 44 × 44", size, b.What, b.W, b.H)
			}
		}
		tb.clean()
	}
}

func TestDotColourOnScreen(t *testing.T) {
	f := oneDot(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800)
	tb.open(srv.URL + fmt.Sprintf("/index.html#z=14.00&lat=%.5f&lon=%.5f", dotAt[1], dotAt[0]))
	img := tb.screenshot(1280)
	want, _ := render.ParseHex(dotColor)
	paper, _ := render.ParseHex(render.DefaultGround)
	// The dot is 40 px wide at zoom 14 and lies at the view's centre.
	for _, p := range []image.Point{{640, 400}, {628, 392}, {652, 410}} {
		if !near(img, p, want) {
			t.Errorf("pixel %v is %v; want the category colour %s", p, img.At(p.X, p.Y), dotColor)
		}
	}
	for _, p := range []image.Point{{640 + 30, 400}, {640, 400 - 30}, {900, 600}} {
		if !near(img, p, paper) {
			t.Errorf("pixel %v is %v; want the map ground", p, img.At(p.X, p.Y))
		}
	}
	tb.clean()
}

func near(img image.Image, p image.Point, c interface{ RGBA() (r, g, b, a uint32) }) bool {
	r, g, b, _ := img.At(p.X, p.Y).RGBA()
	cr, cg, cb, _ := c.RGBA()
	d := func(a, b uint32) bool { return math.Abs(float64(a>>8)-float64(b>>8)) <= 2 }
	return d(r, cr) && d(g, cg) && d(b, cb)
}

func TestHostileTextStaysText(t *testing.T) {
	f := oneDot(t)
	srv := serve(t, f.Dir)
	for _, page := range []string{tiles.ViewerPage, tiles.EmbedPage} {
		tb := newTab(t, 1280, 800)
		tb.open(srv.URL + "/" + page + fmt.Sprintf("#z=13.00&lat=%.5f&lon=%.5f&layer=%s", dotAt[1], dotAt[0], strings.ReplaceAll(url.QueryEscape(evilKey), "+", "%20")))
		type seen struct {
			Title, Label, Credit, Heading string
			Radios, Options               []string
			Scripts, Images, Svgs, Links  int
			Pwned                         bool
			Layer                         string
		}
		got := eval[seen](tb, `(function () {
			var vis = document.querySelector(".st-legend:not([hidden])");
			return {
				title: document.title,
				heading: document.getElementById("st-key-title").textContent,
				label: vis.querySelector(".st-label").textContent,
				credit: vis.querySelector(".st-credit").textContent,
				radios: Array.prototype.map.call(document.querySelectorAll(".st-seg span"), function (e) { return e.textContent; }),
				options: Array.prototype.map.call(document.querySelectorAll("#st-right option"), function (e) { return e.textContent; }),
				scripts: document.scripts.length,
				images: document.querySelectorAll("img:not(.st-level img)").length,
				svgs: document.querySelectorAll("svg").length,
				links: document.querySelectorAll("a").length,
				pwned: !!window.__pwned,
				layer: stippleViewer.state().layer
			};
		})()`)
		if got.Title != evilTitle || got.Heading != evilTitle || got.Label != evilLabel || got.Credit != "Source: "+evilCredit {
			t.Errorf("%s: texts changed on the way: %+v", page, got)
		}
		if len(got.Radios) != 2 || got.Radios[0] != evilLabel || got.Radios[1] != evilKey {
			t.Errorf("%s: layer labels %q", page, got.Radios)
		}
		if got.Layer != evilKey {
			t.Errorf("%s: the hash's hostile layer key picked %q", page, got.Layer)
		}
		// Only the viewer's own scripts run; no element came from a label.
		scripts := 3 + 1 // map-data.js, viewer.js, reference.js, and one tile index
		if got.Scripts > scripts || got.Images != 0 || got.Svgs != 0 || got.Links != 0 {
			t.Errorf("%s: markup from the map file reached the page: %+v", page, got)
		}
		tb.clean() // no dialog opened, nothing failed
	}
}

func TestCSPBlocksOtherOrigins(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	var hits atomic.Int64
	other := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		hits.Add(1)
		w.Header().Set("Access-Control-Allow-Origin", "*")
		fmt.Fprint(w, "window.__pwned = true;")
	}))
	defer other.Close()
	tb := newTab(t, 1280, 800)
	tb.open(srv.URL + "/index.html" + demoView)
	n := eval[int](tb, fmt.Sprintf(`new Promise(function (done) {
		var seen = 0;
		document.addEventListener("securitypolicyviolation", function () { seen++; });
		var img = document.createElement("img"); img.src = %[1]q + "/x.png"; document.body.appendChild(img);
		var s = document.createElement("script"); s.src = %[1]q + "/x.js"; document.head.appendChild(s);
		var l = document.createElement("link"); l.rel = "stylesheet"; l.href = %[1]q + "/x.css"; document.head.appendChild(l);
		try { fetch(%[1]q + "/x.json").catch(function () {}); } catch (e) {}
		setTimeout(function () { done(seen); }, 800);
	})`, other.URL), chromedp.EvalAwaitPromise)
	if hits.Load() != 0 {
		t.Errorf("the page reached another origin %d times", hits.Load())
	}
	if n < 4 || eval[bool](tb, `!!window.__pwned`) {
		t.Errorf("%d policy violations reported for 4 loads from another origin", n)
	}
}

func TestEmbedInAStoryPage(t *testing.T) {
	f := demoTwo(t)
	mapSrv := serve(t, f.Dir)
	snippet := tiles.EmbedSnippet(f.Layers[0].Meta, mapSrv.URL+"/embed.html"+demoView)
	// The story lives on another origin, as a newsroom's CMS would.
	story := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		w.Header().Set("Content-Type", "text/html; charset=utf-8")
		fmt.Fprintf(w, `<!doctype html><html><head><title>story</title><link rel="icon" href="data:,"></head><body style="margin:0">
<div style="max-width:640px">%s</div></body></html>`, snippet)
	}))
	defer story.Close()
	tb := newTab(t, 640, 800)
	tb.do(chromedp.Navigate(story.URL))
	h := eval[float64](tb, `document.querySelector("iframe").getBoundingClientRect().height`)
	a := tiles.EmbedAspect(f.Layers[0].Meta)
	if want := 640 * float64(a.H) / float64(a.W); math.Abs(h-want) > 1 {
		t.Errorf("iframe %v px tall; want %v for aspect %d:%d", h, want, a.W, a.H)
	}
	// The sandboxed frame has an opaque origin and runs in a process of its
	// own: attach to it to look inside.
	var frame *tab
	deadline := time.Now().Add(10 * time.Second)
	for frame == nil {
		infos, err := chromedp.Targets(tb.ctx)
		if err != nil {
			t.Fatal(err)
		}
		for _, i := range infos {
			if i.Type == "iframe" && strings.HasPrefix(i.URL, mapSrv.URL+"/embed.html") {
				frame = attach(t, tb.ctx, i.TargetID)
			}
		}
		if frame == nil && time.Now().After(deadline) {
			t.Fatal("the story page has no frame of the map")
		}
		time.Sleep(50 * time.Millisecond)
	}
	st := frame.waitTiles()
	if st.TileZoom != 11 || st.Loaded == 0 {
		t.Errorf("embedded map: %+v", st)
	}
	decoded := eval[int](frame, `Array.prototype.filter.call(document.querySelectorAll(".st-level img"), function (i) { return i.naturalWidth === 256; }).length`)
	if decoded < st.Loaded {
		t.Errorf("embedded map: %d of %d tiles decoded", decoded, st.Loaded)
	}
	if eval[bool](frame, `!!document.querySelector(".st-title.st-vh") && !document.querySelector(".st-embed .st-caution").hidden`) != true {
		t.Error("the embed shows page chrome or hides the caution")
	}
	tb.clean()
	frame.clean()
}

func TestScreenshots(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	out := t.TempDir()
	if os.Getenv("STIPPLE_WRITE_SCREENSHOTS") == "1" {
		out = filepath.Join("..", "..", "examples", "screenshots")
	}
	for _, s := range []struct {
		name string
		w, h int64
		hash string
	}{
		{"viewer-desktop.png", 1280, 800, ""},
		{"viewer-phone.png", 390, 844, ""},
		{"viewer-compare.png", 1280, 800, "#z=13.00&lat=-34.22500&lon=-128.42500&layer=ten&right=quarter&split=0.560&areas=1"},
	} {
		tb := newTab(t, s.w, s.h)
		tb.open(srv.URL + "/index.html" + s.hash)
		shot, err := chromedp.Run(tb.ctx, chromedp.CaptureScreenshot())
		if err != nil {
			t.Fatal(err)
		}
		small, err := shrinkPNG(shot)
		if err != nil {
			t.Fatal(err)
		}
		if len(small) > 300<<10 {
			t.Errorf("%s: %d kB; want under 300 kB", s.name, len(small)>>10)
		}
		if err := os.WriteFile(filepath.Join(out, s.name), small, 0o644); err != nil {
			t.Fatal(err)
		}
		tb.clean()
	}
}
