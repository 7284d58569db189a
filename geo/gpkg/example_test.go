package gpkg_test

import (
	"fmt"
	"log"

	"github.com/stipple-maps/stipple/geo/gpkg"
)

func ExampleLayers() {
	ls, err := gpkg.Layers("testdata/zones.gpkg")
	if err != nil {
		log.Fatal(err)
	}
	for _, l := range ls {
		fmt.Printf("%s: column %s, type %s, srs_id %d\n", l.Name, l.GeometryColumn, l.GeometryType, l.SRSID)
	}
	// Output:
	// zones: column geom, type GEOMETRY, srs_id 4326
}

func ExampleRead() {
	layer, err := gpkg.Read("testdata/zones.gpkg", gpkg.Options{IDField: "zone"})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(layer.Name, layer.CRS, layer.Fields)
	for _, f := range layer.Features {
		fmt.Printf("%s %q households=%d parts=%d first ring=%v\n",
			f.ID, f.Props["label"], f.Props["households"], len(f.Geometry), f.Geometry[0][0])
	}
	// Output:
	// zones EPSG:4326 [zone label households share coastal note surveyed]
	// 007 "Mill Row" households=412 parts=1 first ring=[[4.5 51] [4.6 51] [4.6 51.1] [4.5 51.1] [4.5 51]]
	// 010 "Kiln Yard" households=0 parts=1 first ring=[[4.6 51] [4.7 51] [4.7 51.1] [4.6 51.1] [4.6 51]]
	// 0100 "Ferry Lane" households=9001 parts=2 first ring=[[4.7 51] [4.8 51] [4.8 51.1] [4.7 51]]
}
