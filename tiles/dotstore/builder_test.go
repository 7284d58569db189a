package dotstore

import (
	"io"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"sort"
	"sync"
	"testing"
)

func randomKeys(seed uint64, n int) []uint64 {
	rng := rand.New(rand.NewPCG(seed, 3))
	keys := make([]uint64, n)
	for i := range keys {
		x, y := World(-100+20*rng.Float64(), 30+10*rng.Float64())
		keys[i] = Key(x, y, rng.IntN(5))
	}
	return keys
}

// addParallel feeds keys to b from several goroutines in uneven blocks, as
// the samplers do.
func addParallel(t *testing.T, b *Builder, keys []uint64) {
	var wg sync.WaitGroup
	for w := 0; w < 3; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			part := keys[w*len(keys)/3 : (w+1)*len(keys)/3]
			for len(part) > 0 {
				n := min(len(part), 1000+w*777)
				if err := b.Add(part[:n]); err != nil {
					t.Error(err)
					return
				}
				part = part[n:]
			}
		}(w)
	}
	wg.Wait()
}

// TestSpillAndMergeMatchesInMemory builds the same keys with no budget and
// with a budget that forces many runs; both stores must hold the same keys
// in the same (sorted) order, and both files must be byte-identical.
func TestSpillAndMergeMatchesInMemory(t *testing.T) {
	const seed, n = 11, 300_000
	t.Logf("seed %d", seed)
	keys := randomKeys(seed, n)
	want := slices.Clone(keys)
	slices.Sort(want)

	dir := t.TempDir()
	mem := NewBuilder(BuilderOptions{Workers: 2})
	addParallel(t, mem, keys)
	inMem, err := mem.Finish(filepath.Join(dir, "mem.bin"))
	if err != nil {
		t.Fatal(err)
	}
	tiny := NewBuilder(BuilderOptions{Memory: 16 * 20_000, SpillDir: dir, Workers: 2})
	addParallel(t, tiny, keys)
	if r := tiny.Runs(); r < 10 {
		t.Fatalf("tiny budget made %d runs; want ≥ 10", r)
	}
	spilled, err := tiny.Finish(filepath.Join(dir, "spill.bin"))
	if err != nil {
		t.Fatal(err)
	}
	defer spilled.Close()
	if !slices.Equal(inMem.Keys(), want) {
		t.Fatal("in-memory store is not the sorted keys")
	}
	if !slices.Equal(spilled.Keys(), want) {
		t.Fatal("spilled store is not the sorted keys")
	}
	for c := 0; c < 5; c++ {
		if inMem.Count(c) != spilled.Count(c) || inMem.Count(c) == 0 {
			t.Errorf("category %d: %d vs %d dots", c, inMem.Count(c), spilled.Count(c))
		}
	}
	a, _ := filepath.Glob(filepath.Join(dir, "run-*"))
	if len(a) != 0 {
		t.Errorf("run files left behind: %v", a)
	}
	// Tile ranges agree.
	for z := 0; z <= 14; z += 7 {
		var ta, tb [][2]int
		inMem.Tiles(z, func(x, y int) { ta = append(ta, [2]int{x, y}) })
		spilled.Tiles(z, func(x, y int) { tb = append(tb, [2]int{x, y}) })
		if !slices.Equal(ta, tb) || len(ta) == 0 {
			t.Fatalf("z%d: tiles differ (%d vs %d)", z, len(ta), len(tb))
		}
		for _, tl := range ta {
			if !slices.Equal(inMem.Tile(z, tl[0], tl[1]), spilled.Tile(z, tl[0], tl[1])) {
				t.Fatalf("z%d tile %v: keys differ", z, tl)
			}
		}
	}
	spilled.Release() // must not disturb later reads
	if !slices.Equal(spilled.Keys(), want) {
		t.Fatal("keys changed after Release")
	}
	reopened, err := Open(filepath.Join(dir, "mem.bin"))
	if err != nil {
		t.Fatal(err)
	}
	defer reopened.Close()
	if !slices.Equal(reopened.Keys(), want) {
		t.Fatal("reopened file differs")
	}
}

// TestTileRangeHoldsExactlyTheTilesDots checks the Z-order claim against
// the tile number each dot's coordinates give directly (OSM wiki "Slippy
// map tilenames": tile = floor(world coordinate / 2^(29-z))).
func TestTileRangeHoldsExactlyTheTilesDots(t *testing.T) {
	keys := randomKeys(5, 20000)
	s := FromSorted(slices.Sorted(slices.Values(keys)))
	for _, z := range []int{0, 3, 9, 15} {
		seen := 0
		s.Tiles(z, func(tx, ty int) {
			for _, k := range s.Tile(z, tx, ty) {
				x, y, _ := Split(k)
				if int(x>>(WorldBits-z)) != tx || int(y>>(WorldBits-z)) != ty {
					t.Fatalf("z%d: key of (%d,%d) in tile (%d,%d)", z, x, y, tx, ty)
				}
				seen++
			}
		})
		if seen != len(keys) {
			t.Errorf("z%d: tiles hold %d dots; want %d", z, seen, len(keys))
		}
	}
}

func TestOpenRejectsBadFiles(t *testing.T) {
	dir := t.TempDir()
	s := FromSorted([]uint64{1, 2, 3})
	good := filepath.Join(dir, "good.bin")
	if err := s.WriteFile(good); err != nil {
		t.Fatal(err)
	}
	for name, data := range map[string][]byte{
		"short.bin": []byte("STIPDOT1"),
		"magic.bin": make([]byte, headerSize),
	} {
		p := filepath.Join(dir, name)
		if err := writeFileAtomic(p, func(w io.Writer) error { _, err := w.Write(data); return err }); err != nil {
			t.Fatal(err)
		}
		if _, err := Open(p); err == nil {
			t.Errorf("%s opened without error", name)
		}
	}
	// Header count that disagrees with the file length.
	hdr := encodeHeader(5, &s.counts)
	p := filepath.Join(dir, "count.bin")
	writeFileAtomic(p, func(w io.Writer) error { w.Write(hdr); return writeKeys(w, []uint64{1, 2, 3}) })
	if _, err := Open(p); err == nil {
		t.Error("file with a wrong key count opened without error")
	}
}

// BenchmarkStoreRange reads z12 tile ranges from a mapped store.
func BenchmarkStoreRange(b *testing.B) {
	keys := benchKeys(1 << 21)
	SortKeys(keys, make([]uint64, len(keys)), 2)
	s := mappedStore(b, keys)
	var tl [][2]int
	s.Tiles(12, func(x, y int) { tl = append(tl, [2]int{x, y}) })
	b.ReportAllocs()
	b.ResetTimer()
	n := 0
	for i := 0; i < b.N; i++ {
		t := tl[i%len(tl)]
		n += len(s.Tile(12, t[0], t[1]))
	}
	if n == 0 {
		b.Fatal("no keys")
	}
}

// TestSearchMatchesPlainBinarySearch checks the indexed search against
// sort.Search over the whole slice, at and between keys and past both ends.
func TestSearchMatchesPlainBinarySearch(t *testing.T) {
	for _, n := range []int{0, 1, indexStride - 1, indexStride, indexStride + 1, 5*indexStride + 17} {
		keys := randomKeys(uint64(n), n)
		for i := 0; i < n/3; i++ {
			keys[i] = keys[n-1-i] // duplicates
		}
		slices.Sort(keys)
		s := FromSorted(keys)
		probes := []uint64{0, 1, ^uint64(0)}
		for i := 0; i < n; i += 1 + n/500 {
			probes = append(probes, keys[i], keys[i]+1, keys[i]-1)
		}
		for _, k := range probes {
			want := sort.Search(n, func(i int) bool { return keys[i] >= k })
			if got := s.Search(k); got != want {
				t.Fatalf("n=%d: Search(%d) = %d; want %d", n, k, got, want)
			}
		}
		if got := s.Range(0, ^uint64(0)); len(got) != n {
			t.Fatalf("n=%d: full range holds %d keys", n, len(got))
		}
	}
}

// mappedStore writes sorted keys to a store file in a temporary folder and
// opens it (mapped where the platform allows); it is closed when tb ends.
func mappedStore(tb testing.TB, keys []uint64) *Store {
	tb.Helper()
	path := filepath.Join(tb.TempDir(), "dots.bin")
	if err := FromSorted(keys).WriteFile(path); err != nil {
		tb.Fatal(err)
	}
	s, err := Open(path)
	if err != nil {
		tb.Fatal(err)
	}
	tb.Cleanup(func() { s.Close() })
	return s
}
