package shapefile_test

import (
	"fmt"
	"log"

	"github.com/stipple-maps/stipple/geo/shapefile"
)

// Reading the invented districts of testdata/vellmora (written by ogr2ogr):
// ids keep their leading zeros, the second district is a polygon with a
// lake holding an island that has a pond of its own.
func ExampleReadAll() {
	l, warns, err := shapefile.ReadAll("testdata/vellmora/vellmora.shp", shapefile.Options{IDField: "code"})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(l.Name, l.Fields, len(warns), "warnings")
	for _, f := range l.Features {
		holes := 0
		for _, p := range f.Geometry {
			holes += len(p) - 1
		}
		fmt.Printf("%d %s %q: %d polygons, %d holes, pop %v, founded %v\n",
			f.Index, f.ID, f.Props["name"], len(f.Geometry), holes, f.Props["pop"], f.Props["founded"])
	}
	fmt.Println("first outer ring:", l.Features[0].Geometry[0][0])
	// Output:
	// vellmora [code name pop big share founded active] 0 warnings
	// 0 007 "Ñandú Östra": 1 polygons, 1 holes, pop 12345, founded 1987-06-15
	// 1 012 "Læsøvik Nord": 2 polygons, 2 holes, pop 678, founded 2003-11-02
	// 2 100 "Centrum": 1 polygons, 0 holes, pop <nil>, founded 1950-01-31
	// first outer ring: [[10 50] [10.1 50] [10.1 50.1] [10 50.1] [10 50]]
}

// Errors are one line and name the file and, for a record, the feature.
func ExampleRead_error() {
	_, err := shapefile.Read("../../testdata/bad/shapefile/nan-coordinate/nan-coordinate.shp", shapefile.Options{IDField: "id"})
	fmt.Println(err)
	// Output:
	// shapefile: ../../testdata/bad/shapefile/nan-coordinate/nan-coordinate.shp: feature 1 (id "b"): record 2: point 1 has a non-finite coordinate (x NaN, y 5)
}
