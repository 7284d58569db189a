package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"hash"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/sample"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"github.com/stipple-maps/stipple/tiles/shard"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// shardSpec is a parsed --shard value: part Index of Count, or the final
// step of a Count-part render.
type shardSpec struct {
	Index, Count int
	Final        bool
	// From names where an "auto" index came from, for the log.
	From string
}

func (s shardSpec) String() string {
	if s.Final {
		return fmt.Sprintf("final/%d", s.Count)
	}
	return fmt.Sprintf("%d/%d", s.Index, s.Count)
}

// indexVars are the environment variables of array-job schedulers that
// hold a task's index, tried in this order by --shard auto. All are
// 0-based as stipple uses them; SLURM counts from whatever --array says,
// so give it --array=0-(N-1).
//
//	JOB_COMPLETION_INDEX       Kubernetes Indexed Job (batch/v1 Job, completionMode: Indexed)
//	SLURM_ARRAY_TASK_ID        SLURM job arrays (sbatch --array), from memory
//	AWS_BATCH_JOB_ARRAY_INDEX  AWS Batch array jobs, from memory
//	STIPPLE_SHARD_INDEX        anything else: set it yourself
var indexVars = []string{"JOB_COMPLETION_INDEX", "SLURM_ARRAY_TASK_ID", "AWS_BATCH_JOB_ARRAY_INDEX", "STIPPLE_SHARD_INDEX"}

// countVars may hold the number of tasks when --shard auto gives none:
// SLURM_ARRAY_TASK_COUNT (from memory) and STIPPLE_SHARDS. Kubernetes has
// no such variable: the count is the Job's completions, repeated in
// --shard auto/N.
var countVars = []string{"STIPPLE_SHARDS", "SLURM_ARRAY_TASK_COUNT"}

const shardUsage = "render one part of the map: I/N (part I of N, 0 ≤ I < N), auto/N or auto (I from the scheduler's environment: " +
	"JOB_COMPLETION_INDEX, SLURM_ARRAY_TASK_ID, AWS_BATCH_JOB_ARRAY_INDEX or STIPPLE_SHARD_INDEX), or final/N (after all N parts: " +
	"the zooms above the split, metadata, legend and viewer)"

// parseShard reads a --shard value; getenv supplies the environment.
func parseShard(v string, getenv func(string) string) (shardSpec, error) {
	bad := func(why string) (shardSpec, error) {
		return shardSpec{}, usageError{fmt.Sprintf("--shard %q: %s (want I/N, auto/N, auto or final/N)", v, why)}
	}
	head, tail, hasN := strings.Cut(strings.TrimSpace(v), "/")
	var s shardSpec
	if hasN {
		n, err := strconv.Atoi(tail)
		if err != nil || n < 1 {
			return bad("the shard count must be a whole number ≥ 1")
		}
		s.Count = n
	} else {
		for _, name := range countVars {
			if e := getenv(name); e != "" {
				n, err := strconv.Atoi(e)
				if err != nil || n < 1 {
					return bad(fmt.Sprintf("%s=%q is not a shard count", name, e))
				}
				s.Count = n
				break
			}
		}
		if s.Count == 0 {
			return bad("no shard count: give it as auto/N (or set STIPPLE_SHARDS)")
		}
	}
	switch head {
	case "final":
		s.Final = true
	case "auto":
		for _, name := range indexVars {
			if e := getenv(name); e != "" {
				i, err := strconv.Atoi(e)
				if err != nil {
					return bad(fmt.Sprintf("%s=%q is not a shard index", name, e))
				}
				s.Index, s.From = i, name
				break
			}
		}
		if s.From == "" {
			return bad("none of " + strings.Join(indexVars, ", ") + " is set")
		}
	default:
		i, err := strconv.Atoi(head)
		if err != nil {
			return bad("the shard index must be a whole number, auto or final")
		}
		s.Index = i
	}
	if !s.Final && (s.Index < 0 || s.Index >= s.Count) {
		if s.From != "" {
			return bad(fmt.Sprintf("%s=%d is outside 0…%d", s.From, s.Index, s.Count-1))
		}
		return bad(fmt.Sprintf("index %d is outside 0…%d", s.Index, s.Count-1))
	}
	return s, nil
}

// shardFlag is --shard as a flag.Value; the environment is read when the
// flag is set.
type shardFlag struct {
	spec shardSpec
	set  bool
}

func (f *shardFlag) String() string {
	if !f.set {
		return ""
	}
	return f.spec.String()
}

func (f *shardFlag) Set(v string) error {
	s, err := parseShard(v, os.Getenv)
	if err != nil {
		return err
	}
	f.spec, f.set = s, true
	return nil
}

// shardOptions are run settings of a sharded render.
type shardOptions struct {
	Workers int
	// Work is a local folder for the part's working files (its dots and
	// its tiles before they go to the output); "" picks one: inside the
	// output's .stipple folder for a local output, else in the system's
	// temporary folder.
	Work string
	// Log receives progress lines.
	Log io.Writer
	// HiDPI also draws @2x tiles (as does tiles.hidpi in the map file).
	HiDPI bool
}

// shardedMap is what every part and the final step compute alike from
// the map and its input.
type shardedMap struct {
	m      *mapfile.Map
	in     *mapjob.Input
	layout *shard.Layout
	look   string // fingerprint of the dots and their look
	hidpi  bool
}

// planShards loads the input and computes the layout for n shards.
func planShards(m *mapfile.Map, n int, hidpi bool) (*shardedMap, error) {
	in, err := mapjob.Load(m, nil)
	if err != nil {
		return nil, err
	}
	l, err := layoutFor(m, in, n, hidpi)
	if err != nil {
		return nil, err
	}
	return &shardedMap{m: m, in: in, layout: l, look: lookFingerprint(m, in, hidpi), hidpi: hidpi}, nil
}

// planPoints is how many dots the planner places in an area that spans
// several blocks, to see how its people spread over them.
const planPoints = 64

// areasOf describes the input's areas for shard.Plan: bound, expected
// dots and, lazily, the first planPoints dots the area would get (the
// sampler's dot i is the same point whatever the total, so these are
// real dots of the render).
func areasOf(m *mapfile.Map, in *mapjob.Input) []shard.Area {
	fs := in.Layer.Features
	areas := make([]shard.Area, len(fs))
	sopt := sample.Options{PeoplePerDot: m.PeoplePerDot, Seed: m.Seed, Masks: in.Masks, Streams: mapjob.Streams(m)}
	for i := range fs {
		f := &fs[i]
		dots := make([]int, len(m.Categories))
		total := 0
		for k := range dots {
			if len(in.Dots) == len(fs) && len(in.Dots[i]) == len(dots) {
				dots[k] = in.Dots[i][k]
			} else {
				dots[k] = sample.DotCount(in.Counts[i][k], m.PeoplePerDot, m.Seed, sample.IDHash(f.ID), k)
			}
			total += dots[k]
		}
		areas[i] = shard.Area{Bound: f.Geometry.Bound(), Dots: float64(total), Fill: shard.FillOf(f.Geometry)}
		if total == 0 || len(f.Geometry) == 0 {
			continue
		}
		areas[i].Points = func() []orb.Point {
			few := make([]int, len(dots))
			for k, d := range dots {
				few[k] = int(math.Ceil(float64(d) * planPoints / float64(total)))
				few[k] = min(few[k], d)
			}
			var pts []orb.Point
			sample.FeatureN(f, few, sopt, func(_ int, p orb.Point) { pts = append(pts, p) })
			return pts
		}
	}
	return areas
}

func pyramidOf(m *mapfile.Map, hidpi bool) shard.Pyramid {
	return shard.Pyramid{MinZoom: m.Tiles.MinZoom, MaxZoom: m.Tiles.MaxZoom, TileSize: m.Tiles.Size, HiDPI: hidpi, Look: mapjob.Look(m)}
}

func layoutFor(m *mapfile.Map, in *mapjob.Input, n int, hidpi bool) (*shard.Layout, error) {
	l, err := shard.Plan(areasOf(m, in), pyramidOf(m, hidpi), shard.PlanOptions{Shards: n})
	if err != nil {
		return nil, fmt.Errorf("%s: %w", m.Path, err)
	}
	return l, nil
}

// lookFingerprint hashes everything a part's tiles depend on: the areas'
// geometry and counts, the sampling settings, and the tile settings and
// look. Parts and the final step refuse to mix results of different ones.
func lookFingerprint(m *mapfile.Map, in *mapjob.Input, hidpi bool) string {
	h := sha256.New()
	fmt.Fprintf(h, "stipple-shard-look/1 %s\nid=%q seed=%d perdot=%x rounding=%q mask=%q size=%d zooms=%d-%d hidpi=%v\n",
		mapjob.Version, m.Input.ID, m.Seed, math.Float64bits(m.PeoplePerDot), m.Rounding, m.Input.Mask, m.Tiles.Size, m.Tiles.MinZoom, m.Tiles.MaxZoom, hidpi)
	for _, c := range m.Categories {
		fmt.Fprintf(h, "cat %q %q %q %q\n", c.Key, c.Label, c.Color, c.Fields)
	}
	look := mapjob.Look(m)
	for z := 0; z <= 24; z++ {
		d := look(z)
		fmt.Fprintf(h, "z%d %x %x\n", z, math.Float64bits(d.Diameter), math.Float64bits(d.Opacity))
	}
	var b [8]byte
	f64 := func(w hash.Hash, v float64) { binary.LittleEndian.PutUint64(b[:], math.Float64bits(v)); w.Write(b[:]) }
	for i, f := range in.Layer.Features {
		fmt.Fprintf(h, "f%d %q %d\n", f.Index, f.ID, len(f.Geometry))
		for _, c := range in.Counts[i] {
			f64(h, c)
		}
		if len(in.Dots) > i {
			fmt.Fprintf(h, "%v", in.Dots[i])
		}
		for _, poly := range f.Geometry {
			for _, ring := range poly {
				fmt.Fprintf(h, "r%d", len(ring))
				for _, p := range ring {
					f64(h, p[0])
					f64(h, p[1])
				}
			}
		}
	}
	return hex.EncodeToString(h.Sum(nil))
}

// renderSharded runs part spec of a sharded render of m into m.Out, or
// the final step.
func renderSharded(ctx context.Context, m *mapfile.Map, spec shardSpec, opt shardOptions) error {
	logf := func(format string, a ...any) {
		if opt.Log != nil {
			fmt.Fprintf(opt.Log, format+"\n", a...)
		}
	}
	start := time.Now()
	sm, err := planShards(m, spec.Count, opt.HiDPI || m.Tiles.HiDPI)
	if err != nil {
		return err
	}
	out, err := sink.Open(ctx, m.Out)
	if err != nil {
		return err
	}
	defer out.Close()
	l := sm.layout
	from := ""
	if spec.From != "" {
		from = " (index from " + spec.From + ")"
	}
	logf("shard %s%s: split zoom %d, %d blocks, estimated imbalance %.3f, layout %s", spec, from, l.Split, l.Blocks, l.Imbalance(), l.Fingerprint()[:12])
	if spec.Final {
		s, err := runFinal(ctx, sm, out, opt, logf)
		if err != nil {
			return err
		}
		s.Elapsed = time.Since(start)
		if opt.Log != nil {
			printSummary(opt.Log, s)
		}
		return nil
	}
	rep, err := runShard(ctx, sm, spec.Index, out, opt, logf)
	if err != nil {
		return err
	}
	logf("shard %s done in %s: %d of %d areas sampled, %d dots kept (%d own), %d tiles", spec, time.Since(start).Round(time.Millisecond),
		rep.AreasSampled, len(sm.in.Layer.Features), rep.DotsKept, rep.DotsOwned, zoomTiles(rep.Zooms))
	return nil
}

func zoomTiles(z map[string]tiles.ZoomStats) int64 {
	var n int64
	for _, s := range z {
		n += s.Tiles
	}
	return n
}

// workDir is the local folder of part i's working files.
func workDir(opt shardOptions, m *mapfile.Map, look string, i, n int) string {
	if opt.Work != "" {
		return filepath.Join(opt.Work, shard.Name(i, n))
	}
	if !sink.IsBucketURL(m.Out) {
		return filepath.Join(m.Out, tiles.StateDir, "work-"+shard.Name(i, n))
	}
	return filepath.Join(os.TempDir(), "stipple-"+look[:12]+"-"+shard.Name(i, n))
}

// keptInfo sits beside a part's kept dots, so a rerun of a killed part
// need not sample again.
type keptInfo struct {
	Look    string             `json:"look"`
	Layout  string             `json:"layout"`
	Dots    int                `json:"dots"`
	Sampled int64              `json:"dots_sampled"`
	Areas   []shard.AreaResult `json:"areas"`
	NAreas  int                `json:"areas_sampled"`
	Place   float64            `json:"place_seconds"`
}

// runShard renders part i: it samples the areas that come within the
// margin of its blocks, keeps the dots within the margin, draws zooms
// split … max of them into its working folder, copies the tiles of its own
// blocks to the output, and writes its summary and report last.
func runShard(ctx context.Context, sm *shardedMap, i int, out sink.Sink, opt shardOptions, logf func(string, ...any)) (*shard.Report, error) {
	m, l := sm.m, sm.layout
	n := l.Shards
	if r, _, ok, err := shard.ReadReport(ctx, out, i, n); err != nil {
		return nil, err
	} else if ok && r.Layout == l.Fingerprint() && r.Look == sm.look {
		logf("shard %d/%d is already complete in %s", i, n, out)
		return r, nil
	}
	work := workDir(opt, m, sm.look, i, n)
	if err := os.MkdirAll(filepath.Join(work, tiles.StateDir), 0o755); err != nil {
		return nil, fmt.Errorf("output: %w", err)
	}
	rep := &shard.Report{Layout: l.Fingerprint(), Look: sm.look, Shard: i, Shards: n, EstimatedDots: l.Dots[i]}

	// Dots: reuse the kept dots of an earlier, killed run of this part.
	keptPath := filepath.Join(work, tiles.StateDir, "kept.bin")
	infoPath := filepath.Join(work, tiles.StateDir, "kept.json")
	var store *dotstore.Store
	var info keptInfo
	if b, err := os.ReadFile(infoPath); err == nil && json.Unmarshal(b, &info) == nil && info.Look == sm.look && info.Layout == rep.Layout {
		if s, err := dotstore.Open(keptPath); err == nil && s.Len() == info.Dots {
			store = s
			logf("shard %d/%d: reusing %d kept dots from %s", i, n, s.Len(), work)
		} else if s != nil {
			s.Close()
		}
	}
	if store == nil {
		t0 := time.Now()
		var err error
		store, info, err = placeShard(ctx, sm, i, work, opt.Workers)
		if err != nil {
			return nil, err
		}
		info.Place = time.Since(t0).Seconds()
		if err := store.WriteFile(keptPath); err != nil {
			return nil, err
		}
		b, _ := json.Marshal(info)
		if err := tiles.WriteFileAtomic(infoPath, b); err != nil {
			return nil, err
		}
		logf("shard %d/%d: sampled %d areas, %d dots, kept %d in %s", i, n, info.NAreas, info.Sampled, store.Len(), time.Since(t0).Round(time.Millisecond))
	}
	defer store.Close()
	rep.Areas, rep.AreasSampled, rep.DotsSampled, rep.DotsKept, rep.PlaceSeconds = info.Areas, info.NAreas, info.Sampled, int64(store.Len()), info.Place

	// Tiles of zooms split … max, into the working folder.
	t0 := time.Now()
	colors := m.RGBA()
	if store.Len() > 0 {
		// Only the part's own tiles are drawn: the margin dots ink the
		// edges of those, and the neighbours draw the tiles beyond.
		if _, err := tiles.Write(ctx, store, tiles.Options{
			Dir: work, MinZoom: l.Split, MaxZoom: m.Tiles.MaxZoom, TileSize: m.Tiles.Size,
			Colors: colors, Look: mapjob.Look(m), Workers: opt.Workers, HiDPI: sm.hidpi,
			Fingerprint: sm.look + "/" + rep.Layout + "/" + shard.Name(i, n) + "/own",
			Keep:        func(z, x, y int) bool { return l.Owner(z, x, y) == i },
		}); err != nil {
			return nil, err
		}
	}
	// The tiles of this part's own blocks go to the output (the only ones
	// drawn; the check guards the copy all the same).
	owned := func(p string) bool {
		z, x, y, ok := tilePath(p)
		return ok && l.Owner(z, x, y) == i
	}
	local := sink.NewDir(work)
	rep.Zooms = map[string]tiles.ZoomStats{}
	var mu sync.Mutex
	if err := local.List(ctx, "", func(p string, size int64) error {
		if strings.HasPrefix(p, tiles.StateDir+"/") || !owned(p) {
			return nil
		}
		z, _, _, _ := tilePath(p)
		zk := strconv.Itoa(z)
		if strings.HasSuffix(p, "@2x.png") {
			zk += "@2x"
		}
		mu.Lock()
		zs := rep.Zooms[zk]
		zs.Tiles++
		zs.Bytes += size
		rep.Zooms[zk] = zs
		mu.Unlock()
		return nil
	}); err != nil {
		return nil, err
	}
	// Tiles the output already holds are kept only if this same render
	// (same look and layout) put them there, as a killed earlier run of
	// this part would have: the start marker says so.
	marker := shard.ReportDir + "/" + shard.Name(i, n) + ".started"
	stamp := []byte(sm.look + " " + rep.Layout + "\n")
	prev, err := out.Get(ctx, marker)
	resume := err == nil && bytes.Equal(prev, stamp)
	if !resume {
		if err := out.Put(ctx, marker, stamp, "text/plain; charset=utf-8", sink.CacheState); err != nil {
			return nil, err
		}
	}
	cs, err := sink.Copy(ctx, out, local, sink.CopyOptions{Overwrite: !resume, Skip: func(p string) bool {
		return strings.HasPrefix(p, tiles.StateDir+"/") || !owned(p)
	}})
	if err != nil {
		return nil, err
	}
	rep.TileSeconds = time.Since(t0).Seconds()
	logf("shard %d/%d: tiles to %s: %s", i, n, out, cs)

	// Summary of the own dots for the final step, then the report.
	own := l.OwnedKeys(store.Keys(), i)
	rep.DotsOwned = int64(len(own))
	sum := &shard.Summary{Level: l.Level()}
	if l.Split > l.MinZoom {
		sum = shard.Summarize(own, l.Level())
	}
	rep.SummaryCells = len(sum.Keys)
	if err := shard.WriteReport(ctx, out, rep, sum); err != nil {
		return nil, err
	}
	store.Close()
	os.RemoveAll(work)
	return rep, nil
}

// tilePath reads "z/x/y.png" or "z/x/y@2x.png".
func tilePath(p string) (z, x, y int, ok bool) {
	parts := strings.Split(p, "/")
	if len(parts) != 3 || !strings.HasSuffix(parts[2], ".png") {
		return 0, 0, 0, false
	}
	ys := strings.TrimSuffix(strings.TrimSuffix(parts[2], ".png"), "@2x")
	var err1, err2, err3 error
	z, err1 = strconv.Atoi(parts[0])
	x, err2 = strconv.Atoi(parts[1])
	y, err3 = strconv.Atoi(ys)
	return z, x, y, err1 == nil && err2 == nil && err3 == nil
}

// placeShard samples the areas part i needs and keeps the dots within the
// margin of its blocks.
func placeShard(ctx context.Context, sm *shardedMap, i int, work string, workers int) (*dotstore.Store, keptInfo, error) {
	m, in, l := sm.m, sm.in, sm.layout
	fs := in.Layer.Features
	var idx []int
	for j := range fs {
		if l.Touches(i, fs[j].Geometry.Bound()) {
			idx = append(idx, j)
		}
	}
	sub := *in.Layer
	sub.Features = make([]geo.Feature, len(idx))
	counts := make([][]float64, len(idx))
	// Dot numbers come from the whole table's allocation (in.Dots), so
	// exact rounding gives a part the same dots as one machine would.
	dots := make([][]int, len(idx))
	for k, j := range idx {
		sub.Features[k] = fs[j]
		counts[k] = in.Counts[j]
		dots[k] = in.Dots[j]
	}
	// Only the dots within the margin of the part's blocks are stored; the
	// others are placed (an area's dots depend on its own seeded streams
	// alone) and dropped at once.
	keep := func(k uint64) bool {
		x, y, _ := dotstore.Split(k)
		return l.Keeps(i, x, y)
	}
	store, results, _, err := mapjob.PlaceStore(ctx, &sub, counts, m, mapjob.PlaceOptions{Workers: workers, SpillDir: filepath.Join(work, tiles.StateDir), Dots: dots, Masks: in.Masks, Keep: keep})
	if err != nil {
		return nil, keptInfo{}, err
	}
	info := keptInfo{Look: sm.look, Layout: l.Fingerprint(), NAreas: len(idx), Areas: []shard.AreaResult{}, Dots: store.Len()}
	for _, r := range results {
		for _, v := range r.Dots {
			info.Sampled += int64(v)
		}
	}
	for k, j := range idx {
		f := &fs[j]
		if l.AreaOwner(f.Geometry.Bound()) != i {
			continue
		}
		r := results[k]
		a := shard.AreaResult{Index: j, Drawn: r.Dots}
		for _, v := range r.Lost {
			a.Lost += v
		}
		if a.Lost > 0 {
			a.Problem = fmt.Sprintf("feature %d (id %q): %d dots not drawn: %s", f.Index, f.ID, a.Lost, r.Problem)
		}
		info.Areas = append(info.Areas, a)
	}
	return store, info, nil
}

// runFinal draws the zooms above the split from the parts' summaries and
// writes the metadata, legend and viewer, as a single-machine render does.
func runFinal(ctx context.Context, sm *shardedMap, out sink.Sink, opt shardOptions, logf func(string, ...any)) (*mapjob.Summary, error) {
	m, in, l := sm.m, sm.in, sm.layout
	reps, merged, err := shard.Collect(ctx, out, l, sm.look)
	if err != nil {
		return nil, err
	}
	colors := m.RGBA()
	t0 := time.Now()
	low, err := shard.RenderLow(ctx, merged, l, out, shard.LowOptions{Colors: colors, Workers: opt.Workers})
	if err != nil {
		return nil, err
	}
	logf("final: zooms %d–%d from %d summary cells (%d dots) in %s", m.Tiles.MinZoom, l.Split-1, len(merged.Keys), merged.Dots(), time.Since(t0).Round(time.Millisecond))

	// The run summary, as mapjob.Run makes it from all areas' results.
	nc := len(m.Categories)
	fs := in.Layer.Features
	s := &mapjob.Summary{Features: len(fs), People: make([]float64, nc), Dots: make([]int, nc), Problems: []string{}}
	if in.Join != nil {
		s.RowsWithoutArea = in.Join.PeopleInUnmatchedTotal
	}
	b := orb.Bound{Min: orb.Point{math.Inf(1), math.Inf(1)}, Max: orb.Point{math.Inf(-1), math.Inf(-1)}}
	for i, f := range fs {
		has := false
		for k := 0; k < nc; k++ {
			s.People[k] += in.Counts[i][k]
			has = has || in.Counts[i][k] > 0
		}
		if has && len(f.Geometry) > 0 {
			b = b.Union(f.Geometry.Bound())
		}
	}
	s.Bounds = b
	results := make([]*shard.AreaResult, len(fs))
	for _, r := range reps {
		for k := range r.Areas {
			a := &r.Areas[k]
			if a.Index < 0 || a.Index >= len(fs) || results[a.Index] != nil {
				return nil, fmt.Errorf("shard: shard %d/%d reports area %d, which is not one of its own", r.Shard, r.Shards, a.Index)
			}
			results[a.Index] = a
		}
	}
	for i, a := range results {
		if a == nil {
			return nil, fmt.Errorf("shard: no shard reports area %d (id %q)", i, fs[i].ID)
		}
		for k := range a.Drawn {
			s.Dots[k] += a.Drawn[k]
		}
		if a.Lost > 0 {
			s.NotDrawn += float64(a.Lost) * m.PeoplePerDot
			s.Problems = append(s.Problems, a.Problem)
		}
	}
	s.Tiles.PerZoom = map[int]int64{}
	add := func(zk string, zs tiles.ZoomStats) {
		z, suffix, _ := strings.Cut(zk, "@")
		zi, _ := strconv.Atoi(z)
		if suffix == "" {
			s.Tiles.Tiles += zs.Tiles
			if zs.Tiles > 0 {
				s.Tiles.PerZoom[zi] += zs.Tiles
			}
		} else {
			s.Tiles.Tiles2x += zs.Tiles
		}
		s.Tiles.Bytes += zs.Bytes
	}
	for zk, zs := range low {
		add(zk, zs)
	}
	for _, r := range reps {
		for zk, zs := range r.Zooms {
			add(zk, zs)
		}
	}

	// Metadata, legends and viewer: written into a local folder (the
	// output itself, or a temporary one that is then copied to a bucket).
	dir := m.Out
	placeholders := map[string]bool{}
	if sink.IsBucketURL(m.Out) {
		if dir, err = os.MkdirTemp("", "stipple-final-"); err != nil {
			return nil, fmt.Errorf("output: %w", err)
		}
		defer os.RemoveAll(dir)
		// The viewer indexes the tiles it finds in its folder by name
		// (tiles.WriteViewer): give it an empty file for every tile in the
		// bucket. The placeholders are not copied back.
		if err := out.List(ctx, "", func(p string, _ int64) error {
			if _, _, _, ok := tilePath(p); !ok {
				return nil
			}
			full := filepath.Join(dir, filepath.FromSlash(p))
			if err := os.MkdirAll(filepath.Dir(full), 0o755); err != nil {
				return err
			}
			placeholders[p] = true
			return os.WriteFile(full, nil, 0o644)
		}); err != nil {
			return nil, fmt.Errorf("output: %w", err)
		}
	}
	meta := mapjob.Metadata(m, s)
	leg := mapjob.LegendOf(meta, colors)
	for _, lg := range []struct {
		name  string
		scale float64
	}{{"legend.png", 1}, {"legend@2x.png", 2}} {
		var buf bytes.Buffer
		if err := png.Encode(&buf, render.DrawLegend(leg, 300, lg.scale)); err != nil {
			return nil, fmt.Errorf("output: %s: %w", lg.name, err)
		}
		if err := os.WriteFile(filepath.Join(dir, lg.name), buf.Bytes(), 0o644); err != nil {
			return nil, fmt.Errorf("output: %w", err)
		}
		meta.Legend = append(meta.Legend, lg.name)
	}
	if err := tiles.WriteMetadata(dir, meta); err != nil {
		return nil, err
	}
	if err := tiles.WriteViewer(dir, meta); err != nil {
		return nil, err
	}
	if sink.IsBucketURL(m.Out) {
		skip := func(p string) bool { return sink.SkipState(p) || placeholders[p] }
		if _, err := sink.Copy(ctx, out, sink.NewDir(dir), sink.CopyOptions{Skip: skip, Overwrite: true}); err != nil {
			return nil, err
		}
	}
	s.Metadata = meta
	s.OutputDir = m.Out
	return s, nil
}
