package measure_test

import (
	"fmt"

	"github.com/stipple-maps/stipple/geo/measure"
)

// Two areas of two groups, (90, 10) and (10, 90): the check value of
// ../shared/CHECKS.md, "Diversity measures" (H = 0.531004, E = ln 2).
func ExampleMeasure() {
	x, err := measure.Measure([][]float64{{90, 10}, {10, 90}})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("E = %.6f, H = %.6f, M = %.6f\n", x.Entropy, x.H, x.M)
	fmt.Printf("D = %.2f, exposure of group 0 to group 1 = %.2f, isolation = %.2f\n", x.D[0][1], x.Exposure[0][1], x.Exposure[0][0])
	// Output:
	// E = 0.693147, H = 0.531004, M = 0.368064
	// D = 0.80, exposure of group 0 to group 1 = 0.18, isolation = 0.82
}

// Metros of a nation: segregation between them and within them.
func ExampleDecompose() {
	d, err := measure.Decompose([][][]float64{
		{{90, 10}, {10, 90}}, // metro 1: separated inside
		{{50, 50}, {50, 50}}, // metro 2: even inside
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("M total %.6f = between %.6f + within %.6f\n", d.Total.M, d.Between.M, d.MWithin)
	fmt.Printf("H total %.6f = between %.6f + within %.6f\n", d.Total.H, d.Between.H, d.HWithin)
	// Output:
	// M total 0.184032 = between 0.000000 + within 0.184032
	// H total 0.265502 = between 0.000000 + within 0.265502
}
