package dotstore

import (
	"slices"
	"testing"
)

// TestResidentCountsBlocksOnce checks the resident estimate of a mapped
// store: a block of 2^touchShift keys counts touchCost the first time a
// search or a reported read reaches it and never again until Release;
// slices of other memory and in-memory stores count nothing.
func TestResidentCountsBlocksOnce(t *testing.T) {
	const n = 5<<touchShift + 100 // six blocks, the last partial
	keys := make([]uint64, n)
	for i := range keys {
		keys[i] = uint64(i) << CatBits
	}
	s := mappedStore(t, keys)
	if s.touched == nil {
		t.Skip("store not mapped on this platform")
	}
	if got := s.Resident(); got != 0 {
		t.Fatalf("after Open: %d, want 0", got)
	}
	// A search reaches the block it ends in (index block 3 of 4096 keys
	// lies in touch block 1).
	k := keys[3*indexStride+7]
	if i := s.Search(k); i != 3*indexStride+7 {
		t.Fatalf("Search = %d", i)
	}
	if got := s.Resident(); got != touchCost {
		t.Errorf("after one search: %d, want %d", got, touchCost)
	}
	s.Search(keys[3*indexStride+100]) // same block
	if got := s.Resident(); got != touchCost {
		t.Errorf("after a second search in the block: %d, want %d", got, touchCost)
	}
	// Reading keys 1·2^13 − 1 … 4·2^13: blocks 0–4, of which 1 was counted.
	s.Touched(s.Keys()[1<<touchShift-1 : 4<<touchShift+1])
	if got, want := s.Resident(), int64(5*touchCost); got != want {
		t.Errorf("after reading across blocks 0–4: %d, want %d", got, want)
	}
	s.Touched(slices.Clone(s.Keys()[n-10:])) // a copy: not the store's pages
	if got, want := s.Resident(), int64(5*touchCost); got != want {
		t.Errorf("after a copy: %d, want %d", got, want)
	}
	s.Touched(s.Keys()[n-10:]) // the partial last block
	if got, want := s.Resident(), int64(6*touchCost); got != want {
		t.Errorf("after the last block: %d, want %d", got, want)
	}
	s.Release()
	if got := s.Resident(); got != 0 {
		t.Errorf("after Release: %d, want 0", got)
	}
	s.Search(k)
	if got := s.Resident(); got != touchCost {
		t.Errorf("a block counts again after Release: %d, want %d", got, touchCost)
	}
	if !slices.Equal(s.Keys(), keys) {
		t.Fatal("keys changed")
	}

	mem := FromSorted(keys)
	mem.Search(k)
	mem.Touched(mem.Keys())
	if got := mem.Resident(); got != 0 {
		t.Errorf("in-memory store: %d, want 0", got)
	}
}
