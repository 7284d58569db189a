package batch

import (
	"fmt"
	"io"
	"os"
	"sync"
	"sync/atomic"
	"time"

	"github.com/stipple-maps/stipple/tiles"
)

// progress writes the batch's progress as render does: result lines for
// each phase and extent, and while dots are placed or a zoom's tiles are
// drawn, the phase, the count, the rate and the time left. On a terminal
// that line is redrawn four times a second; otherwise it is a plain line
// every interval. Extents are counted over the whole batch ([3/11]).
type progress struct {
	w     io.Writer
	tty   bool
	every time.Duration

	placed   atomic.Int64
	expected int64
	stats    atomic.Pointer[tiles.Stats]

	mu      sync.Mutex
	phase   string // "", "place", "tiles"
	zoom    int
	since   time.Time
	drawn   bool // a terminal line is on screen
	total   int  // extents to draw in this run
	counted int  // extents finished so far

	done    chan struct{}
	stopped chan struct{}
}

func newProgress(w io.Writer, every time.Duration) *progress {
	p := &progress{w: w, every: every, done: make(chan struct{}), stopped: make(chan struct{})}
	if f, ok := w.(*os.File); ok {
		if fi, err := f.Stat(); err == nil && fi.Mode()&os.ModeCharDevice != 0 {
			p.tty = true
		}
	}
	if p.every == 0 {
		p.every = 10 * time.Second
	}
	if p.tty && p.every > 0 {
		p.every = 250 * time.Millisecond
	}
	if w == nil || p.every < 0 {
		close(p.stopped)
		return p
	}
	go p.loop()
	return p
}

func (p *progress) loop() {
	defer close(p.stopped)
	t := time.NewTicker(p.every)
	defer t.Stop()
	for {
		select {
		case <-p.done:
			return
		case <-t.C:
			p.mu.Lock()
			if line := p.line(); line != "" {
				if p.tty {
					fmt.Fprintf(p.w, "\r%s\033[K", line)
					p.drawn = true
				} else {
					fmt.Fprintln(p.w, line)
				}
			}
			p.mu.Unlock()
		}
	}
}

// stop ends the progress line for good.
func (p *progress) stop() {
	select {
	case <-p.done:
	default:
		close(p.done)
	}
	<-p.stopped
	p.endPhase()
}

// printf writes a result line, clearing a progress line first.
func (p *progress) printf(format string, a ...any) {
	if p.w == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	p.clear()
	fmt.Fprintf(p.w, format+"\n", a...)
}

func (p *progress) clear() {
	if p.drawn {
		fmt.Fprint(p.w, "\r\033[K")
		p.drawn = false
	}
}

// startPlace begins the placing phase; expected is about the dots placed.
func (p *progress) startPlace(expected int64) {
	p.mu.Lock()
	p.placed.Store(0)
	p.phase, p.since, p.expected = "place", time.Now(), expected
	p.mu.Unlock()
}

// tiles begins drawing zoom z's tiles and returns the tiles.Write
// progress callback.
func (p *progress) tiles(z int) func(tiles.Stats) {
	p.mu.Lock()
	p.stats.Store(nil)
	p.phase, p.since, p.zoom = "tiles", time.Now(), z
	p.mu.Unlock()
	return func(s tiles.Stats) { p.stats.Store(&s) }
}

func (p *progress) endTiles() { p.endPhase() }

// endPhase stops the progress line until the next phase.
func (p *progress) endPhase() {
	p.mu.Lock()
	p.phase = ""
	p.clear()
	p.mu.Unlock()
}

// setTotal sets the number of extents the counter runs to.
func (p *progress) setTotal(n int) {
	p.mu.Lock()
	p.total = n
	p.mu.Unlock()
}

// extentDone counts a finished extent and returns "[n/total]".
func (p *progress) extentDone() string {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.counted++
	return fmt.Sprintf("[%d/%d]", p.counted, p.total)
}

func (p *progress) line() string {
	el := time.Since(p.since).Seconds()
	switch p.phase {
	case "place":
		n := p.placed.Load()
		return fmt.Sprintf("batch: placing dots: %s of about %s%s", count(n), count(p.expected), rateLeft(n, p.expected, el, "dots"))
	case "tiles":
		s := p.stats.Load()
		if s == nil {
			return ""
		}
		n := s.Tiles + s.Tiles2x + s.Empty
		return fmt.Sprintf("batch: zoom %d: %s of about %s drawn%s", p.zoom, count(n), plural(s.Planned, "tile", "tiles"), rateLeft(n, s.Planned, el, "tiles"))
	}
	return ""
}

func rateLeft(n, total int64, secs float64, unit string) string {
	if secs <= 0 || n <= 0 {
		return ""
	}
	rate := float64(n) / secs
	s := fmt.Sprintf(", %s %s/s", count(int64(rate)), unit)
	if total > n {
		s += fmt.Sprintf(", about %s left", time.Duration(float64(total-n)/rate*float64(time.Second)).Round(time.Second))
	}
	return s
}

// count formats n with thousands separators.
func count(n int64) string {
	s := fmt.Sprint(n)
	for i := len(s) - 3; i > 0 && s[i-1] != '-'; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// plural writes n, with thousands separators, and the word for one or many.
func plural[N int | int64](n N, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return count(int64(n)) + " " + many
}
