package deflate

import (
	"bytes"
	"compress/zlib"
	"container/heap"
	"fmt"
	"hash/adler32"
	"io"
	"math/rand/v2"
	"slices"
	"testing"
)

// inflate decodes a zlib stream with the standard library's decoder, an
// implementation independent of this package.
func inflate(t testing.TB, z []byte) []byte {
	t.Helper()
	r, err := zlib.NewReader(bytes.NewReader(z))
	if err != nil {
		t.Fatalf("zlib header: %v", err)
	}
	out, err := io.ReadAll(r)
	if err != nil {
		t.Fatalf("inflate: %v", err)
	}
	if err := r.Close(); err != nil { // checks the Adler-32 trailer
		t.Fatalf("close: %v", err)
	}
	return out
}

// scanlines makes n RGBA rows of w pixels, each led by a filter byte, with
// dots: short stretches of a few colours at varying alpha on zeros.
func scanlines(w, n int, ink float64, seed uint64) []byte {
	rng := rand.New(rand.NewPCG(seed, 1))
	cols := [][3]byte{{230, 159, 0}, {86, 180, 233}, {0, 158, 115}}
	row := 1 + 4*w
	b := make([]byte, row*n)
	for y := 0; y < n; y++ {
		for x := 0; x < w; x++ {
			if rng.Float64() >= ink {
				continue
			}
			c := cols[rng.IntN(len(cols))]
			p := b[y*row+1+4*x:]
			p[0], p[1], p[2], p[3] = c[0], c[1], c[2], byte(rng.IntN(4)*64+63)
		}
	}
	return b
}

func TestRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	random := make([]byte, 70000)
	for i := range random {
		random[i] = byte(rng.Uint32())
	}
	skewed := make([]byte, 50000) // few symbols, very unequal counts: long codes
	for i := range skewed {
		skewed[i] = byte(bitsLen(rng.Uint64()))
	}
	runs := func(n int) []byte { return bytes.Repeat([]byte{9}, n) }
	cases := []struct {
		name string
		data []byte
		bpp  int
	}{
		{"empty", nil, 4},
		{"one byte", []byte{42}, 4},
		{"two bytes", []byte{0, 0}, 1},
		{"run 3", runs(3), 1},
		{"run 4", runs(4), 1},
		{"run 5", runs(5), 1},
		{"run 259", runs(1 + 258), 1}, // a match of 258 exactly
		{"run 260", runs(1 + 259), 1}, // tail of 1 folded back
		{"run 261", runs(1 + 260), 1}, // tail of 2 folded back
		{"run 262", runs(1 + 261), 1},
		{"run 100000", runs(100000), 1},
		{"zeros 262144", make([]byte, 262144), 4},
		{"random", random, 4},
		{"random bpp 1", random, 1},
		{"skewed", skewed, 1},
		{"pixels repeat", bytes.Repeat([]byte{1, 2, 3, 4}, 5000), 4},
		{"pixels repeat bpp 3", bytes.Repeat([]byte{1, 2, 3}, 5000), 3},
		{"far distance", append(append(bytes.Repeat([]byte{5, 6, 7}, 100), random[:40000]...), 1, 2), 32768},
		{"sparse tile", scanlines(256, 256, 0.05, 1), 4},
		{"dense tile", scanlines(256, 256, 0.7, 2), 4},
		{"odd rows", scanlines(37, 11, 0.3, 3), 4},
	}
	var e Encoder
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			z := e.Zlib(nil, tc.data, tc.bpp)
			got := inflate(t, z)
			if !bytes.Equal(got, tc.data) {
				t.Fatalf("round trip: %d bytes back, want %d (first difference at %d)", len(got), len(tc.data), firstDiff(got, tc.data))
			}
			// The same bytes again from the reused encoder.
			if z2 := e.Zlib(nil, tc.data, tc.bpp); !bytes.Equal(z, z2) {
				t.Error("second encoding differs")
			}
		})
	}
}

func bitsLen(v uint64) int {
	n := 0
	for v&1 == 1 {
		n++
		v >>= 1
	}
	return n
}

func firstDiff(a, b []byte) int {
	for i := range min(len(a), len(b)) {
		if a[i] != b[i] {
			return i
		}
	}
	return min(len(a), len(b))
}

// TestZlibHeader checks the two header bytes against RFC 1950 §2.2: CM = 8
// (deflate), CINFO = 7 (32 KiB window), FDICT clear, and CMF·256 + FLG a
// multiple of 31.
func TestZlibHeader(t *testing.T) {
	var e Encoder
	z := e.Zlib(nil, []byte("dots"), 1)
	cmf, flg := z[0], z[1]
	if cmf&0x0f != 8 || cmf>>4 != 7 || flg&0x20 != 0 || (int(cmf)*256+int(flg))%31 != 0 {
		t.Errorf("header %#x %#x", cmf, flg)
	}
}

// TestSmallerThanInputOnTiles checks that dot scanlines compress: sparse
// rows to a small share of their size.
func TestSmallerThanInputOnTiles(t *testing.T) {
	var e Encoder
	for _, tc := range []struct {
		ink  float64
		most float64 // compressed/raw at most
	}{{0, 0.002}, {0.05, 0.12}, {0.3, 0.5}} {
		data := scanlines(256, 256, tc.ink, 9)
		z := e.Zlib(nil, data, 4)
		if r := float64(len(z)) / float64(len(data)); r > tc.most {
			t.Errorf("ink %.2f: ratio %.4f, want ≤ %.4f", tc.ink, r, tc.most)
		}
	}
}

// TestAdler32 compares with the standard library's hash/adler32 on inputs
// with and without zero words, across the reduction block size.
func TestAdler32(t *testing.T) {
	// "Wikipedia" → 0x11E60398: the worked example of the Wikipedia article
	// "Adler-32" (from memory; hash/adler32 agrees below).
	if got := Adler32([]byte("Wikipedia")); got != 0x11E60398 {
		t.Errorf("Adler32(Wikipedia) = %#x", got)
	}
	rng := rand.New(rand.NewPCG(3, 3))
	for _, n := range []int{0, 1, 7, 8, 9, 5552, 5553, adlerBlock - 1, adlerBlock, adlerBlock + 9, 300000} {
		for _, ink := range []float64{0, 0.01, 1} {
			d := make([]byte, n)
			for i := range d {
				if rng.Float64() < ink {
					d[i] = 255 - byte(rng.IntN(3))
				}
			}
			if got, want := Adler32(d), adler32.Checksum(d); got != want {
				t.Errorf("n=%d ink=%.2f: %#x, want %#x", n, ink, got, want)
			}
		}
	}
}

// TestRunLenMatchesPlainLoop compares the word-at-a-time scans with a
// byte-by-byte reference.
func TestRunLenMatchesPlainLoop(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	d := make([]byte, 4000)
	for i := range d {
		if rng.IntN(20) == 0 {
			d[i] = byte(rng.IntN(3))
		}
	}
	for i := 8; i < len(d); i++ {
		want := 0
		for i+want < len(d) && d[i+want] == d[i-1] {
			want++
		}
		if got := runLen(d, i, d[i-1]); got != want {
			t.Fatalf("runLen at %d = %d, want %d", i, got, want)
		}
		for _, dist := range []int{1, 3, 4, 8} {
			want := 0
			for i+want < len(d) && d[i+want] == d[i+want-dist] {
				want++
			}
			if got := repeatLen(d, i, dist); got != want {
				t.Fatalf("repeatLen(%d) at %d = %d, want %d", dist, i, got, want)
			}
		}
	}
}

// TestDistCode checks distCode against the table of RFC 1951 §3.2.5.
func TestDistCode(t *testing.T) {
	for c := range numDist {
		lo := int(distBase[c]) + 1
		hi := lo + 1<<distExtra[c] - 1
		for _, d := range []int{lo, hi} {
			if got := distCode(d); got != c {
				t.Errorf("distCode(%d) = %d, want %d", d, got, c)
			}
		}
	}
	if distBase[29]+1+1<<distExtra[29]-1 != 32768 {
		t.Error("distance codes do not end at 32768")
	}
	for l := 3; l <= 258; l++ {
		c := lengthCode[l-3]
		lo := int(lengthBase[c]) + 3
		if l < lo || (c < 28 && l > lo+1<<lengthExtra[c]-1) || (c == 28 && l != 258) {
			t.Errorf("length %d in code %d (%d..)", l, 257+int(c), lo)
		}
	}
}

// huffCost is the cost in bits of coding counts with lengths.
func huffCost(freq []uint32, lens []uint8) int {
	n := 0
	for s, f := range freq {
		n += int(f) * int(lens[s])
	}
	return n
}

// refHuffman is the textbook Huffman construction with a heap (Cormen et
// al., "Introduction to Algorithms", §16.3), without a length limit: its
// cost is the optimum the in-place method must match.
func refHuffman(freq []uint32) int {
	h := &nodeHeap{}
	for _, f := range freq {
		if f > 0 {
			heap.Push(h, int(f))
		}
	}
	cost := 0
	for h.Len() > 1 {
		a, b := heap.Pop(h).(int), heap.Pop(h).(int)
		cost += a + b // each merge adds one bit to every symbol below it
		heap.Push(h, a+b)
	}
	return cost
}

type nodeHeap []int

func (h nodeHeap) Len() int           { return len(h) }
func (h nodeHeap) Less(i, j int) bool { return h[i] < h[j] }
func (h nodeHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *nodeHeap) Push(x any)        { *h = append(*h, x.(int)) }
func (h *nodeHeap) Pop() any          { o := *h; x := o[len(o)-1]; *h = o[:len(o)-1]; return x }

func TestCodeLengths(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 11))
	for trial := range 300 {
		n := 2 + rng.IntN(285)
		freq := make([]uint32, n)
		used := 0
		for s := range freq {
			switch rng.IntN(4) {
			case 0: // unused
			case 1: // geometric: long codes
				freq[s] = uint32(1) << rng.IntN(24)
			default:
				freq[s] = uint32(1 + rng.IntN(1000))
			}
			if freq[s] > 0 {
				used++
			}
		}
		for _, maxBits := range []int{15, 7} {
			if used > 1<<maxBits {
				continue
			}
			var c code
			c.build(freq, maxBits)
			kraft, longest := 0.0, 0
			for s, l := range c.len[:n] {
				if l == 0 {
					if freq[s] > 0 {
						t.Fatalf("trial %d: symbol %d used but has no code", trial, s)
					}
					continue
				}
				kraft += 1 / float64(uint(1)<<l)
				longest = max(longest, int(l))
			}
			if kraft != 1 || longest > maxBits {
				t.Fatalf("trial %d max %d: Kraft sum %v, longest %d", trial, maxBits, kraft, longest)
			}
			if used >= 2 && longest < maxBits {
				// No length was limited: the code must be optimal.
				if got, want := huffCost(freq, c.len[:n]), refHuffman(freq); got != want {
					t.Fatalf("trial %d: cost %d bits, Huffman %d", trial, got, want)
				}
			}
		}
	}
}

func FuzzZlib(f *testing.F) {
	f.Add([]byte{}, 4)
	f.Add(bytes.Repeat([]byte{0}, 600), 1)
	f.Add(scanlines(16, 16, 0.3, 1), 4)
	f.Fuzz(func(t *testing.T, data []byte, bpp int) {
		var e Encoder
		z := e.Zlib(nil, data, bpp)
		if got := inflate(t, z); !bytes.Equal(got, data) {
			t.Fatalf("round trip differs at %d", firstDiff(got, data))
		}
	})
}

func BenchmarkZlib(b *testing.B) {
	for _, ink := range []float64{0.02, 0.1, 0.5} {
		data := scanlines(256, 256, ink, 1)
		b.Run(fmt.Sprintf("ink=%.2f", ink), func(b *testing.B) {
			var e Encoder
			var out []byte
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				out = e.Zlib(out[:0], data, 4)
			}
			b.ReportMetric(float64(len(out)), "bytes")
		})
	}
}

// runsOf lists data's stretches for ZlibRuns: literal bytes where data is
// not zero, zero bytes where it is (every zero in a zero stretch).
func runsOf(data []byte) []uint32 {
	var runs []uint32
	var lit, zero uint32
	for _, b := range data {
		if b == 0 {
			zero++
			continue
		}
		if zero > 0 {
			runs = append(runs, lit, zero)
			lit, zero = 0, 0
		}
		lit++
	}
	return append(runs, lit, zero)
}

func TestZlibRunsRoundTrip(t *testing.T) {
	cases := map[string][]byte{
		"empty":          {},
		"zeros":          make([]byte, 1000),
		"one zero":       {0},
		"two zeros":      {0, 0},
		"short gaps":     {1, 0, 2, 0, 0, 3, 0, 0, 0, 4, 0, 0, 0, 0, 5},
		"gap of 260":     append(append([]byte{7}, make([]byte, 260)...), 7),
		"no zeros":       bytes.Repeat([]byte{1, 2, 3}, 100),
		"sparse tile":    scanlines(256, 256, 0.05, 4),
		"dense tile":     scanlines(256, 256, 0.8, 5),
		"leading zeros":  append(make([]byte, 9), 1, 2),
		"trailing zeros": append([]byte{1, 2}, make([]byte, 9)...),
	}
	var e Encoder
	for name, data := range cases {
		t.Run(name, func(t *testing.T) {
			z := e.ZlibRuns(nil, data, runsOf(data))
			if got := inflate(t, z); !bytes.Equal(got, data) {
				t.Fatalf("round trip differs at %d", firstDiff(got, data))
			}
		})
	}
	// Literal stretches may hold zeros too: only the zero stretches are
	// skipped.
	data := append(scanlines(64, 64, 0.3, 6), make([]byte, 10)...)
	z := e.ZlibRuns(nil, data, []uint32{uint32(len(data) - 10), 10})
	if got := inflate(t, z); !bytes.Equal(got, data) {
		t.Fatal("round trip with zeros among literals differs")
	}
}

// TestSortKeysMatchesSort: the radix sort of build orders keys as a plain
// comparison sort does, for counts from one byte to four.
func TestSortKeysMatchesSort(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	for _, top := range []uint64{0, 1, 200, 1 << 12, 1 << 20, 1<<32 - 1} {
		for round := 0; round < 20; round++ {
			var c code
			for s := 0; s < numLitLen; s++ {
				if rng.IntN(3) == 0 {
					continue
				}
				f := uint64(0)
				if top > 0 {
					f = rng.Uint64N(top + 1)
				}
				c.keys = append(c.keys, f<<16|uint64(s))
			}
			if len(c.keys) == 0 {
				continue
			}
			want := slices.Clone(c.keys)
			slices.Sort(want)
			c.sortKeys()
			if !slices.Equal(c.keys, want) {
				t.Fatalf("top %d: sortKeys gave %v, want %v", top, c.keys[:8], want[:8])
			}
		}
	}
}
