package mapjob

import (
	"fmt"
	"io"
	"os"
	"sync"
	"sync/atomic"
	"time"

	"github.com/stipple-maps/stipple/tiles"
)

// progress reports a long run: dots placed, then tiles written, each with
// rate and time left. On a terminal it redraws one line four times a second;
// otherwise it writes a plain line every interval.
type progress struct {
	w        io.Writer
	tty      bool
	every    time.Duration
	placed   atomic.Int64
	expected int64
	tiles    atomic.Pointer[tiles.Stats]
	mu       sync.Mutex
	phase    string // "", "place", "tiles"
	since    time.Time
	done     chan struct{}
	stopped  chan struct{}
	drawn    bool
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
	if p.tty {
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
				p.print(line)
			}
			p.mu.Unlock()
		}
	}
}

func (p *progress) print(line string) {
	if p.tty {
		fmt.Fprintf(p.w, "\r%s\033[K", line)
		p.drawn = true
		return
	}
	fmt.Fprintln(p.w, line)
}

func (p *progress) startPlace(expected int64) {
	p.mu.Lock()
	p.phase, p.since, p.expected = "place", time.Now(), expected
	p.mu.Unlock()
}

func (p *progress) startTiles() {
	p.mu.Lock()
	p.phase, p.since = "tiles", time.Now()
	p.mu.Unlock()
}

// endPhase clears the progress line before the caller logs a result.
func (p *progress) endPhase() {
	p.mu.Lock()
	p.phase = ""
	if p.drawn {
		fmt.Fprint(p.w, "\r\033[K")
		p.drawn = false
	}
	p.mu.Unlock()
}

func (p *progress) stop() {
	select {
	case <-p.done:
	default:
		close(p.done)
	}
	<-p.stopped
	p.endPhase()
}

// tile is the pyramid's progress callback.
func (p *progress) tile(s tiles.Stats) { p.tiles.Store(&s) }

func (p *progress) line() string {
	el := time.Since(p.since).Seconds()
	switch p.phase {
	case "place":
		n := p.placed.Load()
		return fmt.Sprintf("placing dots: %s of %s%s", count(n), count(p.expected), rateLeft(n, p.expected, el, "dots"))
	case "tiles":
		s := p.tiles.Load()
		if s == nil {
			return ""
		}
		n := s.Tiles + s.Tiles2x
		return fmt.Sprintf("writing tiles: %s of about %s, %.1f MB%s", count(n), count(s.Planned), float64(s.Bytes)/1e6, rateLeft(n, s.Planned, el, "tiles"))
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
		s += fmt.Sprintf(", about %s left", (time.Duration(float64(total-n) / rate * float64(time.Second))).Round(time.Second))
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
