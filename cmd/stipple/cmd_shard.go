package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"github.com/stipple-maps/stipple/tiles/shard"
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
	"the zooms above the split, metadata, legend and viewer) (default: the whole map on this machine)"

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

// renderShard runs part spec of a sharded render of m into m.Out, or its
// final step, with mapjob's engine, and prints what it did.
func renderShard(ctx context.Context, m *mapfile.Map, spec shardSpec, opt mapjob.Options, rates *shard.Rates, stdout io.Writer) error {
	start := time.Now()
	in, err := mapjob.Load(m, nil)
	if err != nil {
		return err
	}
	plan, err := mapjob.PlanShards(in, m, spec.Count, opt.HiDPI || m.Tiles.HiDPI, rates)
	if err != nil {
		return err
	}
	l := plan.Layout
	from := ""
	if spec.From != "" {
		from = " (index from " + spec.From + ")"
	}
	fmt.Fprintf(stdout, "shard %s%s: split zoom %d, %d blocks, estimated imbalance %.3f, layout %s\n", spec, from, l.Split, l.Blocks, l.Imbalance(), l.Fingerprint()[:12])
	if spec.Final {
		s, err := mapjob.RunFinal(ctx, in, m, plan, opt)
		if err != nil {
			return err
		}
		s.Elapsed = time.Since(start)
		printSummary(stdout, s)
		return nil
	}
	rep, err := mapjob.RunPart(ctx, in, m, plan, spec.Index, opt)
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "shard %s done in %s: %d of %d areas sampled, %d dots kept (%d own), %d tiles\n", spec, time.Since(start).Round(time.Millisecond),
		rep.AreasSampled, len(in.Layer.Features), rep.DotsKept, rep.DotsOwned, rep.Tiles+rep.Tiles2x)
	return nil
}
