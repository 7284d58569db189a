package mapjob

import (
	"strings"
	"testing"
	"time"

	"github.com/stipple-maps/stipple/tiles"
)

// TestProgressWithholdsTimeLeft: the time left is not shown while the
// count zooms are drawn, nor in the first minRateTime of the disc zooms;
// after that it is the disc tiles' own rate (tiles since the disc zooms
// began over the time since), not one diluted by the slow start.
func TestProgressWithholdsTimeLeft(t *testing.T) {
	t0 := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	p := &progress{phase: "tiles", since: t0}
	steps := []struct {
		at       time.Duration
		st       tiles.Stats
		contains string
	}{
		{2 * time.Second, tiles.Stats{Tiles: 3, Planned: 100000, Counting: true}, "low zooms, estimating time left"},
		{40 * time.Second, tiles.Stats{Tiles: 900, Planned: 100000, Counting: true}, "low zooms, estimating time left"},
		// Disc zooms begin at 60 s with 1,000 tiles done.
		{60 * time.Second, tiles.Stats{Tiles: 1000, Planned: 100000}, "estimating time left"},
		{70 * time.Second, tiles.Stats{Tiles: 6000, Planned: 100000}, "estimating time left"},
		// 20 s later: 10,000 disc tiles, 500/s; 89,000 left: 2m58s.
		{80 * time.Second, tiles.Stats{Tiles: 11000, Planned: 100000}, "500 tiles/s, about 2m58s left"},
	}
	for _, s := range steps {
		st := s.st
		p.tiles.Store(&st)
		got := p.lineAt(t0.Add(s.at))
		if !strings.Contains(got, s.contains) {
			t.Errorf("at %v: %q; want it to contain %q", s.at, got, s.contains)
		}
	}
}
