package sample

import (
	"os"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/reftool"
)

// TestRealCountyBoundaries prepares every county of the shared data set
// (real boundaries, incl. parts cut at the antimeridian): each is simple and
// triangulates, or reports why not; dots from every county are inside it by
// the go-geom reference; the areas of the parts sum to their shoelace areas.
func TestRealCountyBoundaries(t *testing.T) {
	// The shared real-geometry data set (synthetic counts), in
	// ../shared/data beside the repository in development and in CI.
	data, err := os.ReadFile(reftool.SharedData(t, "us-counties.geojson"))
	if err != nil {
		t.Fatal(err)
	}
	fc, err := geojson.UnmarshalFeatureCollection(data)
	if err != nil {
		t.Fatal(err)
	}
	counts := map[method]int{}
	notSimple, failed := 0, 0
	for i, gf := range fc.Features {
		var mp orb.MultiPolygon
		switch g := gf.Geometry.(type) {
		case orb.Polygon:
			mp = orb.MultiPolygon{g}
		case orb.MultiPolygon:
			mp = g
		default:
			continue
		}
		id, _ := gf.Properties["geoid"].(string)
		s := NewShape(mp)
		for k, pt := range s.parts {
			counts[pt.method]++
			if pt.check != ringsSimple {
				notSimple++
				t.Logf("county %s part %d: rings %v (method %v)", id, k, pt.check, pt.method)
			} else if pt.method == byGrid {
				failed++
				t.Errorf("county %s part %d: simple but triangulation failed", id, k)
			}
		}
		// Forced to triangles, every simple part must triangulate.
		for k, pt := range newShape(mp, byTriangles).parts {
			if pt.check == ringsSimple && pt.method != byTriangles {
				failed++
				t.Errorf("county %s part %d (%d rings, %d vertices): triangulation failed", id, k, len(pt.rings), len(pt.rings[0])/2)
			}
		}
		if s.Area() <= 0 {
			t.Errorf("county %s: no area", id)
			continue
		}
		// 20 dots per county, checked by the reference test.
		f := &geo.Feature{Index: i, ID: id, Geometry: mp}
		FeatureN(f, []int{20}, Options{Seed: 99}, func(_ int, p orb.Point) {
			if refInsideMulti(mp, p) < 0 {
				t.Fatalf("county %s: dot %v outside", id, p)
			}
		})
	}
	t.Logf("%d counties: parts by method %v; %d parts not simple, %d triangulation failures", len(fc.Features), counts, notSimple, failed)
	if counts[byTriangles] == 0 || counts[byBox] == 0 {
		t.Errorf("expected both box and triangle parts among real counties: %v", counts)
	}
}
