package viewertest

import (
	"context"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/demo"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// TestPublishedFolderOpensFromFile renders the demo city, publishes it
// (tiles.Publish, as stipple publish does) and opens the published
// folder's index.html and embed.html from file:// in Chromium: the viewer
// draws its tiles with no failed request and no console error, every tile
// it loads comes from the published folder, and the folder holds no state.
func TestPublishedFolderOpensFromFile(t *testing.T) {
	out := filepath.Join(t.TempDir(), "render")
	m := demoMap(t, 25, out)
	if _, err := mapjob.Run(context.Background(), m, mapjob.Options{Layer: demo.City(1)}); err != nil {
		t.Fatal(err)
	}
	dest := filepath.Join(t.TempDir(), "site")
	st, err := tiles.Publish(context.Background(), out, dest, tiles.PublishOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if st.LeftOut == 0 {
		t.Errorf("nothing left out of a folder with a dot store: %+v", st)
	}
	if _, err := os.Stat(filepath.Join(dest, tiles.StateDir)); !os.IsNotExist(err) {
		t.Errorf("published folder has %s (%v)", tiles.StateDir, err)
	}
	for _, page := range []string{tiles.ViewerPage, tiles.EmbedPage} {
		tb := newTab(t, 1280, 800)
		s := tb.open(fileURL(filepath.Join(dest, page)) + demoView)
		if s.Loaded == 0 || s.TileZoom != 11 {
			t.Fatalf("%s: %+v", page, s)
		}
		// The tiles drawn are decoded pictures from the published folder.
		srcs := eval[[]string](tb, `Array.prototype.filter.call(document.querySelectorAll(".st-level img"), function (i) { return i.naturalWidth === 256; }).map(function (i) { return i.src; })`)
		if len(srcs) < s.Loaded {
			t.Errorf("%s: %d of %d tiles decoded", page, len(srcs), s.Loaded)
		}
		destURL := fileURL(dest) + "/"
		for _, u := range srcs {
			p, _ := url.PathUnescape(u)
			if !strings.HasPrefix(p, destURL) {
				t.Errorf("%s: tile %s not from the published folder %s", page, u, destURL)
			}
		}
		tb.clean()
	}
}
