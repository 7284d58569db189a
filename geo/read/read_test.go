package read

import (
	"math"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/geojson"
	"github.com/stipple-maps/stipple/geo/reftool"
)

func TestRepairsAreMadeAndReported(t *testing.T) {
	res, err := File("testdata/repairs.geojson", Options{IDField: "code"})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{
		`feature 2 (id "two-points"): field "geometry": part 0 outer ring 0 has 2 distinct points; dropped`,
		`feature 2 (id "two-points"): field "geometry": no polygon with area is left; its people cannot be drawn`,
		`feature 3 (id "flat"): field "geometry": part 0 outer ring 0 has no area; dropped`,
		`feature 4 (id "bowtie"): field "geometry": part 0 outer ring 0 crosses itself; dots fill it by the even-odd rule`,
		`feature 5 (id "dateline"): field "geometry": part 0 outer ring 0 jumps more than 180° of longitude`,
	}
	all := strings.Join(res.Notes, "\n")
	for _, w := range want {
		if !strings.Contains(all, w) {
			t.Errorf("notes lack %q; notes:\n%s", w, all)
		}
	}
	r := res.Repairs
	if r.ClosedRings != 1 || r.DroppedPoints != 2 || r.DroppedRings != 2 || r.SelfIntersecting != 1 || r.Antimeridian != 1 || r.EmptyFeatures != 2 {
		t.Errorf("repairs = %+v", r)
	}
	if got := res.Layer.Features[0].Geometry[0][0]; len(got) != 5 || got[0] != got[4] {
		t.Errorf("unclosed ring not closed: %v", got)
	}
	if got := res.Layer.Features[1].Geometry[0][0]; len(got) != 5 {
		t.Errorf("repeated points not dropped: %v", got)
	}
}

func TestProjectedCoordinatesWithoutCRS(t *testing.T) {
	_, err := File("testdata/projected-no-crs.geojson", Options{IDField: "code"})
	if err == nil || !strings.Contains(err.Error(), `feature 0 (id "1"): field "geometry": coordinates look projected`) {
		t.Fatalf("err = %v; want coordinates look projected", err)
	}
}

func TestUnknownExtension(t *testing.T) {
	_, err := File("areas.kml", Options{})
	if err == nil || !strings.Contains(err.Error(), `areas.kml: unknown file type ".kml"`) {
		t.Fatalf("err = %v", err)
	}
}

// TestProjectedFilesComeBackAsLonLat converts the invented fixture with GDAL
// into projected CRSs that geo/proj implements, and checks that File returns
// the original longitudes and latitudes (GDAL/PROJ as the reference).
func TestProjectedFilesComeBackAsLonLat(t *testing.T) {
	ogr := reftool.Need(t, "ogr2ogr")
	orig, err := geojson.Read("testdata/invented.geojson", geojson.Options{IDField: "code"})
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct{ srs, ext, format string }{
		{"EPSG:3857", ".shp", "ESRI Shapefile"},
		{"EPSG:3857", ".gpkg", "GPKG"},
		{"+proj=aea +lat_1=-40 +lat_2=-20 +lat_0=-30 +lon_0=-140 +datum=WGS84 +units=m +no_defs", ".shp", "ESRI Shapefile"},
		{"EPSG:3035", ".gpkg", "GPKG"}, // ETRS89-LAEA: far from Europe, but the formula holds anywhere
		{"EPSG:4269", ".shp", "ESRI Shapefile"},
	}
	for _, c := range cases {
		t.Run(c.srs+c.ext, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "areas"+c.ext)
			cmd := exec.Command(ogr, "-f", c.format, "-t_srs", c.srs, out, "testdata/invented.geojson")
			if b, err := cmd.CombinedOutput(); err != nil {
				t.Fatalf("ogr2ogr: %v\n%s", err, b)
			}
			res, err := File(out, Options{IDField: "code"})
			if err != nil {
				t.Fatal(err)
			}
			if res.CRS.Name == "" {
				t.Errorf("no CRS recognised")
			}
			if len(res.Layer.Features) != len(orig.Features) {
				t.Fatalf("%d features; want %d", len(res.Layer.Features), len(orig.Features))
			}
			for i, f := range res.Layer.Features {
				o := orig.Features[i]
				if f.ID != o.ID {
					t.Errorf("feature %d id %q; want %q", i, f.ID, o.ID)
				}
				for pi := range o.Geometry {
					for ri := range o.Geometry[pi] {
						want := o.Geometry[pi][ri]
						got := f.Geometry[pi][ri]
						if len(got) != len(want) {
							t.Fatalf("feature %d ring %d has %d points; want %d", i, ri, len(got), len(want))
						}
						// The point set must match (readers may reorient
						// rings): every original vertex must be found.
						for _, p := range want {
							best := math.Inf(1)
							for _, q := range got {
								best = math.Min(best, math.Hypot(p[0]-q[0], p[1]-q[1]))
							}
							if best > 1e-7 {
								t.Errorf("feature %d: vertex %v is %.2g° from every read vertex", i, p, best)
							}
						}
					}
				}
			}
		})
	}
}

func TestUnsupportedCRSNamesItAndTheFix(t *testing.T) {
	ogr := reftool.Need(t, "ogr2ogr")
	out := filepath.Join(t.TempDir(), "utm.shp")
	if b, err := exec.Command(ogr, "-f", "ESRI Shapefile", "-t_srs", "EPSG:32707", out, "testdata/invented.geojson").CombinedOutput(); err != nil {
		t.Fatalf("ogr2ogr: %v\n%s", err, b)
	}
	_, err := File(out, Options{IDField: "code"})
	if err == nil || !strings.Contains(err.Error(), "UTM") || !strings.Contains(err.Error(), "ogr2ogr -t_srs EPSG:4326") {
		t.Fatalf("err = %v; want the CRS named and the ogr2ogr fix", err)
	}
}
