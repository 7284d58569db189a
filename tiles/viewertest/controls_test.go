package viewertest

import (
	"math"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/input"
	"github.com/chromedp/chromedp"
)

// TestOldZoomStaysWhileTheNextLoads holds back the next zoom's tiles and
// checks that the screen never goes blank: the current tiles stay, scaled,
// until every new tile in view has arrived, and only then go.
func TestOldZoomStaysWhileTheNextLoads(t *testing.T) {
	f := demoTwo(t)
	files := http.FileServer(http.Dir(f.Dir))
	release := make(chan struct{})
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if strings.HasPrefix(r.URL.Path, "/ten/12/") {
			select {
			case <-release:
			case <-time.After(10 * time.Second):
			}
		}
		files.ServeHTTP(w, r)
	}))
	defer srv.Close()
	tb := newTab(t, 1280, 800)
	tb.open(srv.URL + "/index.html" + demoView)
	tb.do(chromedp.MouseEvent(input.DispatchMouseEventTypeMouseWheel, 640, 400, func(p *input.DispatchMouseEventParams) { p.DeltaX, p.DeltaY = 1e-9, -150 }))
	time.Sleep(400 * time.Millisecond)
	type levels struct {
		Zooms   []string
		Visible int
		Width   float64 // CSS pixels, of the old zoom's first tile
		Ready   bool
	}
	read := func() levels {
		return eval[levels](tb, `(function () {
			var ls = document.querySelectorAll('.st-stack[data-side="a"] .st-sheet:first-child .st-level');
			var old = null, zs = [];
			ls.forEach(function (l) { var img = l.querySelector("img"); zs.push(img ? img.src.split("/ten/")[1].split("/")[0] : "-"); if (zs[zs.length-1] === "11") old = l; });
			var vis = old ? Array.prototype.filter.call(old.querySelectorAll("img"), function (i) { return i.complete && i.naturalWidth > 0; }).length : 0;
			return { zooms: zs, visible: vis, width: old && old.querySelector("img") ? old.querySelector("img").getBoundingClientRect().width : 0, ready: stippleViewer.state().ready };
		})()`)
	}
	during := read()
	// Each tile edge is rounded to a whole device pixel: 256·√2 = 362.04.
	if during.Ready || during.Visible == 0 || math.Abs(during.Width-256*math.Sqrt2) > 1 {
		t.Errorf("while zoom 12 loads: %+v; want zoom 11's tiles shown at scale √2", during)
	}
	close(release)
	st := tb.waitTiles()
	after := read()
	if st.TileZoom != 12 || len(after.Zooms) != 1 || after.Zooms[0] != "12" {
		t.Errorf("after zoom 12 arrived: levels %v, tile zoom %d; want only 12", after.Zooms, st.TileZoom)
	}
	if math.Abs(st.Z-11.5) > 1e-9 {
		t.Errorf("a 150 px wheel step: z %v; want 11.5", st.Z)
	}
	tb.clean()
}

func TestKeyFoldsAndOutlinesToggle(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 390, 844)
	tb.open(srv.URL + "/index.html#z=12.00&lat=-34.22500&lon=-128.41000")
	type fold struct {
		Expanded, Short, Caution string
		Counts                   bool
		Map                      float64
	}
	read := func() fold {
		return eval[fold](tb, `({ expanded: document.getElementById("st-fold").getAttribute("aria-expanded"),
		short: getComputedStyle(document.querySelector(".st-caution-short")).display,
		caution: getComputedStyle(document.querySelector(".st-legend:not([hidden]) .st-caution")).display,
		counts: document.querySelector(".st-legend:not([hidden]) .st-count").offsetHeight > 0,
		map: document.getElementById("st-map").clientHeight })`)
	}
	// A phone opens with the key folded: the short caution, no counts.
	folded := read()
	if folded.Expanded != "false" || folded.Short == "none" || folded.Caution != "none" || folded.Counts {
		t.Errorf("key at open on a phone: %+v; want folded", folded)
	}
	tb.do(chromedp.Click(chromedp.CSS("#st-fold")))
	st := tb.waitTiles()
	open := read()
	if open.Expanded != "true" || open.Short != "none" || open.Caution == "none" || !open.Counts || open.Map > folded.Map-150 {
		t.Errorf("key shown: %+v (map was %.0f px tall folded)", open, folded.Map)
	}
	// The areas' outlines are tiles of their own, over the dots.
	tb.do(chromedp.Click(chromedp.CSS("#st-outline")))
	st = tb.waitTiles()
	n := 0
	for u, code := range tb.tileResponses() {
		if strings.Contains(u, "/ten/outline/12/") && code == 200 {
			n++
		}
	}
	if !st.Outline || n == 0 || !strings.Contains(st.Hash, "&areas=1") {
		t.Errorf("outlines on: %+v, %d outline tiles", st, n)
	}
	tb.clean()
}

func TestHashMayNameOnlyTheLayers(t *testing.T) {
	f := demoTwo(t)
	srv := serve(t, f.Dir)
	tb := newTab(t, 1280, 800)
	plain := tb.open(srv.URL + "/index.html")
	other := newTab(t, 1280, 800)
	st := other.open(srv.URL + "/index.html#layer=quarter&right=ten&split=0.3")
	if st.Layer != "quarter" || st.Right != "ten" || st.Split != 0.3 || st.Z != plain.Z || st.Lon != plain.Lon {
		t.Errorf("hash with layers only: %+v; want layers from the hash and the start view %+v", st, plain)
	}
	tb.clean()
	other.clean()
}
