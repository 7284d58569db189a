package geojson

import (
	"strings"
	"testing"

	"github.com/paulmach/orb"
)

// The geometry forms are RFC 7946, sections 3.1.2 (Point), 3.1.3
// (MultiPoint), 3.1.4 (LineString: "two or more positions") and 3.1.5
// (MultiLineString).
func TestPointsAndLines(t *testing.T) {
	doc := `{"type":"FeatureCollection","features":[
 {"type":"Feature","properties":{"name":"A"},"geometry":{"type":"Point","coordinates":[1.5,2.5]}},
 {"type":"Feature","properties":{},"geometry":{"type":"MultiPoint","coordinates":[[1,2],[3,4]]}},
 {"type":"Feature","properties":{},"geometry":{"type":"LineString","coordinates":[[0,0],[1,1],[2,0]]}},
 {"type":"Feature","properties":{},"geometry":{"type":"MultiLineString","coordinates":[[[0,0],[1,1]],[[5,5],[6,6]]]}}]}`
	l, err := Decode("ref.geojson", []byte(doc), Options{PointsAndLines: true})
	if err != nil {
		t.Fatal(err)
	}
	if got := l.Features[0].Points; len(got) != 1 || got[0] != (orb.Point{1.5, 2.5}) {
		t.Errorf("Point = %v; want [[1.5 2.5]]", got)
	}
	if got := l.Features[1].Points; len(got) != 2 || got[1] != (orb.Point{3, 4}) {
		t.Errorf("MultiPoint = %v", got)
	}
	if got := l.Features[2].Lines; len(got) != 1 || len(got[0]) != 3 || got[0][2] != (orb.Point{2, 0}) {
		t.Errorf("LineString = %v", got)
	}
	if got := l.Features[3].Lines; len(got) != 2 || got[1][0] != (orb.Point{5, 5}) {
		t.Errorf("MultiLineString = %v", got)
	}
	if len(l.Features[0].Geometry) != 0 {
		t.Errorf("a point feature has polygons %v", l.Features[0].Geometry)
	}
}

func TestPointsAndLinesErrors(t *testing.T) {
	for _, c := range []struct {
		name, geom string
		opt        Options
		want       string
	}{
		{"points off", `{"type":"Point","coordinates":[1,2]}`, Options{}, `feature 0 (id "0"): field "geometry": geometry type Point is not Polygon or MultiPolygon`},
		{"short line", `{"type":"LineString","coordinates":[[1,2]]}`, Options{PointsAndLines: true}, "LineString has 1 positions; want at least 2"},
		{"short part", `{"type":"MultiLineString","coordinates":[[[1,2],[3,4]],[[1,2]]]}`, Options{PointsAndLines: true}, "line 1 has 1 positions"},
		{"one value", `{"type":"Point","coordinates":[1]}`, Options{PointsAndLines: true}, "position has 1 values; want at least 2"},
		{"bad member", `{"type":"MultiPoint","coordinates":[[1,2],[3]]}`, Options{PointsAndLines: true}, "position 1 has 1 values"},
	} {
		t.Run(c.name, func(t *testing.T) {
			doc := `{"type":"FeatureCollection","features":[{"type":"Feature","properties":{},"geometry":` + c.geom + `}]}`
			_, err := Decode("ref.geojson", []byte(doc), c.opt)
			if err == nil || !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "ref.geojson: feature 0") {
				t.Errorf("error %v; want one naming ref.geojson, feature 0 and %q", err, c.want)
			}
		})
	}
}
