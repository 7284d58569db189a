package dotstore

import (
	"sort"
	"sync/atomic"
	"unsafe"
)

// Store is a sorted set of dots, held in memory or mapped from a store file
// (see Open). A Store is safe for concurrent reads.
type Store struct {
	keys   []uint64
	sorted bool
	counts [MaxCategories]int
	m      *mapping // non-nil when keys live in a mapped file
	// index holds every indexStride-th key, so a search reads the mapped
	// file in one small block instead of probing pages all over it: each
	// page a probe touches becomes resident (with its neighbours).
	index []uint64
	// touched marks, for a mapped store, each block of 2^touchShift keys
	// that a search or a reported read has reached since the last Release, and
	// resident sums what those blocks may have made resident: what
	// Resident reports.
	touched  []atomic.Uint64
	resident atomic.Int64
}

// touchShift sets the block of resident accounting: 2^13 keys, 64 KiB of
// file. A block first reached counts twice its size, touchCost: the
// kernel maps the page-cache folios around a touched page (fault-around,
// 64 KiB, not aligned to the keys, which follow the file's header).
const (
	touchShift = 13
	touchCost  = 2 * 8 << touchShift
)

// touch marks the blocks holding keys[i:j] (the block of i when j ≤ i) as
// reached.
func (s *Store) touch(i, j int) {
	if s.touched == nil || len(s.keys) == 0 {
		return
	}
	i = min(i, len(s.keys)-1)
	last := min(max(j-1, i), len(s.keys)-1)
	for b := i >> touchShift; b <= last>>touchShift; b++ {
		w, bit := &s.touched[b>>6], uint64(1)<<(b&63)
		if w.Load()&bit == 0 && w.Or(bit)&bit == 0 {
			s.resident.Add(touchCost)
		}
	}
}

// indexStride is the spacing of the index: 4096 keys, one 32 KiB block.
const indexStride = 1 << 12

func (s *Store) buildIndex() {
	n := (len(s.keys) + indexStride - 1) / indexStride
	s.index = make([]uint64, n)
	for i := range s.index {
		s.index[i] = s.keys[i*indexStride]
		if s.m != nil && i%8192 == 8191 {
			s.m.release() // 256 MiB of file passed
		}
	}
	if s.m != nil {
		s.m.release()
	}
}

// Search returns the position of the first key ≥ k (Len() if none).
func (s *Store) Search(k uint64) int {
	if s.index == nil || len(s.index)*indexStride < len(s.keys) {
		return sort.Search(len(s.keys), func(i int) bool { return s.keys[i] >= k })
	}
	j := sort.Search(len(s.index), func(j int) bool { return s.index[j] >= k })
	// keys[j*stride] ≥ k and keys[(j-1)*stride] < k: the answer lies between.
	lo := max(0, (j-1)*indexStride+1)
	if j == 0 {
		lo = 0
	}
	hi := min(len(s.keys), j*indexStride)
	s.touch(lo, hi)
	return lo + sort.Search(hi-lo, func(i int) bool { return s.keys[lo+i] >= k })
}

// New returns an empty in-memory store with room for n dots.
func New(n int) *Store { return &Store{keys: make([]uint64, 0, n)} }

// FromSorted wraps keys that are already sorted (for example by SortKeys)
// without copying them.
func FromSorted(keys []uint64) *Store {
	s := &Store{keys: keys, sorted: true}
	for _, k := range keys {
		s.counts[k&(MaxCategories-1)]++
	}
	s.buildIndex()
	return s
}

// Add puts one dot of category cat at lon/lat degrees.
func (s *Store) Add(lon, lat float64, cat int) {
	x, y := World(lon, lat)
	s.keys = append(s.keys, Key(x, y, cat))
	s.counts[cat]++
	s.sorted = false
}

// AddKeys appends keys made elsewhere (for example by parallel workers).
func (s *Store) AddKeys(keys []uint64) {
	for _, k := range keys {
		s.counts[k&(MaxCategories-1)]++
	}
	s.keys = append(s.keys, keys...)
	s.sorted = false
}

// Sort orders the dots along the Z-order curve. Equal keys are identical
// dots, so the result does not depend on the order they were added in.
func (s *Store) Sort() {
	if !s.sorted {
		SortKeys(s.keys, make([]uint64, len(s.keys)), 1)
		s.sorted = true
		s.buildIndex()
	}
}

// Len is the number of dots.
func (s *Store) Len() int { return len(s.keys) }

// Count is the number of dots of category cat.
func (s *Store) Count(cat int) int { return s.counts[cat] }

// Keys returns all keys in order. For a mapped store the slice aliases the
// file mapping and is valid until Close.
func (s *Store) Keys() []uint64 { return s.keys }

// Range returns the sorted keys k with first ≤ k ≤ last. The store must be
// sorted.
func (s *Store) Range(first, last uint64) []uint64 {
	i := s.Search(first)
	j := len(s.keys)
	if last != ^uint64(0) {
		j = max(i, s.Search(last+1))
	}
	return s.keys[i:j]
}

func searchRange(keys []uint64, first, last uint64) []uint64 {
	i := sort.Search(len(keys), func(i int) bool { return keys[i] >= first })
	j := i + sort.Search(len(keys)-i, func(k int) bool { return keys[i+k] > last })
	return keys[i:j]
}

// Tile returns the keys of the dots inside tile (z, x, y).
func (s *Store) Tile(z, x, y int) []uint64 {
	return s.Range(TileRange(z, x, y))
}

// Tiles calls fn for every tile at zoom z that holds at least one dot, in
// Z-order, jumping from tile to tile by binary search.
func (s *Store) Tiles(z int, fn func(x, y int)) {
	s.EachTile(z, func(x, y int, _ []uint64) { fn(x, y) })
}

// EachTile calls fn for every tile at zoom z that holds dots, in Z-order,
// with the tile's keys, searching through the index.
func (s *Store) EachTile(z int, fn func(x, y int, keys []uint64)) {
	shift := uint(2*(WorldBits-z) + CatBits)
	i := 0
	for i < len(s.keys) {
		m := s.keys[i] >> shift
		tx, ty := deinterleave(m)
		next := (m + 1) << shift
		j := len(s.keys)
		if next != 0 {
			j = s.Search(next)
		}
		fn(int(tx), int(ty), s.keys[i:j])
		i = j
	}
}

// TilesOf calls fn for every tile at zoom z that holds keys, in Z-order,
// with the tile's keys; keys must be sorted.
func TilesOf(keys []uint64, z int, fn func(x, y int, keys []uint64)) {
	shift := uint(2*(WorldBits-z) + CatBits)
	i := 0
	for i < len(keys) {
		m := keys[i] >> shift
		tx, ty := deinterleave(m)
		next := (m + 1) << shift
		j := len(keys)
		if next != 0 { // next == 0 past the last tile of the world
			j = i + sort.Search(len(keys)-i, func(k int) bool { return keys[i+k] >= next })
		}
		fn(int(tx), int(ty), keys[i:j])
		i = j
	}
}

// Release lets the operating system drop the pages of a mapped store that
// reads have brought in, so that resident memory stays bounded while a
// pyramid sweeps the file; later reads fault them back from the page cache.
// It does nothing for an in-memory store.
func (s *Store) Release() {
	if s.m != nil {
		s.m.release()
		for i := range s.touched {
			s.touched[i].Store(0)
		}
		s.resident.Store(0)
	}
}

// Touched notes that keys, a slice of this store's keys (from Range, Tile,
// EachTile or Keys), have been read: Resident counts the blocks they lie
// in. Slices of other memory are ignored.
func (s *Store) Touched(keys []uint64) {
	if s.touched == nil || len(keys) == 0 || len(s.keys) == 0 {
		return
	}
	base := uintptr(unsafe.Pointer(unsafe.SliceData(s.keys)))
	p := uintptr(unsafe.Pointer(unsafe.SliceData(keys)))
	if p < base || p >= base+uintptr(len(s.keys))*8 {
		return
	}
	i := int((p - base) / 8)
	s.touch(i, i+len(keys))
}

// Resident is an upper estimate of the bytes of a mapped store that
// searches (Search, and Range, Tile and EachTile through it) and the reads
// reported to Touched have made resident since the last Release: each
// block of 2^13 keys they reached counts 128 KiB. It is 0 for an
// in-memory store.
func (s *Store) Resident() int64 { return s.resident.Load() }

// Close unmaps a mapped store; its key slices must not be used afterwards.
func (s *Store) Close() error {
	if s.m == nil {
		return nil
	}
	err := s.m.close()
	s.m, s.keys = nil, nil
	return err
}
