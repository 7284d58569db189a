package batch

import (
	"fmt"
	"io"
	"sync"
	"time"

	"github.com/stipple-maps/stipple/tiles"
)

// progress writes the batch's progress lines: one per phase and per
// extent, and while a zoom's tiles are drawn, a line every interval.
type progress struct {
	mu    sync.Mutex
	w     io.Writer
	every time.Duration
	last  time.Time
}

func newProgress(w io.Writer, every time.Duration) *progress {
	if every == 0 {
		every = 10 * time.Second
	}
	return &progress{w: w, every: every}
}

func (p *progress) printf(format string, a ...any) {
	if p.w == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	fmt.Fprintf(p.w, format+"\n", a...)
}

// tiles returns the tiles.Write progress callback for zoom z.
func (p *progress) tiles(z int) func(tiles.Stats) {
	if p.w == nil || p.every < 0 {
		return nil
	}
	p.mu.Lock()
	p.last = time.Now()
	p.mu.Unlock()
	return func(s tiles.Stats) {
		p.mu.Lock()
		defer p.mu.Unlock()
		if time.Since(p.last) < p.every {
			return
		}
		p.last = time.Now()
		fmt.Fprintf(p.w, "batch: zoom %d: %d of about %d tiles drawn\n", z, s.Tiles+s.Tiles2x+s.Empty, s.Planned)
	}
}

func (p *progress) endTiles() {}
