package dotstore_test

import (
	"fmt"
	"math"
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

// The sampler draws dots in the plane (longitude, sin latitude);
// WorldFromSin takes that sine as it is. Here the point of IOGP Guidance
// Note 7-2's Web Mercator example (24°22′54.433″N, 100°20′W), whose
// EPSG:3857 northing is 2 800 000.00 m: the same cell as World's from the
// latitude, whose centre lies within half a cell (3.7 cm) of that northing.
func ExampleWorldFromSin() {
	lat := 24 + 22.0/60 + 54.433/3600
	lon := -(100 + 20.0/60)
	x, y := dotstore.WorldFromSin(lon, math.Sin(lat*math.Pi/180))
	wx, wy := dotstore.World(lon, lat)
	half := math.Pi * 6378137 // half the square world's width, metres
	n := half - (float64(y)+0.5)/dotstore.WorldSize*2*half
	fmt.Println(x, y, x == wx && y == wy)
	fmt.Printf("N = %.2f m\n", n)
	// Output:
	// 118807544 230924840 true
	// N = 2799999.98 m
}
