package shard

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"

	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// ReportFormat names the layout of Report files. 2: sparse area outcomes
// (only areas whose dots did not all go plainly onto the tiles) and tile
// totals instead of per-zoom counts.
const ReportFormat = "stipple-shard/2"

// ReportDir is the folder, inside the output, that holds the shards'
// reports and summaries.
const ReportDir = tiles.StateDir + "/shards"

// Report is what one finished shard tells the final step. It is written
// after the shard's tiles and summary, so a report present means the shard
// is complete.
type Report struct {
	Format string `json:"format"`
	// Layout is the layout's fingerprint; Look fingerprints everything the
	// tiles depend on. All shards of one render must agree on both.
	Layout string `json:"layout"`
	Look   string `json:"look"`
	Shard  int    `json:"shard"`
	Shards int    `json:"shards"`
	// Tiles and Tiles2x are the 1× and @2x tiles the shard wrote (zooms
	// Split … max of its own blocks), TileBytes their bytes and PerZoom the
	// 1× tiles per zoom.
	Tiles     int64         `json:"tiles"`
	Tiles2x   int64         `json:"tiles_2x"`
	TileBytes int64         `json:"tile_bytes"`
	PerZoom   map[int]int64 `json:"tiles_per_zoom"`
	// AreasOwned is the number of areas this shard owns (those with
	// geometry whose bound's centre lies in its blocks, Layout.AreaOwner);
	// it reports what became of their dots.
	AreasOwned int `json:"areas_owned"`
	// Areas lists, in input order, the owned areas whose dots did not all
	// go plainly onto the tiles (lost, beyond the tiles' latitude limit,
	// or placed with a note); an owned area not listed had every dot
	// drawn.
	Areas []AreaResult `json:"areas"`
	// Work done, for balance measurements.
	AreasSampled int     `json:"areas_sampled"`
	DotsSampled  int64   `json:"dots_sampled"`
	DotsKept     int64   `json:"dots_kept"`
	DotsOwned    int64   `json:"dots_owned"`
	SummaryCells int     `json:"summary_cells"`
	PlaceSeconds float64 `json:"place_seconds"`
	TileSeconds  float64 `json:"tile_seconds"`
	// EstimatedDots is the layout's estimate for this shard.
	EstimatedDots float64 `json:"estimated_dots"`
}

// AreaResult is what became of one area's dots when something did not go
// plainly (mapjob.Outcome, with the area's feature index).
type AreaResult struct {
	// Index is the area's position in the input.
	Index int `json:"i"`
	// Lost is the dots per category that found no place; nil for none.
	Lost []int `json:"lost,omitempty"`
	// Beyond is the dots per category placed beyond Web Mercator's
	// latitude limit, which tiles cannot show; nil for none.
	Beyond []int `json:"beyond,omitempty"`
	// Problem says why dots were lost, or how they were placed.
	Problem string `json:"problem,omitempty"`
}

// Name is the base name of shard i's files: "0003-of-0016".
func Name(i, n int) string { return fmt.Sprintf("%04d-of-%04d", i, n) }

// ReportPath is where shard i of n keeps its report.
func ReportPath(i, n int) string { return ReportDir + "/" + Name(i, n) + ".json" }

// SummaryPath is where shard i of n keeps its summary.
func SummaryPath(i, n int) string { return ReportDir + "/" + Name(i, n) + ".cells" }

// WriteReport stores the shard's summary, then its report.
func WriteReport(ctx context.Context, out sink.Sink, r *Report, s *Summary) error {
	b, err := s.MarshalBinary()
	if err != nil {
		return err
	}
	if err := out.Put(ctx, SummaryPath(r.Shard, r.Shards), b, "application/octet-stream", sink.CacheState); err != nil {
		return err
	}
	r.Format = ReportFormat
	j, err := json.MarshalIndent(r, "", "  ")
	if err != nil {
		return fmt.Errorf("shard: %w", err)
	}
	return out.Put(ctx, ReportPath(r.Shard, r.Shards), append(j, '\n'), "application/json", sink.CacheState)
}

// ReadReport loads shard i's report and summary; ok is false when the
// shard has not finished (no report, or the report of an older format).
func ReadReport(ctx context.Context, out sink.Sink, i, n int) (r *Report, s *Summary, ok bool, err error) {
	r, ok, err = readReport(ctx, out, i, n)
	if !ok || err != nil {
		return nil, nil, ok, err
	}
	s, err = readSummary(ctx, out, i, n)
	if err != nil {
		return nil, nil, false, err
	}
	return r, s, true, nil
}

// readReport loads shard i's report; ok is false when the shard has not
// finished (no report, or the report of an older format).
func readReport(ctx context.Context, out sink.Sink, i, n int) (r *Report, ok bool, err error) {
	j, err := out.Get(ctx, ReportPath(i, n))
	if errors.Is(err, sink.ErrNotExist) {
		return nil, false, nil
	}
	if err != nil {
		return nil, false, err
	}
	r = &Report{}
	if err := json.Unmarshal(j, r); err == nil && r.Format != ReportFormat && strings.HasPrefix(r.Format, "stipple-shard/") {
		return nil, false, nil // an older stipple's report: the shard is to be redone
	}
	if err := json.Unmarshal(j, r); err != nil || r.Format != ReportFormat {
		return nil, false, fmt.Errorf("shard: %s/%s: not a shard report (%v)", out, ReportPath(i, n), err)
	}
	if r.Shard != i || r.Shards != n {
		return nil, false, fmt.Errorf("shard: %s/%s is the report of shard %d/%d", out, ReportPath(i, n), r.Shard, r.Shards)
	}
	return r, true, nil
}

// readSummary loads shard i's summary.
func readSummary(ctx context.Context, out sink.Sink, i, n int) (*Summary, error) {
	b, err := out.Get(ctx, SummaryPath(i, n))
	if err != nil {
		return nil, err
	}
	s := &Summary{}
	if err := s.UnmarshalBinary(b); err != nil {
		return nil, fmt.Errorf("%s/%s: %w", out, SummaryPath(i, n), err)
	}
	return s, nil
}

// Collect reads the reports of all n shards, checks that they belong to
// one layout and look, and merges their summaries. A missing shard is an
// error that lists every missing index, so the job can rerun just those.
func Collect(ctx context.Context, out sink.Sink, l *Layout, look string) ([]*Report, *Summary, error) {
	n := l.Shards
	var reps []*Report
	var missing []string
	total := 0
	for i := 0; i < n; i++ {
		r, ok, err := readReport(ctx, out, i, n)
		if err != nil {
			return nil, nil, err
		}
		if !ok {
			missing = append(missing, fmt.Sprint(i))
			continue
		}
		if r.Layout != l.Fingerprint() {
			return nil, nil, fmt.Errorf("shard: shard %d/%d was rendered with another layout (%s, here %s): the input, the map's tile settings or the --rates file changed; rerun it", i, n, r.Layout, l.Fingerprint())
		}
		if r.Look != look {
			return nil, nil, fmt.Errorf("shard: shard %d/%d was rendered with another look or dots (fingerprint %.12s…, here %.12s…); rerun it", i, n, r.Look, look)
		}
		reps = append(reps, r)
		total += max(r.SummaryCells, 0)
	}
	if len(missing) > 0 {
		return nil, nil, fmt.Errorf("shard: %d of %d shards have not finished (no report in %s/%s): %s", len(missing), n, out, ReportDir, strings.Join(missing, " "))
	}
	// One summary in memory at a time besides the merged one, which is
	// sized once from the reports' cell counts: the parts' summaries
	// together are as large as the merged one, and the final step's
	// memory stays near that (issue #19's 2.9 GB came from holding all of
	// them while merging into growing slices).
	m := newMerger(total)
	for i := 0; i < n; i++ {
		s, err := readSummary(ctx, out, i, n)
		if err != nil {
			return nil, nil, err
		}
		if err := m.add(s); err != nil {
			return nil, nil, err
		}
	}
	merged := m.out
	if l.Split > l.MinZoom && merged.Level != l.Level() && len(merged.Keys) > 0 {
		return nil, nil, fmt.Errorf("shard: summaries of level %d; the layout needs %d", merged.Level, l.Level())
	}
	merged.Level = l.Level()
	return reps, merged, nil
}
