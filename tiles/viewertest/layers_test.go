package viewertest

import (
	"context"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/chromedp/cdproto/input"
	"github.com/chromedp/chromedp"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// TestLayersFromTheMapFile renders a map file with two [[layer]] tables
// (the invented small test map at two dot values) the way `stipple render`
// does (mapjob.RunLayers), opens its viewer, switches to compare and drags
// the divider: the layer switch, the compare mode and the divider work on a
// folder the map file made, not only on one assembled in Go.
func TestLayersFromTheMapFile(t *testing.T) {
	dir := t.TempDir()
	for _, f := range []string{"areas.geojson"} {
		b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "small", f))
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(dir, f), b, 0o644)
	}
	src, err := os.ReadFile(filepath.Join("..", "..", "testdata", "small", "map.toml"))
	if err != nil {
		t.Fatal(err)
	}
	text := string(src) + `
[[layer]]
key = "five"
label = "1 dot = 5 people"

[[layer]]
key = "one"
label = "1 dot = 1 person"
people_per_dot = 1
`
	path := filepath.Join(dir, "layers.toml")
	os.WriteFile(path, []byte(text), 0o644)
	m, err := mapfile.Read(path)
	if err != nil {
		t.Fatal(err)
	}
	m.Out = filepath.Join(dir, "out")
	if _, err := mapjob.RunLayers(context.Background(), m, mapjob.Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(filepath.Join(m.Out, "map-data.js"))
	if err != nil || !strings.Contains(string(data), `"key":"five"`) || !strings.Contains(string(data), `"key":"one"`) {
		t.Fatalf("map-data.js does not list both layers: %v %s", err, data)
	}
	srv := serve(t, m.Out)
	tb := newTab(t, 1280, 800)
	tb.open(srv.URL + "/index.html")
	tb.do(chromedp.Click(chromedp.CSS("#st-compare")))
	st := tb.waitTiles()
	if st.Split != 0.5 {
		t.Fatalf("compare: %+v", st)
	}
	x := eval[float64](tb, `(function () { var r = document.getElementById("st-divider").getBoundingClientRect(); return r.left + r.width / 2; })()`)
	tb.do(
		chromedp.MouseEvent(input.DispatchMouseEventTypeMousePressed, x, 400, chromedp.ButtonLeft, chromedp.ClickCount(1)),
		chromedp.MouseEvent(input.DispatchMouseEventTypeMouseMoved, x+60, 405, chromedp.ButtonLeft),
		chromedp.MouseEvent(input.DispatchMouseEventTypeMouseMoved, x+200, 410, chromedp.ButtonLeft),
		chromedp.MouseEvent(input.DispatchMouseEventTypeMouseReleased, x+200, 410, chromedp.ButtonLeft, chromedp.ClickCount(1)),
	)
	moved := tb.waitTiles()
	if want := (x + 200) / 1280; math.Abs(moved.Split-want) > 0.01 {
		t.Errorf("after dragging the divider 200 px right: split %v; want %v", moved.Split, want)
	}
	tb.clean()
}
