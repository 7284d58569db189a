package table_test

import (
	"fmt"
	"log"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/table"
)

func ExampleJoin() {
	// Invented areas; their keys are the short form of the table's keys.
	layer := &geo.Layer{Path: "areas.geojson", Fields: []string{"code"}}
	for i, code := range []string{"01001", "01003", "01005", "2001", "2003", "01009"} {
		layer.Features = append(layer.Features, geo.Feature{Index: i, ID: code, Props: map[string]any{"code": code}})
	}
	t, err := table.Read("testdata/counts.csv", table.Options{
		Key: "GEO_ID", SkipRows: 1, StripPrefix: "1400000US", KeepLast: 5, NullAsZero: true,
	})
	if err != nil {
		log.Fatal(err)
	}
	rep, err := table.Join(layer, "code", t, []string{"pop_a", "pop_b"})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Print(rep)
	fmt.Println(layer.Features[0].Props["pop_a"], layer.Features[5].Props["pop_a"])
	// Output:
	// testdata/counts.csv: column "GEO_ID" joined to feature field "code": 5 of 6 features matched; 5 of 6 rows used
	// features without a row (1): "01009"
	// rows without a feature (1): "09999"
	// people in rows without a feature: 325 (pop_a 300, pop_b 25)
	// placeholder cells read as 0: pop_b 2
	// 120 <nil>
}

func ExampleOptions_Normalize() {
	opt := table.Options{Trim: true, StripPrefix: "1400000US", KeepLast: 5}
	for _, k := range []string{"1400000US01001", " 01003 ", "0500000US01005", "2001"} {
		fmt.Printf("%q\n", opt.Normalize(k))
	}
	// Output:
	// "01001"
	// "01003"
	// "01005"
	// "2001"
}

func ExampleTable_Number() {
	t, err := table.Read("testdata/counts.csv", table.Options{Key: "GEO_ID", SkipRows: 1})
	if err != nil {
		log.Fatal(err)
	}
	v, err := t.Number(0, "pop_a")
	fmt.Println(v, err)
	_, err = t.Number(1, "pop_b")
	fmt.Println(err)
	// Output:
	// 120 <nil>
	// table: testdata/counts.csv: line 4: column "pop_b": "(X)" is not a number (a placeholder for no value: set null_as_zero = true in [input.table] to count it as 0)
}
