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
	// rateFrom is when the tile phase's disc zooms began (zero before),
	// with the tiles done then: their rate is measured from there.
	rateFrom  time.Time
	rateFromN int64
	done      chan struct{}
	stopped   chan struct{}
	drawn     bool
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
	p.phase, p.since, p.rateFrom = "tiles", time.Now(), time.Time{}
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

func (p *progress) line() string { return p.lineAt(time.Now()) }

// lineAt is the progress line at time now.
func (p *progress) lineAt(now time.Time) string {
	switch p.phase {
	case "place":
		n := p.placed.Load()
		return fmt.Sprintf("placing dots: %s of %s%s", count(n), count(p.expected), rateLeft(n, p.expected, now.Sub(p.since), "dots"))
	case "tiles":
		s := p.tiles.Load()
		if s == nil {
			return ""
		}
		n := s.Tiles + s.Tiles2x
		head := fmt.Sprintf("writing tiles: %s of about %s, %.1f MB", count(n), count(s.Planned), float64(s.Bytes)/1e6)
		if s.Counting {
			// Low zooms: few tiles, each summing many dots; their rate
			// says nothing of the tiles to come.
			return head + ", low zooms, estimating time left"
		}
		if p.rateFrom.IsZero() {
			p.rateFrom, p.rateFromN = now, n
		}
		return head + rateLeft(n-p.rateFromN, s.Planned-p.rateFromN, now.Sub(p.rateFrom), "tiles")
	}
	return ""
}

// minRateTime is how long a phase runs before its rate is trusted for a
// time left: the first seconds of a phase are its slowest (caches, page
// faults, the first large tiles) and extrapolating them gave absurd
// figures (hundreds of hours).
const minRateTime = 15 * time.Second

// rateLeft is ", R unit/s, about T left" for n of total done in el, or
// ", estimating time left" before el reaches minRateTime.
func rateLeft(n, total int64, el time.Duration, unit string) string {
	if el < minRateTime || n <= 0 {
		return ", estimating time left"
	}
	rate := float64(n) / el.Seconds()
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
