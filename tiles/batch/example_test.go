package batch_test

import (
	"fmt"

	"github.com/stipple-maps/stipple/geo/demo"
	"github.com/stipple-maps/stipple/tiles/batch"
)

// Pick chooses an extent's areas; their counts make its legend.
func ExamplePick() {
	city := demo.City(1)
	for _, e := range []*batch.Extent{
		{Slug: "old-quay", Select: batch.ByField, Field: "district", Values: []string{"Old Quay"}},
		{Slug: "mouth", Select: batch.ByBox, BBox: [4]float64{-128.40, -34.26, -128.30, -34.19}},
		{Slug: "park", Select: batch.ByIDs, IDs: []string{"QM0370", "QM9999"}},
	} {
		p, err := batch.Pick(e, city)
		if err != nil {
			fmt.Printf("%s: %v\n", e.Slug, err)
			continue
		}
		fmt.Printf("%s: %s\n", e.Slug, p.Rule)
	}
	// Output:
	// old-quay: the 73 areas whose district is "Old Quay"
	// mouth: the 39 areas whose centre lies in the box -128.4, -34.26 to -128.3, -34.19 (west, south to east, north)
	// park: ids: no area in quillmere (built-in demo) has id "QM9999"
}
