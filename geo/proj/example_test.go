package proj_test

import (
	"fmt"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/proj"
)

// The USA Contiguous Albers of LIBRARIES.md's cs2cs example: PROJ gives
// 1619396.692 330548.346 for 77°W 39°N.
func ExampleNewAlbers() {
	p, err := proj.NewAlbers(proj.GRS80, 37.5, -96, 29.5, 45.5, 0, 0)
	if err != nil {
		fmt.Println(err)
		return
	}
	x, y := p.Forward(-77, 39)
	fmt.Printf("%.3f %.3f\n", x, y)
	lon, lat := p.Inverse(x, y)
	fmt.Printf("%.9f %.9f\n", lon, lat)
	fmt.Println(p)
	_, err = proj.NewAlbers(proj.GRS80, 0, 0, -30, 30, 0, 0)
	fmt.Println(err)
	// Output:
	// 1619396.692 330548.346
	// -77.000000000 39.000000000
	// +proj=aea +lat_0=37.5 +lon_0=-96 +lat_1=29.5 +lat_2=45.5 +x_0=0 +y_0=0 +ellps=GRS80 +units=m
	// proj: albers: standard parallels -30 and 30 are symmetric about the equator (the cone would be a cylinder)
}

// IOGP Guidance Note 7-2, method 1024 worked example.
func ExampleWebMercator() {
	var p proj.WebMercator // EPSG:3857
	x, y := p.Forward(-(100 + 20.0/60), 24+22.0/60+54.433/3600)
	fmt.Printf("%.2f %.2f\n", x, y)
	// Output: -11169055.58 2800000.00
}

// IOGP Guidance Note 7-2, method 9820 (ETRS89-LAEA, EPSG:3035) example.
func ExampleNewLAEA() {
	p, _ := proj.NewLAEA(proj.GRS80, 52, 10, 4321000, 3210000)
	x, y := p.Forward(5, 50)
	fmt.Printf("%.2f %.2f\n", x, y)
	// Output: 3962799.45 2999718.85
}

func ExampleParseWKT() {
	// A shapefile's .prj (ESRI WKT1, as gdalsrsinfo -o wkt_esri EPSG:3035 writes it).
	prj := `PROJCS["ETRS_1989_LAEA",GEOGCS["GCS_ETRS_1989",DATUM["D_ETRS_1989",
		SPHEROID["GRS_1980",6378137.0,298.257222101]],PRIMEM["Greenwich",0.0],
		UNIT["Degree",0.0174532925199433]],PROJECTION["Lambert_Azimuthal_Equal_Area"],
		PARAMETER["False_Easting",4321000.0],PARAMETER["False_Northing",3210000.0],
		PARAMETER["Central_Meridian",10.0],PARAMETER["Latitude_Of_Origin",52.0],UNIT["Meter",1.0]]`
	crs, err := proj.ParseWKT(prj)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(crs.Name, crs.Datum, crs.Geographic)
	fmt.Println(crs.Projection)
	lon, lat := crs.ToLonLat(3962799.45, 2999718.85)
	fmt.Printf("%.6f %.6f\n", lon, lat)

	_, err = proj.ParseWKT(`PROJCS["WGS_1984_UTM_Zone_33N",GEOGCS["GCS_WGS_1984",DATUM["D_WGS_1984",SPHEROID["WGS_1984",6378137.0,298.257223563]],PRIMEM["Greenwich",0.0],UNIT["Degree",0.0174532925199433]],PROJECTION["Transverse_Mercator"],PARAMETER["False_Easting",500000.0],PARAMETER["False_Northing",0.0],PARAMETER["Central_Meridian",15.0],PARAMETER["Scale_Factor",0.9996],PARAMETER["Latitude_Of_Origin",0.0],UNIT["Meter",1.0]]`)
	fmt.Println(err)
	// Output:
	// ETRS_1989_LAEA ETRS89 false
	// +proj=laea +lat_0=52 +lon_0=10 +x_0=4321000 +y_0=3210000 +ellps=GRS80 +units=m
	// 5.000000 50.000000
	// proj: unsupported coordinate system "WGS_1984_UTM_Zone_33N" (PROJECTION["Transverse_Mercator"]); reproject to EPSG:4326 first, e.g. ogr2ogr -t_srs EPSG:4326 out.gpkg in.shp
}

func ExampleFromEPSG() {
	crs, err := proj.FromEPSG(5070)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(crs)
	x, y := crs.FromLonLat(-96, 23)
	fmt.Printf("%.3f %.3f\n", x, y)
	// Output:
	// "NAD83 / Conus Albers" (EPSG:5070): +proj=aea +lat_0=23 +lon_0=-96 +lat_1=29.5 +lat_2=45.5 +x_0=0 +y_0=0 +ellps=GRS80 +units=m
	// 0.000 0.000
}

func ExampleForExtent() {
	// An invented mid-latitude region, and one around the north pole.
	fmt.Println(proj.ForExtent(orb.Bound{Min: orb.Point{-12, 36}, Max: orb.Point{6, 48}}))
	fmt.Println(proj.ForExtent(orb.Bound{Min: orb.Point{-180, 65}, Max: orb.Point{180, 90}}))
	// Output:
	// +proj=aea +lat_0=42 +lon_0=-3 +lat_1=38 +lat_2=46 +x_0=0 +y_0=0 +ellps=WGS84 +units=m
	// +proj=laea +lat_0=90 +lon_0=0 +x_0=0 +y_0=0 +ellps=WGS84 +units=m
}

// Snyder 1987, Appendix A: Albers on the unit sphere at 35°N 75°W.
func ExampleScaleAt() {
	p, _ := proj.NewAlbers(proj.Sphere(1), 23, -96, 29.5, 45.5, 0, 0)
	h, k := proj.ScaleAt(p, -75, 35)
	fmt.Printf("h = %.7f, k = %.7f\n", h, k)
	// Output: h = 1.0085547, k = 0.9915178
}
