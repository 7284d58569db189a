package shapefile

import (
	"math"
	"os"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/reftool"
)

// The shared benchmark data (../shared/data beside the repository root,
// described in its README.md): us-counties-shp was written by ogr2ogr from
// us-counties.geojson; the synthetic count fields are only in the GeoJSON.
func countiesPath(tb testing.TB) string {
	return reftool.SharedData(tb, "us-counties-shp/us-counties.shp")
}

func TestUSCounties(t *testing.T) {
	path := countiesPath(t)
	l, warns, err := ReadAll(path, Options{IDField: "geoid"})
	if err != nil {
		t.Fatal(err)
	}
	if len(warns) != 0 {
		t.Errorf("%d warnings, first %v", len(warns), warns[0])
	}
	// README.md: 3230 features; fields geoid, name, aland_km2; .prj GCS_WGS_1984.
	if len(l.Features) != 3230 {
		t.Fatalf("%d features, README says 3230", len(l.Features))
	}
	if strings.Join(l.Fields, ",") != "geoid,name,aland_km2" {
		t.Errorf("fields %v", l.Fields)
	}
	if !strings.Contains(l.CRS, `GEOGCS["GCS_WGS_1984"`) {
		t.Errorf("CRS %q", l.CRS)
	}
	// README.md: "13 Virginia counties have 15 holes (independent cities)".
	vaCounties, vaHoles, zeros := 0, 0, 0
	var donaAna string
	minX, minY, maxX, maxY := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for _, f := range l.Features {
		if len(f.ID) != 5 || f.ID != f.Props["geoid"] {
			t.Errorf("feature %d: id %q, geoid %v", f.Index, f.ID, f.Props["geoid"])
		}
		if f.ID[0] == '0' {
			zeros++
		}
		if f.ID == "35013" {
			donaAna, _ = f.Props["name"].(string)
		}
		holes := 0
		for _, p := range f.Geometry {
			holes += len(p) - 1
			for _, r := range p {
				for _, q := range r {
					minX, minY = math.Min(minX, q[0]), math.Min(minY, q[1])
					maxX, maxY = math.Max(maxX, q[0]), math.Max(maxY, q[1])
				}
			}
		}
		if strings.HasPrefix(f.ID, "51") && holes > 0 {
			vaCounties++
			vaHoles += holes
		}
	}
	if vaCounties != 13 || vaHoles != 15 {
		t.Errorf("Virginia: %d counties with %d holes, README says 13 with 15", vaCounties, vaHoles)
	}
	if donaAna != "Doña Ana" {
		t.Errorf("35013 name %q, want Doña Ana (UTF-8)", donaAna)
	}
	// Leading zeros kept: 01xxx..09xxx (Alabama .. Connecticut: from memory
	// of the FIPS state codes; counted independently from the GeoJSON below).
	if zeros == 0 || l.Features[0].ID != "01001" {
		t.Errorf("%d ids with a leading zero, first id %q", zeros, l.Features[0].ID)
	}
	// README.md: layer extent (-179.136572, -14.373865) - (179.774881, 71.352561).
	for _, c := range []struct{ got, want float64 }{{minX, -179.136572}, {minY, -14.373865}, {maxX, 179.774881}, {maxY, 71.352561}} {
		if math.Abs(c.got-c.want) > 5e-7 {
			t.Errorf("extent %v, README %v", c.got, c.want)
		}
	}

	// Every ring and value against the GeoJSON the shapefile was made from.
	gj := reftool.SharedData(t, "us-counties.geojson")
	want := readGeoJSON(t, gj)
	wantZeros := 0
	for _, f := range want.Features {
		for _, k := range []string{"grp_a", "grp_b", "grp_c", "grp_d", "grp_e"} {
			delete(f.Properties, k) // not in the shapefile (README.md)
		}
		if id, _ := f.Properties["geoid"].(string); strings.HasPrefix(id, "0") {
			wantZeros++
		}
	}
	if zeros != wantZeros {
		t.Errorf("%d ids with a leading zero, GeoJSON has %d", zeros, wantZeros)
	}
	compareLayer(t, l, want, nil)
}

func BenchmarkReadUSCounties(b *testing.B) {
	path := countiesPath(b)
	st, err := os.Stat(path)
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(st.Size())
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Read(path, Options{IDField: "geoid"}); err != nil {
			b.Fatal(err)
		}
	}
}
