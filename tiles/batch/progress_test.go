package batch

import (
	"bytes"
	"strings"
	"testing"
	"time"

	"github.com/stipple-maps/stipple/tiles"
)

func TestProgressCountsOverTheBatchAndPlurals(t *testing.T) {
	var buf bytes.Buffer
	p := newProgress(&buf, -1) // no timed lines: the test reads line() itself
	defer p.stop()
	p.setTotal(11)
	for i := 0; i < 10; i++ {
		p.extentDone()
	}
	if got := p.extentDone(); got != "[11/11]" {
		t.Errorf("11th extent of 11: %q", got)
	}
	for _, c := range []struct {
		n    int
		want string
	}{{0, "0 tiles"}, {1, "1 tile"}, {2, "2 tiles"}, {1234567, "1,234,567 tiles"}} {
		if got := plural(c.n, "tile", "tiles"); got != c.want {
			t.Errorf("plural(%d) = %q; want %q", c.n, got, c.want)
		}
	}
	p.startPlace(1000)
	p.since = time.Now().Add(-2 * time.Second)
	p.placed.Store(500)
	line := p.line()
	for _, want := range []string{"batch: placing dots: 500 of about 1,000", "dots/s", "left"} {
		if !strings.Contains(line, want) {
			t.Errorf("placing line %q lacks %q", line, want)
		}
	}
	cb := p.tiles(7)
	p.since = time.Now().Add(-time.Second)
	cb(tiles.Stats{Tiles: 1, Planned: 1})
	if got := p.line(); !strings.HasPrefix(got, "batch: zoom 7: 1 of about 1 tile drawn") {
		t.Errorf("tiles line %q", got)
	}
	p.endTiles()
	if p.line() != "" {
		t.Errorf("a line after the phase ended: %q", p.line())
	}
}
