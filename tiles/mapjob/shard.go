package mapjob

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"runtime/debug"
	"strconv"
	"strings"
	"time"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/sample"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/shard"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// ShardPlan is what every part of a sharded render and its final step
// compute alike from the map and its input, without talking to each other.
type ShardPlan struct {
	// Layout cuts the pyramid into parts (shard.Plan).
	Layout *shard.Layout
	// Areas describe the input's areas as the planner saw them (bound,
	// expected dots, fill), in input order.
	Areas []shard.Area
	// Look is LookFingerprint of the input and map: the parts and the
	// final step refuse to mix results of different ones.
	Look string
	// HiDPI is set when the parts also draw @2x tiles.
	HiDPI bool
	// Rates are the costs the layout was cut by.
	Rates shard.Rates
}

// planPoints is how many dots the planner places in an area that spans
// several blocks, to see how its people spread over them.
const planPoints = 64

// PlanShards computes the layout of an n-part render of m from its loaded
// input, cut by rates (nil: shard.MeasuredRates). Every part, the plan and
// the final step must be given the same rates.
func PlanShards(in *Input, m *mapfile.Map, n int, hidpi bool, rates *shard.Rates) (*ShardPlan, error) {
	areas := shardAreas(in, m)
	p := shard.Pyramid{MinZoom: m.Tiles.MinZoom, MaxZoom: m.Tiles.MaxZoom, TileSize: m.Tiles.Size, HiDPI: hidpi, Look: Look(m), Categories: len(m.Categories)}
	r := shard.MeasuredRates
	if rates != nil {
		r = *rates
	}
	l, err := shard.Plan(areas, p, shard.PlanOptions{Shards: n, Rates: &r})
	if err != nil {
		return nil, fmt.Errorf("%s: %w", m.Path, err)
	}
	return &ShardPlan{Layout: l, Areas: areas, Look: LookFingerprint(in, m, hidpi), HiDPI: hidpi, Rates: r}, nil
}

// shardAreas describes the input's areas for shard.Plan: bound, expected
// dots and, lazily, the first planPoints dots the area would get (the
// sampler's dot i is the same point whatever the total, so these are real
// dots of the render).
func shardAreas(in *Input, m *mapfile.Map) []shard.Area {
	fs := in.Layer.Features
	areas := make([]shard.Area, len(fs))
	sopt := sample.Options{PeoplePerDot: m.PeoplePerDot, Seed: m.Seed, Masks: in.Masks, Streams: Streams(m)}
	for i := range fs {
		f := &fs[i]
		dots := in.Dots[i]
		total := 0
		for _, d := range dots {
			total += d
		}
		areas[i] = shard.Area{Bound: f.Geometry.Bound(), Dots: float64(total), Fill: shard.FillOf(f.Geometry)}
		if len(f.Geometry) == 0 {
			// No part samples it (TallyAreas counts its people as not
			// drawn), so it weighs on no block.
			areas[i].Dots = 0
			continue
		}
		if total == 0 {
			continue
		}
		areas[i].Points = func() []orb.Point {
			few := make([]int, len(dots))
			for k, d := range dots {
				few[k] = min(int(math.Ceil(float64(d)*planPoints/float64(total))), d)
			}
			var pts []orb.Point
			sample.FeatureN(f, few, sopt, func(_ int, p orb.Point) { pts = append(pts, p) })
			return pts
		}
	}
	return areas
}

// PartDir is the local folder that keeps the state of part i of n of a
// render into out (its kept dots and its tile manifest): a folder of its
// own inside StateDir(out, work), so parts sharing an output or a machine
// never share state.
func PartDir(out, work string, i, n int) string {
	return filepath.Join(StateDir(out, work), "part-"+shard.Name(i, n))
}

// RunPart renders part i of a sharded render of m into its output (a
// folder, file:// URL or bucket), as Run would render those tiles:
//
//   - it places the dots of the areas that come within the layout's
//     margin of its blocks (areas without geometry are left to the final
//     step's tally), keeping the dots within the margin, in its own state
//     folder (PartDir), so a killed part resumes from its kept dots;
//   - it draws the tiles of zooms Split … max that its blocks hold
//     straight into the output, keeping those an interrupted run finished;
//   - it writes its summary of the dots for the final step, then its
//     report (shard.Report), with the outcomes of the areas it owns.
//
// A part whose report is in the output with the same layout and look is
// complete and is not run again.
func RunPart(ctx context.Context, in *Input, m *mapfile.Map, plan *ShardPlan, i int, opt Options) (*shard.Report, error) {
	l := plan.Layout
	n := l.Shards
	if i < 0 || i >= n {
		return nil, fmt.Errorf("shard: part %d of %d; want 0 ≤ part < %d", i, n, n)
	}
	name := fmt.Sprintf("%d/%d", i, n)
	logf := func(format string, a ...any) {
		if opt.Log != nil {
			fmt.Fprintf(opt.Log, format+"\n", a...)
		}
	}
	budget := opt.budget()
	defer debug.SetMemoryLimit(debug.SetMemoryLimit(max(budget, 512<<20)))
	out, err := sink.Open(ctx, m.Out)
	if err != nil {
		return nil, err
	}
	defer out.Close()
	if r, _, ok, err := shard.ReadReport(ctx, out, i, n); err != nil {
		return nil, err
	} else if ok && r.Layout == l.Fingerprint() && r.Look == plan.Look {
		logf("part %s is already complete in %s", name, out)
		return r, nil
	} else if ok {
		// A report of another render: this part is not complete any
		// more once its tiles start to change.
		for _, p := range []string{shard.ReportPath(i, n), shard.SummaryPath(i, n)} {
			if err := out.Delete(ctx, p); err != nil {
				return nil, err
			}
		}
	}

	fs := in.Layer.Features
	areas := []int{} // not nil: nil would place every area
	expected := 0
	for j := range fs {
		if len(fs[j].Geometry) > 0 && l.Touches(i, fs[j].Geometry.Bound()) {
			areas = append(areas, j)
			for _, d := range in.Dots[j] {
				expected += d
			}
		}
	}
	dir := PartDir(m.Out, opt.Work, i, n)
	done, err := markWriter(ctx, dir, out)
	if err != nil {
		return nil, err
	}
	defer done()
	prog := newProgress(opt.Log, opt.ProgressEvery)
	defer prog.stop()
	t0 := time.Now()
	prog.startPlace(int64(expected))
	pl, err := Place(ctx, in, m, PlaceOptions{
		Workers: opt.Workers, Memory: storeBudget(budget), Dir: dir, Areas: areas, Placed: &prog.placed,
		// Only the dots within the margin of the part's blocks are
		// stored; the others are placed (an area's dots depend on its
		// own seeded streams alone) and dropped at once.
		Keep: func(k uint64) bool {
			x, y, _ := dotstore.Split(k)
			return l.Keeps(i, x, y)
		},
		Variant: "shard " + l.Fingerprint() + " " + shard.Name(i, n),
	})
	prog.endPhase()
	if err != nil {
		return nil, err
	}
	defer pl.Store.Close()
	if pl.Reused {
		logf("part %s: reusing %d kept dots in %s", name, pl.Store.Len(), dir)
	} else {
		debug.FreeOSMemory()
		logf("part %s: placed %d dots of %d areas, kept %d (%s) in %s%s", name, pl.Sampled, len(areas), pl.Store.Len(),
			render.DotNote(m.PeoplePerDot), time.Since(t0).Round(time.Millisecond), spillNote(pl.Runs))
	}
	rep := &shard.Report{
		Layout: l.Fingerprint(), Look: plan.Look, Shard: i, Shards: n, EstimatedDots: l.Dots[i],
		AreasSampled: len(areas), DotsSampled: pl.Sampled, DotsKept: int64(pl.Store.Len()),
		PlaceSeconds: time.Since(t0).Seconds(), PerZoom: map[int]int64{}, Areas: []shard.AreaResult{},
	}
	for _, j := range areas {
		if l.AreaOwner(fs[j].Geometry.Bound()) != i {
			continue
		}
		rep.AreasOwned++
		if o, ok := pl.Outcomes[j]; ok {
			rep.Areas = append(rep.Areas, shard.AreaResult{Index: j, Lost: o.Lost, Beyond: o.Beyond, Problem: o.Problem})
		}
	}

	// Only the part's own tiles are drawn: the margin dots ink the edges
	// of those, and the neighbours draw the tiles beyond.
	t0 = time.Now()
	prog.startTiles()
	st, err := tiles.Write(ctx, pl.Store, tiles.Options{
		Dir: dir, Out: out, MinZoom: l.Split, MaxZoom: m.Tiles.MaxZoom, TileSize: m.Tiles.Size,
		Colors: m.RGBA(), Look: Look(m), Workers: opt.Workers, HiDPI: plan.HiDPI,
		Fingerprint: plan.Look + "/" + l.Fingerprint() + "/" + shard.Name(i, n),
		Keep:        func(z, x, y int) bool { return l.Owner(z, x, y) == i },
		Progress:    prog.tile,
	})
	prog.endPhase()
	if err != nil {
		return nil, err
	}
	rep.Tiles, rep.Tiles2x, rep.TileBytes = st.Tiles, st.Tiles2x, st.Bytes
	for z, c := range st.PerZoom {
		if c > 0 {
			rep.PerZoom[z] = c
		}
	}
	rep.TileSeconds = time.Since(t0).Seconds()
	kept := ""
	if st.Kept > 0 {
		kept = fmt.Sprintf(", %d kept from an interrupted run", st.Kept)
	}
	logf("part %s: wrote %d tiles (%.1f MB) of zooms %d–%d to %s in %s%s", name, st.Tiles+st.Tiles2x, float64(st.Bytes)/1e6,
		l.Split, m.Tiles.MaxZoom, out, time.Since(t0).Round(time.Millisecond), kept)

	// The summary of the own dots for the final step, then the report.
	own := l.OwnedKeys(pl.Store.Keys(), i)
	rep.DotsOwned = int64(len(own))
	sum := &shard.Summary{Level: l.Level()}
	if l.Split > l.MinZoom {
		sum = shard.Summarize(own, l.Level())
	}
	rep.SummaryCells = len(sum.Keys)
	if err := shard.WriteReport(ctx, out, rep, sum); err != nil {
		return nil, err
	}
	return rep, nil
}

// RunFinal is the last step of a sharded render, after all its parts: it
// draws the zooms above the split from the parts' summaries, tallies every
// area from the outcomes the parts report (TallyAreas, so areas without
// geometry, which no part samples, are counted as Run counts them), and
// writes the legends, map.json and the viewer through the output's sink
// (PutFurniture). The result is that of Run on the same map.
func RunFinal(ctx context.Context, in *Input, m *mapfile.Map, plan *ShardPlan, opt Options) (*Summary, error) {
	start := time.Now()
	logf := func(format string, a ...any) {
		if opt.Log != nil {
			fmt.Fprintf(opt.Log, format+"\n", a...)
		}
	}
	l := plan.Layout
	out, err := sink.Open(ctx, m.Out)
	if err != nil {
		return nil, err
	}
	defer out.Close()
	reps, merged, err := shard.Collect(ctx, out, l, plan.Look)
	if err != nil {
		return nil, err
	}
	outcomes, err := mergeOutcomes(in, l, reps)
	if err != nil {
		return nil, err
	}
	colors := m.RGBA()
	t0 := time.Now()
	low, err := shard.RenderLow(ctx, merged, l, out, shard.LowOptions{Colors: colors, Workers: opt.Workers})
	if err != nil {
		return nil, err
	}
	if l.Split > m.Tiles.MinZoom {
		logf("final: zooms %d–%d from %d summary cells (%d dots) in %s", m.Tiles.MinZoom, l.Split-1, len(merged.Keys), merged.Dots(), time.Since(t0).Round(time.Millisecond))
	}

	sum := &Summary{Tally: TallyAreas(in, m, outcomes, nil), OutputDir: m.Out}
	if in.Join != nil {
		sum.RowsWithoutArea = in.Join.PeopleInUnmatchedTotal
	}
	drawn := 0
	for _, d := range sum.Dots {
		drawn += d
	}
	if drawn == 0 {
		return nil, fmt.Errorf("%s: no dots to draw: the categories' fields hold no people at %s", m.Path, render.DotNote(m.PeoplePerDot))
	}
	st := tiles.Stats{PerZoom: map[int]int64{}}
	for zk, zs := range low {
		zs0, suffix, _ := strings.Cut(zk, "@")
		z, err := strconv.Atoi(zs0)
		if err != nil {
			return nil, fmt.Errorf("shard: zoom key %q", zk)
		}
		if suffix == "" {
			st.Tiles += zs.Tiles
			if zs.Tiles > 0 {
				st.PerZoom[z] += zs.Tiles
			}
		} else {
			st.Tiles2x += zs.Tiles
		}
		st.Bytes += zs.Bytes
	}
	for _, r := range reps {
		st.Tiles += r.Tiles
		st.Tiles2x += r.Tiles2x
		st.Bytes += r.TileBytes
		for z, c := range r.PerZoom {
			if c > 0 {
				st.PerZoom[z] += c
			}
		}
	}
	sum.Tiles = st
	sum.Metadata = Metadata(m, sum)
	if err := PutMeasures(ctx, out, in, m, nil, sum.Metadata); err != nil {
		return nil, err
	}
	if err := PutReferences(ctx, out, in, m); err != nil {
		return nil, err
	}
	if err := PutFurniture(ctx, out, sum.Metadata, colors); err != nil {
		return nil, err
	}
	sum.Elapsed = time.Since(start)
	sum.PeakRSS = peakRSS()
	logf("final: %d tiles in all (%.1f MB), map.json, legends and viewer in %s", st.Tiles+st.Tiles2x, float64(st.Bytes)/1e6, out)
	return sum, nil
}

// mergeOutcomes gathers the outcomes the parts report. Every area with
// geometry is owned by exactly one part (Layout.AreaOwner), which reports
// it when its dots did not all go plainly; an area reported twice, by a
// part that does not own it, or without geometry (no part samples it)
// means the reports do not belong together. The parts together must own
// every area with geometry.
func mergeOutcomes(in *Input, l *shard.Layout, reps []*shard.Report) (Outcomes, error) {
	fs := in.Layer.Features
	outcomes := Outcomes{}
	by := map[int]int{}
	owned := 0
	for _, r := range reps {
		owned += r.AreasOwned
		for _, a := range r.Areas {
			if a.Index < 0 || a.Index >= len(fs) {
				return nil, fmt.Errorf("shard: part %d/%d reports area %d; the input has %d areas", r.Shard, r.Shards, a.Index, len(fs))
			}
			if j, dup := by[a.Index]; dup {
				return nil, fmt.Errorf("shard: parts %d/%d and %d/%d both report area %d (id %q)", j, r.Shards, r.Shard, r.Shards, a.Index, fs[a.Index].ID)
			}
			by[a.Index] = r.Shard
		}
	}
	for _, r := range reps {
		for _, a := range r.Areas {
			f := &fs[a.Index]
			if len(f.Geometry) == 0 || l.AreaOwner(f.Geometry.Bound()) != r.Shard {
				return nil, fmt.Errorf("shard: part %d/%d reports area %d (id %q), which is not one of its own", r.Shard, r.Shards, a.Index, f.ID)
			}
			outcomes[a.Index] = Outcome{Lost: a.Lost, Beyond: a.Beyond, Problem: a.Problem}
		}
	}
	want := 0
	for i := range fs {
		if len(fs[i].Geometry) > 0 {
			want++
		}
	}
	if owned != want {
		return nil, fmt.Errorf("shard: the parts own %d areas; the input has %d with geometry", owned, want)
	}
	return outcomes, nil
}

// Estimate predicts what a render of m writes (tiles and bytes per zoom)
// and the CPU it takes, from the areas' shapes and dots, without placing a
// dot: shard.EstimateTiles at rates (nil: shard.MeasuredRates) over a
// one-part layout. stipple inspect --map and stipple plan both print it.
func Estimate(in *Input, m *mapfile.Map, hidpi bool, rates *shard.Rates) (shard.Estimate, error) {
	sp, err := PlanShards(in, m, 1, hidpi, rates)
	if err != nil {
		return shard.Estimate{}, err
	}
	return shard.EstimateTiles(sp.Areas, sp.Layout, sp.Rates), nil
}
