package main

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"github.com/stipple-maps/stipple/tiles/shard"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// nationalMap reads the national benchmark's map file, skipping the
// benchmark when its input (../../../shared/data) is not here.
func nationalMap(b *testing.B) (string, *mapfile.Map) {
	b.Helper()
	path := filepath.Join("..", "..", "examples", "us-counties-synthetic", "map.toml")
	m, err := mapfile.Read(path)
	if err != nil {
		b.Fatal(err)
	}
	if _, err := os.Stat(m.Resolve(m.Input.File)); err != nil {
		b.Skipf("national input not here: %v", err)
	}
	return path, m
}

// BenchmarkShardBalance measures, on the national input (synthetic
// counts, 1 dot = 10 people), how evenly N = 2, 4 and 16 parts share the
// work: the dots each part owns and samples and the tiles with dots it
// draws, counted on the real dots (all areas placed once), and the work
// those make at MeasuredRates. The metrics are the largest part over the
// mean. It needs ../../../shared/data (skipped without it).
//
//	go test ./cmd/stipple -run '^$' -bench ShardBalance -benchtime 1x
func BenchmarkShardBalance(b *testing.B) {
	_, m := nationalMap(b)
	m.PeoplePerDot = 10
	in, err := mapjob.Load(m, nil)
	if err != nil {
		b.Fatal(err)
	}
	pl, err := mapjob.Place(context.Background(), in, m, mapjob.PlaceOptions{})
	if err != nil {
		b.Fatal(err)
	}
	defer pl.Store.Close()
	keys := pl.Store.Keys()
	r := shard.MeasuredRates
	b.ReportAllocs()
	b.ResetTimer()
	for it := 0; it < b.N; it++ {
		for _, n := range []int{2, 4, 16} {
			plan, err := mapjob.PlanShards(in, m, n, false, nil)
			if err != nil {
				b.Fatal(err)
			}
			l := plan.Layout
			own := make([]float64, n)
			sampled := make([]float64, n)
			tilesN := make([]float64, n)
			work := make([]float64, n)
			for i := 0; i < n; i++ {
				own[i] = float64(len(l.OwnedKeys(keys, i)))
			}
			for j, f := range in.Layer.Features {
				// The dots placed: the area's dots less those that found
				// no place.
				d := 0
				for _, v := range in.Dots[j] {
					d += v
				}
				for _, v := range pl.Outcomes[j].Lost {
					d -= v
				}
				for i := 0; i < n; i++ {
					if l.Touches(i, f.Geometry.Bound()) {
						sampled[i] += float64(d)
					}
				}
			}
			perDot := 0.0
			for z := l.Split; z <= m.Tiles.MaxZoom; z++ {
				zt := make([]float64, n)
				dotstore.TilesOf(keys, z, func(x, y int, _ []uint64) { zt[l.Owner(z, x, y)]++ })
				for i := range zt {
					tilesN[i] += zt[i]
				}
				if mapjob.Look(m)(z).Diameter >= 1 {
					perDot += r.DiscNsPerDot
				} else {
					perDot += r.CountNsPerDot
				}
			}
			for i := range work {
				work[i] = sampled[i]*r.SampleNsPerDot + own[i]*perDot + tilesN[i]*r.TileNs
			}
			ratio := func(v []float64) float64 {
				s := 0.0
				for _, x := range v {
					s += x
				}
				return slices.Max(v) / (s / float64(len(v)))
			}
			b.ReportMetric(ratio(own), fmt.Sprintf("n%d-own-dots-max/mean", n))
			b.ReportMetric(ratio(sampled), fmt.Sprintf("n%d-sampled-dots-max/mean", n))
			b.ReportMetric(ratio(tilesN), fmt.Sprintf("n%d-tiles-max/mean", n))
			b.ReportMetric(ratio(work), fmt.Sprintf("n%d-work-max/mean", n))
			if it == 0 {
				b.Logf("N=%d split %d, estimated imbalance %.3f", n, l.Split, l.Imbalance())
				for i := 0; i < n; i++ {
					b.Logf("  part %2d: own %9.0f dots (est. %9.0f), sampled %9.0f, tiles %7.0f, work %6.1f core-s (est. %6.1f)",
						i, own[i], l.Dots[i], sampled[i], tilesN[i], work[i]/1e9, l.Weight[i])
				}
			}
		}
	}
}

// BenchmarkShardParts renders the national input as N = 2, 4 and 16 parts,
// each a separate `stipple render --shard I/N --workers 2` process run one
// after another (then the final step), and prints, per N, the largest part
// over the mean of wall time, of CPU time (user + sys of the process) and
// of the layout's estimate, with the sums. It then fits the parts' CPU
// time to what they did (dots sampled, dot-zooms drawn, tiles written and
// a fixed cost per part) by least squares and prints the fitted rates as
// a shard.Rates literal, to paste into MeasuredRates (the disc/count ratio
// of drawing a dot is kept as it is). Environment:
//
//	STIPPLE_SHARD_PER_DOT  people per dot (default 10, the BENCHMARKS.md figures)
//	STIPPLE_SHARD_N        comma-separated part counts (default 2,4,16)
//	STIPPLE_SHARD_DIR      folder for the outputs (default: a temporary one;
//	                       use a folder on the disk to be measured)
//	STIPPLE_SHARD_WORKERS  --workers of every part (default 2)
//
// It needs ../../../shared/data (skipped without it). For example:
//
//	STIPPLE_SHARD_PER_DOT=100 go test ./cmd/stipple -run '^$' -bench ShardParts -benchtime 1x -timeout 3h
func BenchmarkShardParts(b *testing.B) {
	path, m := nationalMap(b)
	perDot := envOr(b, "STIPPLE_SHARD_PER_DOT", "10")
	workers := envOr(b, "STIPPLE_SHARD_WORKERS", "2")
	var counts []int
	for _, f := range strings.Split(envOr(b, "STIPPLE_SHARD_N", "2,4,16"), ",") {
		n, err := strconv.Atoi(strings.TrimSpace(f))
		if err != nil || n < 1 {
			b.Fatalf("STIPPLE_SHARD_N: %q is not a part count", f)
		}
		counts = append(counts, n)
	}
	var err error
	if m.PeoplePerDot, err = strconv.ParseFloat(perDot, 64); err != nil || !(m.PeoplePerDot > 0) {
		b.Fatalf("STIPPLE_SHARD_PER_DOT: %q is not a positive number", perDot)
	}
	root := os.Getenv("STIPPLE_SHARD_DIR")
	if root == "" {
		root = b.TempDir()
	}
	bin := filepath.Join(b.TempDir(), "stipple")
	gob := exec.Command("go", "build", "-o", bin, ".")
	gob.Env = append(os.Environ(), "CGO_ENABLED=0")
	if out, err := gob.CombinedOutput(); err != nil {
		b.Fatalf("go build: %v\n%s", err, out)
	}
	in, err := mapjob.Load(m, nil)
	if err != nil {
		b.Fatal(err)
	}
	// run runs the binary and returns its wall and CPU seconds.
	run := func(args ...string) (wall, cpu float64) {
		c := exec.Command(bin, append([]string{"render", path, "--per-dot", perDot, "--workers", workers}, args...)...)
		var out bytes.Buffer
		c.Stdout, c.Stderr = &out, &out
		t0 := time.Now()
		if err := c.Run(); err != nil {
			b.Fatalf("%s: %v\n%s", strings.Join(c.Args, " "), err, out.String())
		}
		wall = time.Since(t0).Seconds()
		cpu = (c.ProcessState.UserTime() + c.ProcessState.SystemTime()).Seconds()
		return wall, cpu
	}
	ratio := func(v []float64) float64 {
		s := 0.0
		for _, x := range v {
			s += x
		}
		return slices.Max(v) / (s / float64(len(v)))
	}
	sum := func(v []float64) float64 {
		s := 0.0
		for _, x := range v {
			s += x
		}
		return s
	}
	r := shard.MeasuredRates
	look := mapjob.Look(m)
	// One row per part for the fit: sampled dots, disc-equivalent
	// dot-zooms, tiles, 1; and its CPU seconds.
	var rows [][4]float64
	var cpus []float64
	var table []string
	b.ResetTimer()
	for _, n := range counts {
		plan, err := mapjob.PlanShards(in, m, n, false, nil)
		if err != nil {
			b.Fatal(err)
		}
		l := plan.Layout
		zoomsPerDot := 0.0 // dot-zooms per own dot, in disc dot-zooms
		for z := l.Split; z <= m.Tiles.MaxZoom; z++ {
			if look(z).Diameter >= 1 {
				zoomsPerDot++
			} else {
				zoomsPerDot += r.CountNsPerDot / r.DiscNsPerDot
			}
		}
		out := filepath.Join(root, fmt.Sprintf("n%d", n))
		os.RemoveAll(out)
		walls, cpuN := make([]float64, n), make([]float64, n)
		for i := 0; i < n; i++ {
			walls[i], cpuN[i] = run("--out", out, "--shard", fmt.Sprintf("%d/%d", i, n))
			rep, _, ok, err := shard.ReadReport(context.Background(), sink.NewDir(out), i, n)
			if err != nil || !ok {
				b.Fatalf("part %d/%d: no report (%v)", i, n, err)
			}
			tl := float64(rep.Tiles + rep.Tiles2x)
			rows = append(rows, [4]float64{float64(rep.DotsSampled), float64(rep.DotsOwned) * zoomsPerDot, tl, 1})
			cpus = append(cpus, cpuN[i])
			// Printed, not logged: a benchmark's log keeps only its first lines.
			fmt.Printf("N=%d part %2d: wall %6.2f s, CPU %6.2f s; sampled %9d dots, kept %9d, own %9d, tiles %7.0f; estimate %6.2f core-s\n",
				n, i, walls[i], cpuN[i], rep.DotsSampled, rep.DotsKept, rep.DotsOwned, tl, l.Weight[i])
		}
		fw, _ := run("--out", out, "--shard", fmt.Sprintf("final/%d", n))
		table = append(table, fmt.Sprintf("| %d | %d | **%.2f** | **%.2f** | %.2f | %.0f s | %.0f s | %.1f s |",
			n, l.Split, ratio(walls), ratio(cpuN), l.Imbalance(), sum(walls), sum(cpuN), fw))
		if err := os.RemoveAll(out); err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	fmt.Printf("\nper dot %s, --workers %s, parts one after another (CPU = user + sys)\n\n", perDot, workers)
	fmt.Println("| N | split zoom | wall max/mean | CPU max/mean | estimate max/mean | sum of wall | sum of CPU | final step |")
	fmt.Println("|---|---|---|---|---|---|---|---|")
	for _, row := range table {
		fmt.Println(row)
	}
	c, ok := leastSquares(rows, cpus, 4)
	if !ok {
		fmt.Println("\nthe fit is singular (too few parts?)")
		return
	}
	fmt.Printf("\nCPU fit over %d parts: %.0f ns per sampled dot, %.0f ns per disc dot-zoom, %.3f ms per tile, %.2f s fixed per part\n",
		len(rows), c[0]*1e9, c[1]*1e9, c[2]*1e3, c[3])
	if c[0] <= 0 || c[1] <= 0 || c[2] <= 0 {
		// Sampled and drawn dots go together in most parts, so the fit
		// cannot tell them apart: fix the sampling rate to the one measured
		// on its own (STIPPLE_SHARD_SAMPLE_NS, from stipple bench's placing
		// phase) and fit the rest.
		sampleNs, err := strconv.ParseFloat(envOr(b, "STIPPLE_SHARD_SAMPLE_NS", "450"), 64)
		if err != nil {
			b.Fatal(err)
		}
		rest := make([][4]float64, len(rows))
		y := make([]float64, len(cpus))
		for k, row := range rows {
			rest[k] = [4]float64{row[1], row[2], row[3]}
			y[k] = cpus[k] - row[0]*sampleNs*1e-9
		}
		c3, ok := leastSquares(rest, y, 3)
		if !ok || c3[0] <= 0 || c3[1] <= 0 {
			fmt.Println("a rate came out ≤ 0 with the sampling rate fixed too: keep MeasuredRates")
			return
		}
		c = [4]float64{sampleNs * 1e-9, c3[0], c3[1], c3[2]}
		fmt.Printf("with %.0f ns per sampled dot fixed: %.0f ns per disc dot-zoom, %.3f ms per tile, %.2f s fixed per part\n",
			sampleNs, c[1]*1e9, c[2]*1e3, c[3])
	}
	fmt.Printf("\nshard.Rates{SampleNsPerDot: %.0f, CountNsPerDot: %.1f, DiscNsPerDot: %.0f, TileNs: %.3ge6} (byte rates unchanged)\n",
		c[0]*1e9, c[1]*1e9*r.CountNsPerDot/r.DiscNsPerDot, c[1]*1e9, c[2]*1e3)
}

func envOr(b *testing.B, name, def string) string {
	if v := strings.TrimSpace(os.Getenv(name)); v != "" {
		return v
	}
	return def
}

// leastSquares solves min |X c − y|² over the first n ≤ 4 columns of x
// through the normal equations (Gaussian elimination with partial
// pivoting); ok is false when they are singular.
func leastSquares(x [][4]float64, y []float64, n int) (c [4]float64, ok bool) {
	var a [4][5]float64
	for k, row := range x {
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				a[i][j] += row[i] * row[j]
			}
			a[i][4] += row[i] * y[k]
		}
	}
	for col := 0; col < n; col++ {
		p := col
		for i := col + 1; i < n; i++ {
			if math.Abs(a[i][col]) > math.Abs(a[p][col]) {
				p = i
			}
		}
		if math.Abs(a[p][col]) < 1e-12*math.Max(math.Abs(a[col][col]), 1) || a[p][col] == 0 {
			return c, false
		}
		a[col], a[p] = a[p], a[col]
		for i := 0; i < n; i++ {
			if i == col {
				continue
			}
			f := a[i][col] / a[col][col]
			for j := col; j < 5; j++ {
				a[i][j] -= f * a[col][j]
			}
		}
	}
	for i := 0; i < n; i++ {
		c[i] = a[i][4] / a[i][i]
	}
	return c, true
}
