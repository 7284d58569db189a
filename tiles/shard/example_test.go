package shard_test

import (
	"fmt"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/shard"
)

// Four invented areas of equal size: one holds most of the people, so the
// cut goes by dots, not by area, and the busy area's blocks get a part of
// their own.
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
	l, err := shard.Plan(areas, p, shard.PlanOptions{Shards: 2})
	if err != nil {
		panic(err)
	}
	fmt.Printf("split zoom %d, %d blocks, imbalance %.2f\n", l.Split, l.Blocks, l.Imbalance())
	fmt.Println("dots per part:", l.Weight)
	// Output:
	// split zoom 5, 4 blocks, imbalance 1.00
	// dots per part: [6000 6000]
}
