package proj

import (
	"errors"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/reftool"
)

func readTestdata(t *testing.T, name string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// WKT from Debian gdal-bin 3.6.2 (gdalsrsinfo, ogr2ogr; testdata/gen.sh)
// must give the CRS of the EPSG register: the same projection as
// FromEPSG, whose table TestFromEPSGMatchesGDAL checks against PROJ.
func TestParseWKT(t *testing.T) {
	for _, c := range []struct {
		file  string
		name  string
		epsg  int // what the WKT says of itself (ESRI WKT names no code)
		like  int // FromEPSG code with the same projection
		geo   bool
		datum string
		unit  float64
	}{
		{"epsg4326.wkt1.wkt", "WGS 84", 4326, 4326, true, "WGS 84", 0},
		{"epsg4326.esri.prj", "GCS_WGS_1984", 0, 4326, true, "WGS 84", 0},
		{"epsg4326.wkt2.wkt", "WGS 84", 4326, 4326, true, "WGS 84", 0},
		{"epsg4269.wkt1.wkt", "NAD83", 4269, 4269, true, "NAD83", 0},
		{"epsg4269.esri.prj", "GCS_North_American_1983", 0, 4269, true, "NAD83", 0},
		{"epsg4269.wkt2.wkt", "NAD83", 4269, 4269, true, "NAD83", 0},
		{"epsg4258.wkt1.wkt", "ETRS89", 4258, 4258, true, "ETRS89", 0},
		{"epsg4258.esri.prj", "GCS_ETRS_1989", 0, 4258, true, "ETRS89", 0},
		{"epsg4258.wkt2.wkt", "ETRS89", 4258, 4258, true, "ETRS89", 0},
		{"epsg3857.wkt1.wkt", "WGS 84 / Pseudo-Mercator", 3857, 3857, false, "WGS 84", 1},
		{"epsg3857.esri.prj", "WGS_1984_Web_Mercator_Auxiliary_Sphere", 0, 3857, false, "WGS 84", 1},
		{"epsg3857.wkt2.wkt", "WGS 84 / Pseudo-Mercator", 3857, 3857, false, "WGS 84", 1},
		{"epsg3785.wkt1.wkt", "Popular Visualisation CRS / Mercator", 3785, 3857, false, "WGS 84", 1},
		{"esri102113.esri.prj", "WGS_1984_Web_Mercator", 0, 3857, false, "WGS 84", 1},
		{"epsg900913.wkt1.wkt", "Google Maps Global Mercator (deprecated)", 900913, 3857, false, "WGS 84", 1},
		{"epsg5070.wkt1.wkt", "NAD83 / Conus Albers", 5070, 5070, false, "NAD83", 1},
		{"epsg5070.esri.prj", "NAD_1983_Contiguous_USA_Albers", 0, 5070, false, "NAD83", 1},
		{"epsg5070.wkt2.wkt", "NAD83 / Conus Albers", 5070, 5070, false, "NAD83", 1},
		{"gpkg_epsg5070.definition.wkt", "NAD83 / Conus Albers", 5070, 5070, false, "NAD83", 1},
		{"esri102003.esri.prj", "USA_Contiguous_Albers_Equal_Area_Conic", 0, 102003, false, "NAD83", 1},
		{"esri102003.wkt1.wkt", "USA_Contiguous_Albers_Equal_Area_Conic", 0, 102003, false, "NAD83", 1},
		{"epsg3577.wkt1.wkt", "GDA94 / Australian Albers", 3577, 3577, false, "GDA94", 1},
		{"epsg3577.esri.prj", "GDA_1994_Australia_Albers", 0, 3577, false, "GDA94", 1},
		{"epsg3577.wkt2.wkt", "GDA94 / Australian Albers", 3577, 3577, false, "GDA94", 1},
		{"epsg3035.wkt1.wkt", "ETRS89-extended / LAEA Europe", 3035, 3035, false, "ETRS89", 1},
		{"epsg3035.esri.prj", "ETRS_1989_LAEA", 0, 3035, false, "ETRS89", 1},
		{"epsg3035.wkt2.wkt", "ETRS89-extended / LAEA Europe", 3035, 3035, false, "ETRS89", 1},
		{"gpkg_epsg3035.definition.wkt", "ETRS89-extended / LAEA Europe", 3035, 3035, false, "ETRS89", 1},
		{"epsg2163.wkt1.wkt", "US National Atlas Equal Area (deprecated)", 2163, 2163, false, "Not_specified_based_on_Clarke_1866_Authalic_Sphere", 1},
		{"epsg2163.wkt2.wkt", "US National Atlas Equal Area", 2163, 2163, false, "Not specified (based on Clarke 1866 Authalic Sphere)", 1},
		{"epsg3573.wkt1.wkt", "WGS 84 / North Pole LAEA Canada", 3573, 3573, false, "WGS 84", 1},
		{"epsg3573.esri.prj", "WGS_1984_North_Pole_LAEA_Canada", 0, 3573, false, "WGS 84", 1},
		{"epsg3573.wkt2.wkt", "WGS 84 / North Pole LAEA Canada", 3573, 3573, false, "WGS 84", 1},
		{"epsg6931.wkt1.wkt", "WGS 84 / NSIDC EASE-Grid 2.0 North", 6931, 6931, false, "WGS 84", 1},
		{"epsg6931.esri.prj", "WGS_1984_EASE-Grid_2.0_North", 0, 6931, false, "WGS 84", 1},
		{"epsg6931.wkt2.wkt", "WGS 84 / NSIDC EASE-Grid 2.0 North", 6931, 6931, false, "WGS 84", 1},
	} {
		t.Run(c.file, func(t *testing.T) {
			got, err := ParseWKT(readTestdata(t, c.file))
			if err != nil {
				t.Fatal(err)
			}
			want, err := FromEPSG(c.like)
			if err != nil {
				t.Fatal(err)
			}
			if got.Name != c.name || got.EPSG != c.epsg || got.Geographic != c.geo || got.Datum != c.datum || got.UnitMetres != c.unit {
				t.Errorf("got %q EPSG %d geographic %v datum %q unit %v, want %q %d %v %q %v",
					got.Name, got.EPSG, got.Geographic, got.Datum, got.UnitMetres, c.name, c.epsg, c.geo, c.datum, c.unit)
			}
			if c.geo {
				if got.Projection != nil {
					t.Errorf("geographic CRS with projection %v", got.Projection)
				}
				return
			}
			if got.Projection == nil || got.Projection.String() != want.Projection.String() {
				t.Errorf("projection %v, want %v", got.Projection, want.Projection)
			}
		})
	}
}

// The hand-made WKT in US survey feet (testdata/README.md): false origin
// 1 000 000 ft E, 500 000 ft N; 1 ft = 1200/3937 m.
func TestParseWKTUSFeet(t *testing.T) {
	for _, f := range []string{"handmade_albers_usft.wkt1.wkt", "handmade_albers_usft.esri.prj"} {
		c, err := ParseWKT(readTestdata(t, f))
		if err != nil {
			t.Fatal(err)
		}
		near(t, f+" unit", c.UnitMetres, 1200.0/3937, 1e-15)
		// At the origin (23°N, 96°W) the CRS reads the false origin.
		x, y := c.FromLonLat(-96, 23)
		near(t, f+" x at origin", x, 1000000, 1e-6)
		near(t, f+" y at origin", y, 500000, 1e-6)
		lon, lat := c.ToLonLat(1000000, 500000)
		near(t, f+" lon at origin", lon, -96, 1e-12)
		near(t, f+" lat at origin", lat, 23, 1e-12)
		// Metres of the projection are feet times the unit.
		m, _ := FromEPSG(5070)
		xm, _ := m.Projection.Forward(-77, 39)
		x, _ = c.FromLonLat(-77, 39)
		near(t, f+" x at 77°W 39°N", x, xm/USSurveyFoot+1000000, 1e-6)
	}
}

// Our reading of every supported WKT file against GDAL's reading of it
// (gdalsrsinfo -o proj4), both driven through PROJ's cs2cs on a grid
// around the projection's centre: agreement to 1 mm in the CRS's unit.
func TestParseWKTMatchesGDAL(t *testing.T) {
	gdal := reftool.Need(t, "gdalsrsinfo")
	cs := reftool.Need(t, "cs2cs")
	files, _ := filepath.Glob("testdata/*.*")
	var n int
	for _, f := range files {
		base := filepath.Base(f)
		if strings.HasPrefix(base, "unsupported_") || !strings.HasSuffix(base, ".wkt") && !strings.HasSuffix(base, ".prj") {
			continue
		}
		c, err := ParseWKT(readTestdata(t, base))
		if err != nil {
			t.Errorf("%s: %v", base, err)
			continue
		}
		if c.Geographic {
			continue
		}
		n++
		// Each external call waits mostly on PROJ's database, not on the
		// CPU: run the files side by side.
		t.Run(base, func(t *testing.T) {
			t.Parallel()
			cmd := exec.Command(gdal, "-o", "proj4", f)
			cmd.Env = append(os.Environ(), "OSR_USE_NON_DEPRECATED=NO")
			out, err := cmd.Output()
			if err != nil {
				t.Fatalf("gdalsrsinfo %s: %v", f, err)
			}
			target := strings.Fields(string(out))
			var lat0, lon0 float64
			switch p := c.Projection.(type) {
			case *Albers:
				lat0, lon0 = (p.lat1+p.lat2)/2, p.lon0
			case *LAEA:
				lat0, lon0 = p.lat0, p.lon0
			}
			pts := grid(lon0-40, lon0+40, 4, math.Max(-85, lat0-30), math.Min(85, lat0+30), 3)
			want := cs2cs(t, cs, append([]string{"+proj=longlat", "+datum=WGS84", "+to"}, target...), "%.6f", pts)
			for i, pt := range pts {
				x, y := c.FromLonLat(pt[0], pt[1])
				if d := math.Max(math.Abs(x-want[i][0]), math.Abs(y-want[i][1])); !(d <= 0.001/c.UnitMetres) {
					t.Fatalf("%v: got (%.6f, %.6f), GDAL+cs2cs (%.6f, %.6f)", pt, x, y, want[i][0], want[i][1])
				}
			}
		})
	}
	if n < 20 {
		t.Errorf("only %d projected WKT files compared", n)
	}
}

// Coordinate systems we do not convert name themselves and the part that
// is not supported, and tell the user what to do.
func TestParseWKTUnsupported(t *testing.T) {
	for _, c := range []struct {
		file, want string
	}{
		{"unsupported_epsg32633.wkt1.wkt", `proj: unsupported coordinate system "WGS 84 / UTM zone 33N" (PROJECTION["Transverse_Mercator"]); reproject to EPSG:4326 first, e.g. ogr2ogr -t_srs EPSG:4326 out.gpkg in.shp`},
		{"unsupported_epsg32633.esri.prj", `"WGS_1984_UTM_Zone_33N" (PROJECTION["Transverse_Mercator"])`},
		{"unsupported_epsg2227.wkt1.wkt", `"NAD83 / California zone 3 (ftUS)" (PROJECTION["Lambert_Conformal_Conic_2SP"])`},
		{"unsupported_epsg3031.wkt1.wkt", `(PROJECTION["Polar_Stereographic"])`},
		{"unsupported_epsg3395.wkt1.wkt", `"WGS 84 / World Mercator" (PROJECTION["Mercator_1SP"] on an ellipsoid)`},
		{"unsupported_epsg3395.wkt2.wkt", `(METHOD["Mercator (variant A)"] on an ellipsoid)`},
		{"unsupported_epsg27700.wkt1.wkt", `"OSGB36 / British National Grid" (DATUM["Ordnance_Survey_of_Great_Britain_1936"])`},
		{"unsupported_epsg4267.wkt1.wkt", `"NAD27" (DATUM["North_American_Datum_1927"])`},
		{"unsupported_epsg9311.wkt1.wkt", `"NAD27 / US National Atlas Equal Area" (DATUM["North_American_Datum_1927"])`},
	} {
		_, err := ParseWKT(readTestdata(t, c.file))
		var u *UnsupportedError
		if !errors.As(err, &u) {
			t.Errorf("%s: got %v, want an *UnsupportedError", c.file, err)
			continue
		}
		if !strings.Contains(err.Error(), c.want) || !strings.HasSuffix(err.Error(), "ogr2ogr -t_srs EPSG:4326 out.gpkg in.shp") {
			t.Errorf("%s:\n got %s\nwant %s", c.file, err, c.want)
		}
	}
}

// Hand-written WKT (invented CRSs) for the rules the generated files do not
// reach, and malformed or hostile input.
func TestParseWKTErrors(t *testing.T) {
	const geog = `GEOGCS["GCS_WGS_1984",DATUM["D_WGS_1984",SPHEROID["WGS_1984",6378137.0,298.257223563]],PRIMEM["Greenwich",0.0],UNIT["Degree",0.0174532925199433]]`
	albers := func(params string) string {
		return `PROJCS["Invented",` + geog + `,PROJECTION["Albers"],` + params + `,UNIT["Meter",1.0]]`
	}
	for _, c := range []struct {
		name, wkt, want string
	}{
		{"empty", "", "proj: WKT: empty"},
		{"spaces", " \n\t", "proj: WKT: empty"},
		{"geopackage undefined", "undefined", `proj: WKT: expected a keyword such as PROJCS[ or GEOGCRS[, found "undefined" at byte 0`},
		{"unterminated string", `GEOGCS["WGS 84`, "proj: WKT: unterminated string at byte 7"},
		{"unclosed bracket", `GEOGCS["WGS 84",DATUM["x"`, `proj: WKT: unclosed DATUM[ opened at byte 16 at byte 25`},
		{"extra bracket", geog + "]", `proj: WKT: unexpected "]" after the end at byte 145`},
		{"missing comma", `GEOGCS["a" "b"]`, `proj: WKT: expected ',' or "]" in GEOGCS[, found "\"" at byte 11`},
		{"mismatched bracket", `GEOGCS["a")`, `proj: WKT: expected ',' or "]" in GEOGCS[, found ")" at byte 10`},
		{"bad number", `GEOGCS["a",DATUM["b",SPHEROID["c",6378137x,298]]]`, `proj: WKT: bad number "6378137x" at byte 34`},
		{"NaN number", `GEOGCS["a",DATUM["b",SPHEROID["c",+NaN,298]]]`, `proj: WKT: bad number "+NaN" at byte 34`},
		{"infinite number", `GEOGCS["a",DATUM["b",SPHEROID["c",1e999,298]]]`, `proj: WKT: bad number "1e999" at byte 34`},
		{"bad keyword", `GEO-GCS["a"]`, `proj: WKT: bad keyword "GEO-GCS" at byte 0`},
		{"too deep", strings.Repeat("A[", 100) + strings.Repeat("]", 100), "proj: WKT: brackets nested deeper than 32 at byte 64"},
		{"too long", `GEOGCS["` + strings.Repeat("x", 70000) + `"]`, "proj: WKT: 70010 bytes is more than the 65536 allowed"},
		{"too many nodes", "A[" + strings.Repeat("B[],", 5000) + "B[]]", "proj: WKT: more than 4096 keywords at byte 16382"},
		{"no datum", `GEOGCS["a",PRIMEM["Greenwich",0]]`, `proj: WKT: GEOGCS["a"] has no DATUM[...]`},
		{"no spheroid", `GEOGCS["a",DATUM["D_WGS_1984"]]`, `proj: WKT: DATUM["D_WGS_1984"] has no SPHEROID[...] or ELLIPSOID[...]`},
		{"negative axis", `GEOGCS["a",DATUM["D_WGS_1984",SPHEROID["s",-6378137,298.257223563]]]`, `proj: WKT: SPHEROID["s"]: ellipsoid semi-major axis -6.378137e+06 is not a positive finite length`},
		{"flattening", `GEOGCS["a",DATUM["D_WGS_1984",SPHEROID["s",6378137,0.5]]]`, `proj: WKT: SPHEROID["s"]: inverse flattening 0.5 is not above 1`},
		{"paris meridian", `GEOGCS["a",DATUM["D_WGS_1984",SPHEROID["s",6378137,298.257223563]],PRIMEM["Paris",2.33722917]]`, `proj: unsupported coordinate system "a" (PRIMEM["Paris",2.33722917])`},
		{"grads", `GEOGCS["a",DATUM["D_WGS_1984",SPHEROID["s",6378137,298.257223563]],PRIMEM["Greenwich",0],UNIT["grad",0.015707963267949]]`, `proj: unsupported coordinate system "a" (angle unit "grad")`},
		{"geocentric", `GEOCCS["a",DATUM["D_WGS_1984",SPHEROID["s",6378137,298.257223563]]]`, `proj: unsupported coordinate system "a" (GEOCCS[...])`},
		{"local", `LOCAL_CS["a"]`, `proj: unsupported coordinate system "a" (LOCAL_CS[...])`},
		{"albers one parallel", albers(`PARAMETER["Standard_Parallel_1",29.5]`), `proj: WKT: "Invented": Albers needs standard_parallel_1 and standard_parallel_2`},
		{"albers symmetric", albers(`PARAMETER["Standard_Parallel_1",-30],PARAMETER["Standard_Parallel_2",30]`), `proj: albers: standard parallels -30 and 30 are symmetric about the equator (the cone would be a cylinder) (in "Invented")`},
		{"albers lat 95", albers(`PARAMETER["Standard_Parallel_1",29.5],PARAMETER["Standard_Parallel_2",95]`), `proj: albers: standard parallel 2 95 is outside [-90, 90] degrees (in "Invented")`},
		{"albers unknown parameter", albers(`PARAMETER["Standard_Parallel_1",29.5],PARAMETER["Standard_Parallel_2",45],PARAMETER["Azimuth",3]`), `proj: unsupported coordinate system "Invented" (PROJECTION["Albers"] with PARAMETER["Azimuth",3])`},
		{"albers scale", albers(`PARAMETER["Standard_Parallel_1",29.5],PARAMETER["Standard_Parallel_2",45],PARAMETER["Scale_Factor",0.9996]`), `(PROJECTION["Albers"] with scale factor 0.9996)`},
		{"albers parameter text", albers(`PARAMETER["Standard_Parallel_1","x"]`), `proj: WKT: PARAMETER["Standard_Parallel_1"] has no number`},
		{"aux sphere authalic", `PROJCS["a",` + geog + `,PROJECTION["Mercator_Auxiliary_Sphere"],PARAMETER["Auxiliary_Sphere_Type",2.0],UNIT["Meter",1.0]]`, `(PROJECTION["Mercator_Auxiliary_Sphere"] with Auxiliary_Sphere_Type 2)`},
		{"zero unit", `PROJCS["a",` + geog + `,PROJECTION["Albers"],UNIT["Meter",0]]`, `proj: WKT: UNIT["Meter"] has no positive conversion factor`},
		{"no projection", `PROJCS["a",` + geog + `,UNIT["Meter",1]]`, `proj: WKT: PROJCS["a"] has no PROJECTION[...] or CONVERSION[METHOD[...]]`},
		{"no base", `PROJCS["a",PROJECTION["Albers"]]`, `proj: WKT: PROJCS["a"] has no geographic base (GEOGCS[...] or BASEGEOGCRS[...])`},
	} {
		_, err := ParseWKT(c.wkt)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: got error %v\nwant %s", c.name, err, c.want)
		}
	}
}

// Forms the generated files do not show: compound and bound CRSs, WKT2
// parameters in other units, round brackets, a doubled quote.
func TestParseWKTForms(t *testing.T) {
	laea := readTestdata(t, "epsg3035.wkt2.wkt")
	for _, c := range []struct {
		name, wkt, want string
	}{
		{"compound", `COMPD_CS["x + height",` + readTestdata(t, "epsg5070.wkt1.wkt") + `,VERT_CS["h",VERT_DATUM["v",2005]]]`,
			"+proj=aea +lat_0=23 +lon_0=-96 +lat_1=29.5 +lat_2=45.5 +x_0=0 +y_0=0 +ellps=GRS80 +units=m"},
		{"bound", `BOUNDCRS[SOURCECRS[` + laea + `],TARGETCRS[` + readTestdata(t, "epsg4326.wkt2.wkt") + `],ABRIDGEDTRANSFORMATION["t",METHOD["Geocentric translations"],PARAMETER["X-axis translation",0]]]`,
			"+proj=laea +lat_0=52 +lon_0=10 +x_0=4321000 +y_0=3210000 +ellps=GRS80 +units=m"},
		{"round brackets and doubled quote", `PROJCS("Invented ""LAEA""",GEOGCS("g",DATUM("D_WGS_1984",SPHEROID("s",6378137,298.257223563)),PRIMEM("Greenwich",0),UNIT("Degree",0.0174532925199433)),PROJECTION("Lambert_Azimuthal_Equal_Area"),PARAMETER("Latitude_Of_Origin",-30),PARAMETER("Central_Meridian",25),UNIT("Meter",1))`,
			"+proj=laea +lat_0=-30 +lon_0=25 +x_0=0 +y_0=0 +ellps=WGS84 +units=m"},
		{"WKT2 parameters in grads and km", strings.NewReplacer(
			`PARAMETER["Latitude of natural origin",52,
            ANGLEUNIT["degree",0.0174532925199433]`, `PARAMETER["Latitude of natural origin",50,
            ANGLEUNIT["grad",0.015707963267949]`,
			`PARAMETER["False easting",4321000,
            LENGTHUNIT["metre",1]`, `PARAMETER["False easting",4321,
            LENGTHUNIT["kilometre",1000]`).Replace(laea),
			"+proj=laea +lat_0=45.0000000000001 +lon_0=10 +x_0=4321000 +y_0=3210000 +ellps=GRS80 +units=m"},
	} {
		crs, err := ParseWKT(c.wkt)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if got := crs.Projection.String(); got != c.want {
			t.Errorf("%s:\n got %s\nwant %s", c.name, got, c.want)
		}
	}
	crs, _ := ParseWKT(`PROJCS("Invented ""LAEA""",GEOGCS("g",DATUM("D_WGS_1984",SPHEROID("s",6378137,298.257223563))),PROJECTION("Lambert_Azimuthal_Equal_Area"))`)
	if crs.Name != `Invented "LAEA"` {
		t.Errorf("name %q", crs.Name)
	}
}

// FromEPSG's table against PROJ's EPSG database as GDAL prints it
// (gdalsrsinfo -o proj4, Debian gdal-bin 3.6.2).
func TestFromEPSGMatchesGDAL(t *testing.T) {
	gdal := reftool.Need(t, "gdalsrsinfo")
	for code := range epsgTable {
		t.Run(num(float64(code)), func(t *testing.T) {
			t.Parallel()
			c, err := FromEPSG(code)
			if err != nil {
				t.Fatalf("EPSG:%d: %v", code, err)
			}
			auth := "EPSG:"
			if code >= 100000 && code < 200000 {
				auth = "ESRI:"
			}
			cmd := exec.Command(gdal, "-o", "proj4", auth+num(float64(code)))
			cmd.Env = append(os.Environ(), "OSR_USE_NON_DEPRECATED=NO")
			out, err := cmd.Output()
			if err != nil {
				t.Fatalf("gdalsrsinfo %s%d: %v", auth, code, err)
			}
			gdalParams := projParams(string(out))
			var ours map[string]string
			if c.Geographic {
				ours = map[string]string{"proj": "longlat"}
			} else {
				ours = projParams(c.Projection.String())
			}
			if ours["proj"] == "webmerc" {
				// GDAL writes EPSG:3857 as the classic Mercator-on-a-sphere
				// string; it is the same projection.
				ours = projParams("+proj=merc +a=6378137 +b=6378137 +lat_ts=0 +lon_0=0 +x_0=0 +y_0=0 +k=1")
			}
			// GDAL names datums where we name ellipsoids.
			switch gdalParams["datum"] {
			case "WGS84":
				gdalParams["ellps"] = "WGS84"
			case "NAD83":
				gdalParams["ellps"] = "GRS80"
			}
			if gdalParams["ellps"] == "sphere" { // PROJ's "sphere" is R = 6370997 m
				delete(gdalParams, "ellps")
				gdalParams["R"] = "6370997"
			}
			delete(gdalParams, "datum")
			delete(gdalParams, "towgs84")
			delete(gdalParams, "no_defs")
			delete(gdalParams, "wktext")
			delete(gdalParams, "nadgrids")
			delete(gdalParams, "units")
			delete(ours, "units")
			if c.Geographic {
				if gdalParams["proj"] != "longlat" {
					t.Errorf("EPSG:%d: GDAL says %s", code, out)
				}
				return
			}
			for k, v := range gdalParams {
				if ours[k] != v {
					t.Errorf("%s%d: +%s=%s, GDAL +%s=%s (GDAL: %s; ours: %s)", auth, code, k, ours[k], k, v, strings.TrimSpace(string(out)), c.Projection)
				}
			}
			for k := range ours {
				if _, ok := gdalParams[k]; !ok {
					t.Errorf("%s%d: +%s not in GDAL's %s", auth, code, k, strings.TrimSpace(string(out)))
				}
			}
		})
	}
}

// projParams splits a PROJ string into its +key=value parameters.
func projParams(s string) map[string]string {
	m := map[string]string{}
	for _, f := range strings.Fields(s) {
		f = strings.TrimPrefix(f, "+")
		k, v, _ := strings.Cut(f, "=")
		m[k] = v
	}
	return m
}

func TestFromEPSGUnsupported(t *testing.T) {
	_, err := FromEPSG(32633)
	var u *UnsupportedError
	if !errors.As(err, &u) || u.Name != "EPSG:32633" || !strings.Contains(err.Error(), "not one of EPSG:2163, 3035, ") {
		t.Errorf("got %v", err)
	}
}

// CRS.ToLonLat and FromLonLat on a geographic CRS pass coordinates through.
func TestCRSGeographicPassThrough(t *testing.T) {
	c, err := FromEPSG(4269)
	if err != nil {
		t.Fatal(err)
	}
	if x, y := c.FromLonLat(-77, 39); x != -77 || y != 39 {
		t.Errorf("FromLonLat = %v, %v", x, y)
	}
	if lon, lat := c.ToLonLat(-77, 39); lon != -77 || lat != 39 {
		t.Errorf("ToLonLat = %v, %v", lon, lat)
	}
	if s := c.String(); s != `"NAD83" (EPSG:4269): longitude/latitude on NAD83` {
		t.Errorf("String = %s", s)
	}
}

// ParseWKT never panics or hangs, whatever the bytes; seeds are the
// testdata files.
func FuzzParseWKT(f *testing.F) {
	files, _ := filepath.Glob("testdata/*.*")
	for _, name := range files {
		if b, err := os.ReadFile(name); err == nil {
			f.Add(string(b))
		}
	}
	f.Add(`A[[[[`)
	f.Add(`PROJCS["a",GEOGCS["g",DATUM["D_WGS_1984",SPHEROID["s",6378137,0]]],PROJECTION["Albers"],PARAMETER["standard_parallel_1",90],PARAMETER["standard_parallel_2",90]]`)
	f.Fuzz(func(t *testing.T, wkt string) {
		c, err := ParseWKT(wkt)
		if err != nil {
			if c.Projection != nil || c.Name != "" {
				t.Errorf("error %v with a CRS %v", err, c)
			}
			return
		}
		if !c.Geographic && c.Projection == nil {
			t.Errorf("projected CRS without a projection: %v", c)
		}
		if c.Projection != nil {
			c.ToLonLat(c.FromLonLat(10, 45)) // must not panic
		}
	})
}
