package deflate

import (
	"math/bits"
)

// code is a canonical Huffman code (RFC 1951 §3.2.2) for one alphabet.
type code struct {
	// n is the number of symbols whose lengths the block header sends.
	n    int
	len  [numLitLen]uint8
	code [numLitLen]uint32 // bit-reversed, ready to write LSB first
	keys []uint64          // scratch: count<<16 | symbol, sorted
	tmp  []uint64          // scratch for sortKeys
	a    []int             // scratch for lengths
}

// huff holds a block's three codes.
type huff struct {
	litLen, distC, clc code
	cl                 []uint8 // code-length symbols: symbol, extra value
}

// build makes a code of lengths at most maxBits for symbol counts freq.
// Symbols with count 0 get no code, except that a code always has at least
// two symbols so that it is complete, as decoders want.
func (c *code) build(freq []uint32, maxBits int) {
	c.keys = c.keys[:0]
	last := -1
	for s, f := range freq {
		if f > 0 {
			c.keys = append(c.keys, uint64(f)<<16|uint64(s))
			last = s
		}
	}
	for s := 0; len(c.keys) < 2; s++ {
		if freq[s] == 0 {
			c.keys = append(c.keys, uint64(s)) // count 0: sorts first
			last = max(last, s)
		}
	}
	c.sortKeys()
	c.n = last + 1
	clear(c.len[:len(freq)])

	// Optimal lengths for the sorted counts (Moffat & Katajainen, "In-place
	// calculation of minimum-redundancy codes", 1995); a[i] ends as the
	// length of keys[i], longest first.
	a := c.a[:0]
	for _, k := range c.keys {
		a = append(a, int(k>>16))
	}
	c.a = a
	minRedundancy(a)

	// Limit the lengths to maxBits: clamp, then lengthen the longest codes
	// below the limit until the Kraft sum is 1 again.
	var count [16]int
	for _, l := range a {
		count[min(l, maxBits)]++
	}
	kraft := 0
	for l := 1; l <= maxBits; l++ {
		kraft += count[l] << (maxBits - l)
	}
	for ; kraft > 1<<maxBits; kraft-- {
		count[maxBits]--
		for l := maxBits - 1; l > 0; l-- {
			if count[l] > 0 {
				count[l]--
				count[l+1] += 2
				break
			}
		}
	}
	// The rarest symbols get the longest codes.
	i := 0
	for l := maxBits; l > 0; l-- {
		for range count[l] {
			c.len[c.keys[i]&0xffff] = uint8(l)
			i++
		}
	}

	// Canonical codes: shorter codes first, then by symbol.
	var next [16]uint32
	count[0] = 0
	v := uint32(0)
	for l := 1; l <= maxBits; l++ {
		v = (v + uint32(count[l-1])) << 1
		next[l] = v
	}
	for s := range c.n {
		if l := c.len[s]; l > 0 {
			c.code[s] = uint32(bits.Reverse16(uint16(next[l])) >> (16 - l))
			next[l]++
		}
	}
}

// sortKeys sorts c.keys, which are in increasing symbol order, by count
// and then symbol: a stable radix sort on the count a byte a pass, with as
// many passes as the largest count has bytes (one or two on a tile; a
// comparison sort of 286 keys cost more than the rest of build).
func (c *code) sortKeys() {
	keys := c.keys
	if cap(c.tmp) < len(keys) {
		c.tmp = make([]uint64, len(keys))
	}
	tmp := c.tmp[:len(keys)]
	var most uint64
	for _, k := range keys {
		most |= k
	}
	for shift := uint(16); most>>shift != 0; shift += 8 {
		var at [256]int
		for _, k := range keys {
			at[k>>shift&0xff]++
		}
		sum := 0
		for d, n := range at {
			at[d] = sum
			sum += n
		}
		for _, k := range keys {
			d := k >> shift & 0xff
			tmp[at[d]] = k
			at[d]++
		}
		keys, tmp = tmp, keys
	}
	// Both are scratch: the sorted one becomes keys, with no copy back.
	c.keys, c.tmp = keys, tmp
}

// minRedundancy replaces the non-decreasing counts in a (at least two) by
// the lengths of an optimal prefix code for them: a[i] is the length of the
// symbol with count a[i], longest first.
func minRedundancy(a []int) {
	n := len(a)
	// Phase 1: build the tree, leaving parent pointers in a.
	s, r := 0, 0
	for t := 0; t < n-1; t++ {
		if s >= n || (r < t && a[r] < a[s]) {
			a[t] = a[r]
			a[r] = t
			r++
		} else {
			a[t] = a[s]
			s++
		}
		if s >= n || (r < t && a[r] < a[s]) {
			a[t] += a[r]
			a[r] = t
			r++
		} else {
			a[t] += a[s]
			s++
		}
	}
	// Phase 2: internal node depths.
	a[n-2] = 0
	for t := n - 3; t >= 0; t-- {
		a[t] = a[a[t]] + 1
	}
	// Phase 3: leaf depths.
	avail, used, depth := 1, 0, 0
	t, x := n-2, n-1
	for avail > 0 {
		for t >= 0 && a[t] == depth {
			used++
			t--
		}
		for avail > used {
			a[x] = depth
			x--
			avail--
		}
		avail, depth, used = 2*used, depth+1, 0
	}
}

// clOrder is the order in which code-length code lengths are sent (RFC 1951
// §3.2.7).
var clOrder = [19]uint8{16, 17, 18, 0, 8, 7, 9, 6, 10, 5, 11, 4, 12, 3, 13, 2, 14, 1, 15}

// writeHeader writes HLIT, HDIST, HCLEN, the code-length code and the two
// codes' lengths, run-length coded with symbols 16, 17 and 18.
func (h *huff) writeHeader(w *bitWriter) {
	h.cl = h.cl[:0]
	h.rle(h.litLen.len[:h.litLen.n], h.distC.len[:h.distC.n])
	var freq [19]uint32
	for i := 0; i < len(h.cl); i += 2 {
		freq[h.cl[i]]++
	}
	h.clc.build(freq[:], 7)
	hclen := 19
	for hclen > 4 && h.clc.len[clOrder[hclen-1]] == 0 {
		hclen--
	}
	w.put(uint32(h.litLen.n-257), 5)
	w.put(uint32(h.distC.n-1), 5)
	w.put(uint32(hclen-4), 4)
	for _, s := range clOrder[:hclen] {
		w.put(uint32(h.clc.len[s]), 3)
	}
	for i := 0; i < len(h.cl); i += 2 {
		s := h.cl[i]
		w.put(h.clc.code[s], uint(h.clc.len[s]))
		switch s {
		case 16:
			w.put(uint32(h.cl[i+1]), 2)
		case 17:
			w.put(uint32(h.cl[i+1]), 3)
		case 18:
			w.put(uint32(h.cl[i+1]), 7)
		}
	}
}

// rle appends the code-length symbols of the lengths in both lists, which
// are sent as one sequence (runs may cross from one to the other).
func (h *huff) rle(lit, dist []uint8) {
	at := func(i int) uint8 {
		if i < len(lit) {
			return lit[i]
		}
		return dist[i-len(lit)]
	}
	total := len(lit) + len(dist)
	emit := func(s, extra uint8) { h.cl = append(h.cl, s, extra) }
	for i := 0; i < total; {
		v := at(i)
		run := 1
		for i+run < total && at(i+run) == v {
			run++
		}
		i += run
		if v == 0 {
			for run >= 11 {
				r := min(run, 138)
				emit(18, uint8(r-11))
				run -= r
			}
			if run >= 3 {
				emit(17, uint8(run-3))
				run = 0
			}
			for ; run > 0; run-- {
				emit(0, 0)
			}
			continue
		}
		emit(v, 0)
		run--
		for run >= 3 {
			r := min(run, 6)
			emit(16, uint8(r-3))
			run -= r
		}
		for ; run > 0; run-- {
			emit(v, 0)
		}
	}
}
