package dotstore

import "sync"

// radixBits is the digit width of SortKeys. Eight passes of 8 bits beat six
// of 11 here: 256 counters per worker stay in L1, and the scatter writes to
// 256 streams, which the hardware write-combines (BenchmarkSortKeys).
const radixBits = 8

// SortKeys sorts keys ascending by least-significant-digit radix sort, with
// scratch (at least len(keys) long) as the second buffer. Each pass splits
// the keys into one stripe per worker: stripes are counted in parallel, a
// prefix sum gives every (worker, digit) its output slot, and stripes are
// scattered in parallel. The sort is stable and the result is the same for
// any number of workers. Passes in which all keys share a digit are skipped.
func SortKeys(keys, scratch []uint64, workers int) {
	n := len(keys)
	if n < 2 {
		return
	}
	if len(scratch) < n {
		panic("dotstore: SortKeys scratch shorter than keys")
	}
	scratch = scratch[:n]
	if workers < 1 {
		workers = 1
	}
	if n < 1<<16 {
		workers = 1
	}
	const buckets = 1 << radixBits
	counts := make([][buckets]int, workers)
	stripe := (n + workers - 1) / workers
	bounds := func(w int) (int, int) { return min(w*stripe, n), min((w+1)*stripe, n) }
	src, dst := keys, scratch
	par := func(fn func(w int)) {
		if workers == 1 {
			fn(0)
			return
		}
		var wg sync.WaitGroup
		for w := 0; w < workers; w++ {
			wg.Add(1)
			go func(w int) { defer wg.Done(); fn(w) }(w)
		}
		wg.Wait()
	}
	for shift := uint(0); shift < 64; shift += radixBits {
		par(func(w int) {
			c := &counts[w]
			*c = [buckets]int{}
			lo, hi := bounds(w)
			for _, k := range src[lo:hi] {
				c[(k>>shift)&(buckets-1)]++
			}
		})
		// Skip a pass that would not move anything.
		total := [buckets]int{}
		for w := range counts {
			for d, v := range counts[w] {
				total[d] += v
			}
		}
		trivial := false
		for _, v := range total {
			if v == n {
				trivial = true
			}
			if v != 0 {
				break
			}
		}
		if trivial {
			continue
		}
		// counts[w][d] becomes the first output slot of worker w's digit d.
		off := 0
		for d := 0; d < buckets; d++ {
			for w := range counts {
				v := counts[w][d]
				counts[w][d] = off
				off += v
			}
		}
		par(func(w int) {
			c := &counts[w]
			lo, hi := bounds(w)
			for _, k := range src[lo:hi] {
				d := (k >> shift) & (buckets - 1)
				dst[c[d]] = k
				c[d]++
			}
		})
		src, dst = dst, src
	}
	if &src[0] != &keys[0] {
		copy(keys, src)
	}
}
