package viewertest

import (
	"bytes"
	"context"
	"fmt"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/chromedp/chromedp"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/demo"
	"github.com/stipple-maps/stipple/geo/geojson"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

var refMap viewerFixture
var refOnce sync.Once

// demoReference renders the demo city at 50 people per dot, zooms 9–15,
// with its invented reference layers (river, roads, place names) as the
// demo command writes them.
func demoReference(t *testing.T) *viewerFixture {
	t.Helper()
	refOnce.Do(func() {
		dir := filepath.Join(tmpRoot, "reference")
		src := filepath.Join(tmpRoot, "reference-source")
		if err := os.MkdirAll(src, 0o755); err != nil {
			refMap.err = err
			return
		}
		for name, l := range map[string]*geo.Layer{"places.geojson": demo.Places(), "roads.geojson": demo.Roads(), "water.geojson": demo.Water()} {
			if err := geojson.Write(filepath.Join(src, name), l); err != nil {
				refMap.err = err
				return
			}
		}
		var b strings.Builder
		b.WriteString("title = \"Quillmere with places (invented demo)\"\npeople_per_dot = 50\nseed = 1\nout = \"..\"\n")
		b.WriteString("[input]\nfile = \"built-in.geojson\"\nid = \"code\"\n[tiles]\nmin_zoom = 9\nmax_zoom = 15\n")
		for _, g := range demo.Groups {
			fmt.Fprintf(&b, "\n[[category]]\nkey = %q\nlabel = %q\ncolor = %q\nfields = [%q]\n", g.Field, g.Label, g.Color, g.Field)
		}
		b.WriteString("\n[[reference]]\nfile = \"water.geojson\"\nkind = \"areas\"\n")
		b.WriteString("\n[[reference]]\nfile = \"roads.geojson\"\nkind = \"lines\"\nabove = true\ncolor = \"#ff00ff\"\nwidth = 3\n")
		b.WriteString("\n[[reference]]\nfile = \"places.geojson\"\nkind = \"labels\"\nname = \"name\"\nrank = \"rank\"\n")
		m, err := mapfile.Parse(filepath.Join(src, "demo.toml"), []byte(b.String()))
		if err != nil {
			refMap.err = err
			return
		}
		m.Out = dir
		sum, err := mapjob.Run(context.Background(), m, mapjob.Options{Layer: demo.City(1)})
		if err != nil {
			refMap.err = err
			return
		}
		refMap.Layers = []layerFixture{{Map: m, Meta: sum.Metadata}}
		refMap.Dir = dir
	})
	if refMap.err != nil {
		t.Fatalf("reference fixture: %v", refMap.err)
	}
	return &refMap
}

type labelBox struct {
	Name                     string
	Left, Top, Right, Bottom float64
}

// visibleLabels waits two frames, then reads the box of every label the
// viewer shows.
func visibleLabels(tb *tab) (shown []labelBox, total int) {
	tb.t.Helper()
	eval[bool](tb, `new Promise(function (r) { requestAnimationFrame(function () { requestAnimationFrame(function () { r(true); }); }); })`,
		chromedp.EvalAwaitPromise)
	total = eval[int](tb, `document.querySelectorAll(".st-ref-label").length`)
	shown = eval[[]labelBox](tb, `Array.from(document.querySelectorAll(".st-ref-label")).filter(function (e) {
		return getComputedStyle(e).visibility === "visible";
	}).map(function (e) {
		var r = e.getBoundingClientRect();
		return { Name: e.textContent, Left: r.left, Top: r.top, Right: r.right, Bottom: r.bottom };
	})`)
	return shown, total
}

// The demo's place labels never overlap at zooms 10–15: the boxes the
// browser lays out (CSSOM View, getBoundingClientRect) of every visible
// label are disjoint. Labels hidden at the city view (there are more
// names than room at z10) show that the collision test does work, and
// the rank-1 name at the view's centre must be placed on its point.
func TestReferenceLabelsDoNotOverlap(t *testing.T) {
	f := demoReference(t)
	srv := serve(t, f.Dir)
	places := demo.Places()
	var city [2]float64
	for _, p := range places.Features {
		if p.Props["rank"] == int64(1) {
			city = [2]float64(p.Points[0])
		}
	}
	tb := newTab(t, 1280, 800)
	fewest, most := 1<<30, 0
	for z := 10; z <= 15; z++ {
		tb.open(fmt.Sprintf("%s/index.html#z=%d.00&lat=%.6f&lon=%.6f", srv.URL, z, city[1], city[0]))
		shown, total := visibleLabels(tb)
		if total != len(places.Features) {
			t.Fatalf("z%d: %d label elements; want the %d places", z, total, len(places.Features))
		}
		if len(shown) == 0 {
			t.Fatalf("z%d: no label shown", z)
		}
		for i := range shown {
			for j := i + 1; j < len(shown); j++ {
				a, b := shown[i], shown[j]
				if a.Left < b.Right && b.Left < a.Right && a.Top < b.Bottom && b.Top < a.Bottom {
					t.Errorf("z%d: labels %q %v and %q %v overlap", z, a.Name, a, b.Name, b)
				}
			}
		}
		found := false
		for _, s := range shown {
			if s.Name == "Quillmere" {
				found = true
				// The map is 1280×800 CSS pixels with the view's centre at
				// its middle; the label is centred on its point (to the
				// rounding of one pixel).
				cx, cy := (s.Left+s.Right)/2, (s.Top+s.Bottom)/2
				mw := eval[float64](tb, `document.getElementById("st-map").clientWidth`)
				mh := eval[float64](tb, `document.getElementById("st-map").clientHeight`)
				if d := max(abs(cx-mw/2), abs(cy-mh/2)); d > 1.01 {
					t.Errorf("z%d: Quillmere label centred at (%.1f, %.1f); want the map's centre (%.1f, %.1f)", z, cx, cy, mw/2, mh/2)
				}
			}
		}
		if !found {
			t.Errorf("z%d: the rank-1 label at the view's centre is not shown", z)
		}
		fewest, most = min(fewest, len(shown)), max(most, len(shown))
		t.Logf("z%d: %d of %d labels shown", z, len(shown), total)
	}
	if fewest >= len(places.Features) {
		t.Errorf("every label shown at every zoom (%d): the demo should crowd at z10, or the test shows nothing", fewest)
	}
	tb.clean()
}

// Roads drawn over the dots sit where the tiles' projection puts them: at
// a road vertex at the view's centre, the canvas over the dots holds the
// roads' colour (#ff00ff in this fixture), and the map file's width.
func TestReferenceLinesAligned(t *testing.T) {
	f := demoReference(t)
	srv := serve(t, f.Dir)
	roads := demo.Roads()
	ln := roads.Features[0].Lines[0]
	p := ln[len(ln)/2]
	tb := newTab(t, 800, 600)
	tb.open(fmt.Sprintf("%s/index.html#z=14.00&lat=%.6f&lon=%.6f", srv.URL, p[1], p[0]))
	visibleLabels(tb)
	rgba := eval[[]int](tb, `(function () {
		var c = document.querySelector(".st-ref-above"), m = document.getElementById("st-map");
		var d = window.devicePixelRatio || 1;
		var px = c.getContext("2d").getImageData(Math.round(m.clientWidth / 2 * d), Math.round(m.clientHeight / 2 * d), 1, 1).data;
		return [px[0], px[1], px[2], px[3]];
	})()`)
	if rgba[3] < 200 || rgba[0] < 200 || rgba[1] > 60 || rgba[2] < 200 {
		t.Errorf("above-dots canvas at a road vertex = %v; want the road colour #ff00ff, opaque", rgba)
	}
	shot := tb.screenshot(800)
	if os.Getenv("STIPPLE_WRITE_SCREENSHOTS") == "1" {
		var buf bytes.Buffer
		_ = png.Encode(&buf, shot)
		_ = os.WriteFile(filepath.Join(os.TempDir(), "stipple-reference-roads.png"), buf.Bytes(), 0o644)
	}
	tb.clean()
}

// TestReferenceScreenshot writes the demo viewer with its reference layers
// to the examples when STIPPLE_WRITE_SCREENSHOTS=1, and checks it loads cleanly.
func TestReferenceScreenshot(t *testing.T) {
	f := demoReference(t)
	tb := newTab(t, 1280, 800)
	tb.open(fileURL(filepath.Join(f.Dir, "index.html")) + "#z=12.60&lat=-34.22500&lon=-128.39000")
	visibleLabels(tb)
	shot := tb.screenshot(1280)
	if os.Getenv("STIPPLE_WRITE_SCREENSHOTS") == "1" {
		var buf bytes.Buffer
		if err := png.Encode(&buf, shot); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join("..", "..", "examples", "screenshots", "viewer-reference.png"), buf.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	tb.clean()
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
