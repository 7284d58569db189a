package dotstore

import (
	"slices"
	"sort"
)

// Store is a set of dots, sorted once all are added.
type Store struct {
	keys   []uint64
	sorted bool
	counts [MaxCategories]int
}

// New returns an empty store with room for n dots.
func New(n int) *Store { return &Store{keys: make([]uint64, 0, n)} }

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
		slices.Sort(s.keys)
		s.sorted = true
	}
}

// Len is the number of dots.
func (s *Store) Len() int { return len(s.keys) }

// Count is the number of dots of category cat.
func (s *Store) Count(cat int) int { return s.counts[cat] }

// Range returns the sorted keys k with first ≤ k ≤ last. The store must be
// sorted.
func (s *Store) Range(first, last uint64) []uint64 {
	i := sort.Search(len(s.keys), func(i int) bool { return s.keys[i] >= first })
	j := i + sort.Search(len(s.keys)-i, func(k int) bool { return s.keys[i+k] > last })
	return s.keys[i:j]
}

// Tile returns the keys of the dots inside tile (z, x, y).
func (s *Store) Tile(z, x, y int) []uint64 {
	return s.Range(TileRange(z, x, y))
}

// Tiles calls fn for every tile at zoom z that holds at least one dot, in
// Z-order, jumping from tile to tile by binary search.
func (s *Store) Tiles(z int, fn func(x, y int)) {
	shift := uint(2*(WorldBits-z) + CatBits)
	i := 0
	for i < len(s.keys) {
		m := s.keys[i] >> shift
		tx, ty := deinterleave(m)
		fn(int(tx), int(ty))
		next := (m + 1) << shift
		if next == 0 { // the last tile of the world
			return
		}
		i += sort.Search(len(s.keys)-i, func(k int) bool { return s.keys[i+k] >= next })
	}
}
