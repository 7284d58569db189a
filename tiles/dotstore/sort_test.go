package dotstore

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestSortKeysMatchesSlicesSort compares the radix sort with the standard
// library's comparison sort (the plain reference) value for value.
func TestSortKeysMatchesSlicesSort(t *testing.T) {
	const seed = 7
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 1))
	gens := map[string]func() uint64{
		"uniform":   func() uint64 { return rng.Uint64() },
		"low-bits":  func() uint64 { return rng.Uint64N(1000) },
		"high-bits": func() uint64 { return rng.Uint64N(16) << 60 },
		"constant":  func() uint64 { return 42 },
		"clustered": func() uint64 {
			x, y := uint32(1<<28+rng.IntN(5000)), uint32(1<<27+rng.IntN(5000))
			return Key(x, y, rng.IntN(5))
		},
	}
	for name, gen := range gens {
		for _, n := range []int{0, 1, 2, 3, 1000, 70000, 200001} {
			for _, workers := range []int{1, 2, 3} {
				t.Run(fmt.Sprintf("%s/n=%d/w=%d", name, n, workers), func(t *testing.T) {
					keys := make([]uint64, n)
					for i := range keys {
						keys[i] = gen()
					}
					want := slices.Clone(keys)
					slices.Sort(want)
					SortKeys(keys, make([]uint64, n), workers)
					if !slices.Equal(keys, want) {
						t.Fatalf("radix sort differs from slices.Sort")
					}
				})
			}
		}
	}
}

func benchKeys(n int) []uint64 {
	rng := rand.New(rand.NewPCG(1, 2))
	keys := make([]uint64, n)
	for i := range keys {
		x, y := World(-120+50*rng.Float64(), 25+24*rng.Float64())
		keys[i] = Key(x, y, rng.IntN(5))
	}
	return keys
}

// BenchmarkSortKeys sorts 4M dot keys; compare with BenchmarkSlicesSort.
func BenchmarkSortKeys(b *testing.B) {
	for _, workers := range []int{1, 2} {
		b.Run(fmt.Sprintf("workers=%d", workers), func(b *testing.B) {
			src := benchKeys(1 << 22)
			keys := make([]uint64, len(src))
			scratch := make([]uint64, len(src))
			b.ReportAllocs()
			b.SetBytes(int64(8 * len(src)))
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				copy(keys, src)
				SortKeys(keys, scratch, workers)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(src)), "ns/key")
		})
	}
}

// BenchmarkSlicesSort is the baseline for BenchmarkSortKeys.
func BenchmarkSlicesSort(b *testing.B) {
	src := benchKeys(1 << 22)
	keys := make([]uint64, len(src))
	b.ReportAllocs()
	b.SetBytes(int64(8 * len(src)))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		copy(keys, src)
		slices.Sort(keys)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(src)), "ns/key")
}
