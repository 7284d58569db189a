package sample

import (
	"math"
	"sort"
)

// Allocate decides how many dots each feature gets per category:
// dots[i][k] for feature i (id ids[i], counts[i][k] people) and category k.
//
// With exact false it is DotCount for every feature and category: floor of
// count/perDot plus one more with probability equal to the remainder, so
// the expected total equals the table's, and each feature's number depends
// only on its own count, id and the seed. Feature draws the same numbers.
//
// With exact true, every category gets exactly round(total/perDot) dots
// (total = the sum of the category's counts; halves round away from zero),
// shared out by largest remainders (Hamilton's method): feature i's quota is
// count_i × dots / total, each feature gets the floor of its quota, and the
// dots left go one each to the features with the largest fractional parts;
// equal fractional parts are ordered by a hash of (seed, feature id,
// category), then by id. Nothing depends on the order of the features, on
// the number of workers or on how the map is cut into shards, but the
// allocation needs the whole table's counts: a shard that draws only some
// features must call Allocate with every feature's id and counts (counts
// only, no geometry) and keep its own rows. Ids should be unique; features
// with equal ids and equal fractional parts are the only case left to input
// order.
//
// Counts that are negative, infinite or NaN count as 0.
func Allocate(ids []string, counts [][]float64, perDot float64, seed uint64, exact bool) [][]int {
	return AllocateStreams(ids, counts, perDot, seed, exact, nil)
}

// AllocateStreams is Allocate with each category's stream number given
// (see Options.Streams; nil means the category's index), as FeatureN with
// the same Streams would draw them.
func AllocateStreams(ids []string, counts [][]float64, perDot float64, seed uint64, exact bool, streams []uint64) [][]int {
	dots := make([][]int, len(counts))
	cats := 0
	for i, c := range counts {
		dots[i] = make([]int, len(c))
		cats = max(cats, len(c))
	}
	name := func(i int) string {
		if i < len(ids) {
			return ids[i]
		}
		return ""
	}
	hashes := make([]uint64, len(counts))
	for i := range counts {
		hashes[i] = IDHash(name(i))
	}
	if !exact {
		for i, c := range counts {
			for k, v := range c {
				dots[i][k] = dotCount(v, perDot, seed, hashes[i], streamOf(streams, k))
			}
		}
		return dots
	}
	type share struct {
		i    int
		frac float64
		tie  uint64
	}
	for k := 0; k < cats; k++ {
		var vals []float64
		for _, c := range counts {
			if k < len(c) && usable(c[k]) {
				vals = append(vals, c[k])
			}
		}
		// Summed in sorted order, the total is the same for any order of
		// the features.
		sort.Float64s(vals)
		total := 0.0
		for _, v := range vals {
			total += v
		}
		want := math.Round(total / perDot)
		if !(total > 0) || !(want > 0) || math.IsInf(want, 0) {
			continue
		}
		var shares []share
		given := 0.0
		for i, c := range counts {
			if k >= len(c) || !usable(c[k]) {
				continue
			}
			q := c[k] * want / total
			f := math.Floor(q)
			dots[i][k] = int(f)
			given += f
			shares = append(shares, share{i, q - f, mix(seed ^ mix(hashes[i]^mix(streamOf(streams, k)+1)))})
		}
		sort.SliceStable(shares, func(a, b int) bool {
			x, y := shares[a], shares[b]
			if x.frac != y.frac {
				return x.frac > y.frac
			}
			if x.tie != y.tie {
				return x.tie < y.tie
			}
			return name(x.i) < name(y.i)
		})
		left := int(want - given)
		// Rounding in the quotas can leave the floors one or two over or
		// under; the same order settles it.
		for n := 0; left > 0 && n < len(shares); n++ {
			dots[shares[n].i][k]++
			left--
		}
		for n := len(shares) - 1; left < 0 && n >= 0; n-- {
			if dots[shares[n].i][k] > 0 {
				dots[shares[n].i][k]--
				left++
			}
		}
	}
	return dots
}

func usable(v float64) bool { return v > 0 && !math.IsInf(v, 0) }
