package measure

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"
)

// Z90 turns a published 90% margin of error into a standard error:
// SE = MOE / 1.645 (US Census Bureau, American Community Survey accuracy
// documentation; the factor from memory: it is the 95th percentile of the
// standard normal distribution, 1.6449).
const Z90 = 1.645

// StandardError returns the standard error of a published 90% margin.
func StandardError(moe float64) float64 { return moe / Z90 }

// Options sets the repeated draws of Simulate.
type Options struct {
	// Draws is the number of simulated tables R (default 1000).
	Draws int
	// Seed makes the draws reproducible: the same seed, counts and margins
	// give the same intervals whatever the worker count.
	Seed uint64
	// Level is the interval's coverage, in (0, 1) (default 0.90, the
	// margins' own level).
	Level float64
	// Workers draws tables in parallel (default GOMAXPROCS).
	Workers int
}

// Interval is the central Level share of a measure's simulated values
// (percentile interval: the (1−Level)/2 and (1+Level)/2 quantiles, linear
// interpolation between order statistics).
type Interval struct {
	Lo, Hi float64
	// Undefined counts the draws where the measure was undefined (NaN);
	// they are left out of the quantiles. Lo and Hi are NaN when every
	// draw was undefined.
	Undefined int
}

// Intervals holds an interval for each extent measure, with what is needed
// to reproduce them.
type Intervals struct {
	Seed     uint64
	Draws    int
	Level    float64
	H, M     Interval
	D        [][]Interval
	Exposure [][]Interval
}

// Simulate draws Draws tables around counts, each cell from a normal
// distribution with mean counts[j][m] and standard deviation
// StandardError(moe[j][m]), truncated at 0 (a negative draw is drawn
// again), measures each table, and returns the percentile interval of each
// measure. Margins of zero give intervals of zero width.
func Simulate(ctx context.Context, counts, moe [][]float64, opt Options) (*Intervals, error) {
	k, err := check("counts", counts)
	if err != nil {
		return nil, err
	}
	if _, err := check("margins", moe); err != nil {
		return nil, err
	}
	if len(moe) != len(counts) || len(moe[0]) != k {
		return nil, &Error{Table: "margins", Area: -1, Group: -1, Message: fmt.Sprintf(
			"%d areas × %d groups, counts have %d × %d", len(moe), len(moe[0]), len(counts), k)}
	}
	if opt.Draws == 0 {
		opt.Draws = 1000
	}
	if opt.Level == 0 {
		opt.Level = 0.90
	}
	if opt.Draws < 2 {
		return nil, fmt.Errorf("measure: %d draws: want at least 2", opt.Draws)
	}
	if !(opt.Level > 0 && opt.Level < 1) {
		return nil, fmt.Errorf("measure: level %v: want a share between 0 and 1", opt.Level)
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, opt.Draws)

	// vals[r] holds draw r's measures: H, M, then D and Exposure row-major.
	width := 2 + 2*k*k
	vals := make([]float64, opt.Draws*width)
	var next atomic.Int64
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			table := make([][]float64, len(counts))
			for j := range table {
				table[j] = make([]float64, k)
			}
			src := rand.NewPCG(0, 0)
			rng := rand.New(src)
			for {
				r := int(next.Add(1) - 1)
				if r >= opt.Draws || ctx.Err() != nil {
					return
				}
				// One stream per draw, keyed by (seed, r): the draw does not
				// depend on which worker makes it.
				src.Seed(opt.Seed, mix(uint64(r)))
				for j, row := range counts {
					for m, c := range row {
						table[j][m] = truncNormal(rng, c, StandardError(moe[j][m]))
					}
				}
				x := measure(table, k)
				v := vals[r*width : (r+1)*width]
				v[0], v[1] = x.H, x.M
				for a := range k {
					copy(v[2+a*k:], x.D[a])
					copy(v[2+k*k+a*k:], x.Exposure[a])
				}
			}
		})
	}
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	iv := &Intervals{Seed: opt.Seed, Draws: opt.Draws, Level: opt.Level, D: make([][]Interval, k), Exposure: make([][]Interval, k)}
	col := make([]float64, 0, opt.Draws)
	interval := func(i int) Interval {
		col = col[:0]
		for r := range opt.Draws {
			col = append(col, vals[r*width+i])
		}
		return percentile(col, opt.Level)
	}
	iv.H, iv.M = interval(0), interval(1)
	for a := range k {
		iv.D[a] = make([]Interval, k)
		iv.Exposure[a] = make([]Interval, k)
		for b := range k {
			iv.D[a][b] = interval(2 + a*k + b)
			iv.Exposure[a][b] = interval(2 + k*k + a*k + b)
		}
	}
	return iv, nil
}

// truncNormal draws from N(mean, sd²) truncated at 0. The mean is ≥ 0, so
// each try is kept with probability ≥ ½; after 200 failed tries (odds below
// 2⁻²⁰⁰) it gives 0.
func truncNormal(rng *rand.Rand, mean, sd float64) float64 {
	if sd == 0 {
		return mean
	}
	for range 200 {
		if v := mean + sd*rng.NormFloat64(); v >= 0 {
			return v
		}
	}
	return 0
}

// mix is SplitMix64's output function: it spreads draw numbers over the
// second PCG seed word so neighbouring draws start far apart.
func mix(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// percentile returns the central level share of the finite values of xs
// (sorted in place).
func percentile(xs []float64, level float64) Interval {
	fin := xs[:0]
	var iv Interval
	for _, v := range xs {
		if math.IsNaN(v) {
			iv.Undefined++
			continue
		}
		fin = append(fin, v)
	}
	if len(fin) == 0 {
		iv.Lo, iv.Hi = math.NaN(), math.NaN()
		return iv
	}
	slices.Sort(fin)
	iv.Lo = quantile(fin, (1-level)/2)
	iv.Hi = quantile(fin, (1+level)/2)
	return iv
}

// quantile of sorted xs with linear interpolation between order statistics
// (Hyndman & Fan 1996, type 7).
func quantile(xs []float64, p float64) float64 {
	h := float64(len(xs)-1) * p
	i := int(math.Floor(h))
	if i >= len(xs)-1 {
		return xs[len(xs)-1]
	}
	lo, hi := xs[i], xs[i+1]
	if lo == hi {
		return lo
	}
	return lo + (h-float64(i))*(hi-lo)
}
