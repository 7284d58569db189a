package shard_test

import (
	"fmt"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/shard"
)

// Four invented areas of equal size, one with half of the people. Weighed
// by dots alone, the busy area gets a part of its own. The default rates
// also count the tiles (about 57 µs each to composite and encode and 23 µs
// more to write its file on disk, against about half a microsecond to
// place a dot and 0.4 µs to draw it at each zoom of discs), and the four
// areas have the same number of tiles: cut at zoom 7, where the busy
// area's tiles can go to both parts, the parts' work, tiles and dots
// together, comes out within 1% although their dots do not.
func ExamplePlan() {
	box := func(lon, lat float64) orb.Bound {
		return orb.Bound{Min: orb.Point{lon, lat}, Max: orb.Point{lon + 3, lat + 3}}
	}
	// At zoom 5 each box lies in its own tile (tiles are 11.25° wide).
	areas := []shard.Area{
		{Bound: box(1, 12), Dots: 6000},
		{Bound: box(12, 12), Dots: 2000},
		{Bound: box(1, 1), Dots: 2000},
		{Bound: box(12, 1), Dots: 2000},
	}
	p := shard.Pyramid{MinZoom: 0, MaxZoom: 10, TileSize: 256,
		Look: func(z int) render.Dot { return render.Dot{Diameter: 0.5 * float64(int(1)<<max(z-6, 0)), Opacity: 1} }}
	dotsOnly := &shard.Rates{SampleNsPerDot: 100}
	for _, r := range []*shard.Rates{dotsOnly, nil} {
		l, err := shard.Plan(areas, p, shard.PlanOptions{Shards: 2, Rates: r})
		if err != nil {
			panic(err)
		}
		fmt.Printf("split zoom %d, %d blocks, imbalance %.2f, dots per part %v\n", l.Split, l.Blocks, l.Imbalance(), l.Dots)
	}
	// Output:
	// split zoom 5, 4 blocks, imbalance 1.00, dots per part [6000 6000]
	// split zoom 7, 16 blocks, imbalance 1.01, dots per part [7500 4500]
}
