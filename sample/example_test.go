package sample_test

import (
	"fmt"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/sample"
)

// An invented district: a square with a lake in the middle.
func ExampleFeature() {
	f := &geo.Feature{ID: "D-7", Geometry: orb.MultiPolygon{{
		{{10, 50}, {10.2, 50}, {10.2, 50.2}, {10, 50.2}, {10, 50}},
		{{10.05, 50.05}, {10.05, 50.15}, {10.15, 50.15}, {10.15, 50.05}, {10.05, 50.05}},
	}}}
	inLake := 0
	r := sample.Feature(f, []float64{1230, 400}, sample.Options{PeoplePerDot: 100, Seed: 1},
		func(cat int, p orb.Point) {
			if p[0] > 10.05 && p[0] < 10.15 && p[1] > 50.05 && p[1] < 50.15 {
				inLake++
			}
		})
	fmt.Println("expected:", r.Expected)
	fmt.Println("drawn:", r.Dots, "in the lake:", inLake)
	// Output:
	// expected: [12.3 4]
	// drawn: [12 4] in the lake: 0
}

// Exact mode: every category gets exactly round(total/N) dots, shared by
// largest remainders; FeatureN places them. First category: 100 people,
// round(100/7) = 14 dots, quotas 7, 4.2, 2.8 → 7, 4, 3. Second: 30 people,
// 4 dots, three equal quotas of 4/3: the dot left over goes to the feature
// the seeded hash of the ids puts first (here "b"), whatever the order.
func ExampleAllocate() {
	ids := []string{"a", "b", "c"}
	counts := [][]float64{{50, 10}, {30, 10}, {20, 10}}
	dots := sample.Allocate(ids, counts, 7, 1, true)
	fmt.Println(dots)
	// Output:
	// [[7 1] [4 2] [3 1]]
}

// Masks keep dots out of areas where nobody lives; a feature that is all
// mask keeps its dots and says so.
func ExampleNewMask() {
	lake := sample.NewMask([]orb.MultiPolygon{{{{{0, 0}, {1, 0}, {1, 1}, {0, 1}, {0, 0}}}}})
	island := &geo.Feature{ID: "isle", Geometry: orb.MultiPolygon{{{{0.2, 0.2}, {0.4, 0.2}, {0.4, 0.4}, {0.2, 0.4}, {0.2, 0.2}}}}}
	r := sample.FeatureN(island, []int{5}, sample.Options{Seed: 1, Masks: lake}, func(int, orb.Point) {})
	fmt.Println(r.Dots, r.MaskIgnored)
	fmt.Println(r.Problem)
	// Output:
	// [5] true
	// masks cover (almost) all of the feature: its dots were placed ignoring them
}
