package crosswalk_test

import (
	"fmt"

	"github.com/stipple-maps/stipple/geo/crosswalk"
)

// An invented older count: area "7" split into "7a" and "7b", areas "8"
// and "9" merged into "89".
func ExampleApply() {
	sources := []string{"7", "8", "9"}
	counts := [][]float64{{1000}, {300}, {200}}
	targets := []string{"7a", "7b", "89"}
	pairs := []crosswalk.Pair{{"7", "7a", 0.25}, {"7", "7b", 0.75}, {"8", "89", 1}, {"9", "89", 1}}
	out, rep, err := crosswalk.Apply(sources, counts, targets, pairs)
	if err != nil {
		panic(err)
	}
	for j, id := range targets {
		fmt.Println(id, out[j][0])
	}
	fmt.Println("lost", rep.Lost)
	// Output:
	// 7a 250
	// 7b 750
	// 89 500
	// lost 0
}
