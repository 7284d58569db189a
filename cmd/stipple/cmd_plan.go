package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"text/tabwriter"
	"time"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"github.com/stipple-maps/stipple/tiles/shard"
	"github.com/stipple-maps/stipple/tiles/sink"
)

var planDoc = register(cmdDoc{Name: "plan", Order: 80, Usage: "plan MAP.toml --shards N [flags]",
	Short: "size a render cut into N parts: work per part, tiles, bytes, core-hours",
	About: "Reads the map's areas and counts, places no dot, and prints how render --shard would cut the map " +
		"into N parts balanced by work: each part's dots, areas, tiles, megabytes and core-hours, the final " +
		"step's share, and the expected tiles per zoom. The override flags change the map as they would for render.",
	Examples: []string{
		"stipple plan map.toml --shards 8",
		"stipple plan map.toml --shards 32 --max-zoom 14 --json",
		"stipple plan map.toml --shards 16 --probe /data/out --rates rates.json",
		"stipple render map.toml --shard 3/16 --rates rates.json",
	}})

// ratesUsage is the text of --rates, which render, plan and inspect share.
const ratesUsage = "rates `file` that stipple plan --probe wrote: the measured costs that cut a sharded render into parts; " +
	"give every part, the plan and the final step the same file (default: the rates measured for BENCHMARKS.md)"

// readRates reads the --rates file; nil for none.
func readRates(name string) (*shard.Rates, error) {
	if name == "" {
		return nil, nil
	}
	r, err := shard.ReadRates(name)
	if err != nil {
		return nil, err
	}
	return &r, nil
}

// Probe sizes: probeFiles files of probeBytes (about a sparse deep tile's
// PNG), probePerDir to a folder as in a zoom's columns.
const (
	probeFiles  = 4000
	probeBytes  = 2048
	probePerDir = 64
)

// probeRates measures what a tile file costs in the output folder or
// bucket at out (shard.ProbeFiles, in a folder of its own that it removes
// again) and returns the default rates with that cost.
func probeRates(ctx context.Context, out string) (shard.Rates, error) {
	r := shard.MeasuredRates
	s, err := sink.Open(ctx, out)
	if err != nil {
		return r, err
	}
	defer s.Close()
	prefix := tiles.StateDir + "/probe-" + fmt.Sprint(os.Getpid(), "-", time.Now().UnixNano())
	ns, err := shard.ProbeFiles(ctx, s, prefix, probeFiles, probeBytes, probePerDir)
	if d, ok := s.(*sink.Dir); ok {
		os.RemoveAll(filepath.Join(d.Root(), filepath.FromSlash(prefix)))
	}
	if err != nil {
		return r, fmt.Errorf("%s: %w", out, err)
	}
	r.FileNs = ns
	r.Source = fmt.Sprintf("%s, tile files probed in %s on %s (%.0f µs a file)", shard.MeasuredRates.Source, out, time.Now().UTC().Format("2006-01-02"), ns/1e3)
	return r, nil
}

// cmdPlan is "stipple plan MAP.toml --shards N": how a render of the map
// would be cut into N parts, the work of each, and the expected tiles,
// bytes and core-hours, without placing a dot.
func cmdPlan(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("plan", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var o overrides
	o.register(fs)
	n := fs.Int("shards", 1, "number of parts")
	asJSON := fs.Bool("json", false, "print the plan as JSON")
	rates := fs.String("rates", "", ratesUsage)
	probe := fs.String("probe", "", "measure what writing a tile file costs in this output `folder` or bucket, cut the plan by it, and save the rates to --rates FILE for the parts: writes and removes a few thousand small files (default: no probe)")
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usageError{"plan takes one map file"}
	}
	if *n < 1 {
		return usageError{"--shards must be at least 1"}
	}
	m, err := mapfile.Read(pos[0])
	if err != nil {
		return err
	}
	if err := o.apply(m); err != nil {
		return err
	}
	var r *shard.Rates
	if *probe != "" {
		if *rates == "" {
			return usageError{"--probe saves what it measures: give --rates FILE too"}
		}
		pr, err := probeRates(ctx, *probe)
		if err != nil {
			return err
		}
		if err := shard.WriteRates(*rates, pr); err != nil {
			return err
		}
		fmt.Fprintf(stderr, "plan: a tile file in %s costs %.0f µs; rates saved to %s (give every part --rates %s)\n", *probe, pr.FileNs/1e3, *rates, *rates)
		r = &pr
	} else if r, err = readRates(*rates); err != nil {
		return err
	}
	in, err := mapjob.Load(m, nil)
	if err != nil {
		return err
	}
	sp, err := mapjob.PlanShards(in, m, *n, o.hidpi || m.Tiles.HiDPI, r)
	if err != nil {
		return err
	}
	p := makePlan(sp)
	if *asJSON {
		b, _ := json.MarshalIndent(p, "", "  ")
		_, err := fmt.Fprintf(stdout, "%s\n", b)
		return err
	}
	printPlan(stdout, m, p)
	return nil
}

// shardPlan is the plan command's result.
type shardPlan struct {
	Layout *shard.Layout   `json:"layout"`
	Shards []shardWork     `json:"shards"`
	Est    shard.Estimate  `json:"estimate"`
	Final  shard.FinalWork `json:"final_step"`
	Rates  shard.Rates     `json:"rates"`
	Dots   float64         `json:"dots"`
	Areas  int             `json:"areas"`
}

type shardWork struct {
	shard.ShardWork
	Share float64 `json:"share_of_dots"`
}

func makePlan(sp *mapjob.ShardPlan) *shardPlan {
	areas := sp.Areas
	rates := sp.Rates
	est := shard.EstimateTiles(areas, sp.Layout, rates)
	p := &shardPlan{Layout: sp.Layout, Est: est, Rates: rates, Areas: len(areas)}
	for _, a := range areas {
		p.Dots += a.Dots
	}
	for _, w := range shard.Work(areas, sp.Layout, est, rates) {
		p.Shards = append(p.Shards, shardWork{ShardWork: w, Share: w.OwnDots / max(p.Dots, 1)})
	}
	p.Final = shard.Final(sp.Layout, est, rates)
	return p
}

func printPlan(w io.Writer, m *mapfile.Map, p *shardPlan) {
	l := p.Layout
	fmt.Fprintf(w, "%s: %d areas, about %s dots (%s), zooms %d–%d, %d px tiles\n", m.Path, p.Areas, render.FormatCount(math.Round(p.Dots)), render.DotNote(m.PeoplePerDot), l.MinZoom, l.MaxZoom, m.Tiles.Size)
	fmt.Fprintf(w, "split zoom %d: %d blocks with people, margin %d world cells; largest part %.3f× the mean (estimated); layout %s\n",
		l.Split, l.Blocks, l.Margin, l.Imbalance(), l.Fingerprint()[:12])
	tw := tabwriter.NewWriter(w, 2, 8, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "part\tdots (own)\tshare\tareas sampled\tdots sampled\ttiles\tMB\tcore-hours\t")
	for _, s := range p.Shards {
		fmt.Fprintf(tw, "%d/%d\t%s\t%.1f%%\t%d\t%s\t%s\t%.1f\t%.3f\t\n", s.Shard, l.Shards, render.FormatCount(math.Round(s.OwnDots)), 100*s.Share, s.Areas,
			render.FormatCount(math.Round(s.SampledDots)), render.FormatCount(math.Round(s.Tiles)), s.Bytes/1e6, s.CoreHours)
	}
	f := p.Final
	fmt.Fprintf(tw, "final\t%s pixels\t\t\t\t%s\t%.1f\t%.3f\t\n", render.FormatCount(math.Round(f.Cells)), render.FormatCount(math.Round(f.Tiles)), f.Bytes/1e6, f.CoreHours)
	tw.Flush()
	fmt.Fprintln(w, "expected tiles per zoom (1× tiles; estimates from the areas' shapes and dots, within 25% of what a render wrote on the maps of BENCHMARKS.md):")
	tw = tabwriter.NewWriter(w, 2, 8, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "zoom\tkind\ttiles\tMB\tpart\t")
	for _, z := range p.Est.Zooms {
		kind, who := "count", "parts"
		if z.Disc {
			kind = "disc"
		}
		if z.Zoom < l.Split {
			who = "final"
		}
		fmt.Fprintf(tw, "%d\t%s\t%s\t%.1f\t%s\t\n", z.Zoom, kind, render.FormatCount(math.Round(z.Tiles)), z.Bytes/1e6, who)
	}
	tw.Flush()
	fmt.Fprintf(w, "total: about %s tiles, %s, %.2f core-hours (rates measured on %s)\n", render.FormatCount(math.Round(p.Est.Tiles)), sizeText(p.Est.Bytes), p.Est.CoreHours, p.Rates.Source)
}
