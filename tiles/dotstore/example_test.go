package dotstore_test

import (
	"fmt"
	"os"
	"path/filepath"

	"github.com/stipple-maps/stipple/tiles/dotstore"
)

// A builder with a tiny budget spills sorted runs and merges them; the
// store it returns lists every tile's dots as one run of keys.
func ExampleBuilder() {
	dir, _ := os.MkdirTemp("", "dots")
	defer os.RemoveAll(dir)
	b := dotstore.NewBuilder(dotstore.BuilderOptions{Memory: 16 << 12, SpillDir: dir})
	var keys []uint64
	for i := 0; i < 10000; i++ {
		x, y := dotstore.World(-3+float64(i%100)*0.01, 51+float64(i/100)*0.01)
		keys = append(keys, dotstore.Key(x, y, i%3))
	}
	b.Add(keys)
	spilled := b.Runs()
	s, err := b.Finish(filepath.Join(dir, "dots.bin"))
	if err != nil {
		fmt.Println(err)
		return
	}
	defer s.Close()
	n := 0
	s.Tiles(9, func(x, y int) { n += len(s.Tile(9, x, y)) })
	fmt.Println(spilled, s.Len(), n, s.Count(0))
	// Output: 2 10000 10000 3334
}

func ExampleSortKeys() {
	keys := []uint64{42, 7, 1 << 60, 7, 0}
	dotstore.SortKeys(keys, make([]uint64, len(keys)), 2)
	fmt.Println(keys)
	// Output: [0 7 7 42 1152921504606846976]
}
