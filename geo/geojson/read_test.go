package geojson

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/paulmach/orb"
)

func TestReadRFC7946Examples(t *testing.T) {
	// RFC 7946 Appendix A.3 (polygon with a hole) and A.6 (MultiPolygon).
	data := `{"type": "FeatureCollection", "features": [
	 {"type": "Feature", "id": "a3", "properties": {"n": 12, "s": "7", "f": 2.5, "b": true, "z": null},
	  "geometry": {"type": "Polygon", "coordinates": [
	   [[100.0, 0.0], [101.0, 0.0], [101.0, 1.0], [100.0, 1.0], [100.0, 0.0]],
	   [[100.8, 0.8], [100.8, 0.2], [100.2, 0.2], [100.2, 0.8], [100.8, 0.8]]]}},
	 {"type": "Feature", "id": 6, "properties": {"n": 1},
	  "geometry": {"type": "MultiPolygon", "coordinates": [
	   [[[102.0, 2.0], [103.0, 2.0], [103.0, 3.0], [102.0, 3.0], [102.0, 2.0]]],
	   [[[100.0, 0.0], [101.0, 0.0], [101.0, 1.0], [100.0, 1.0], [100.0, 0.0]],
	    [[100.2, 0.2], [100.2, 0.8], [100.8, 0.8], [100.8, 0.2], [100.2, 0.2]]]]}}
	]}`
	l, err := Decode("rfc.geojson", []byte(data), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(l.Features) != 2 {
		t.Fatalf("%d features", len(l.Features))
	}
	a3 := l.Features[0]
	if a3.ID != "a3" || len(a3.Geometry) != 1 || len(a3.Geometry[0]) != 2 || a3.Geometry[0][1][1] != (orb.Point{100.8, 0.2}) {
		t.Errorf("A.3 read as %+v", a3)
	}
	if a3.Props["n"] != int64(12) || a3.Props["s"] != "7" || a3.Props["f"] != 2.5 || a3.Props["b"] != true || a3.Props["z"] != nil {
		t.Errorf("A.3 properties %#v", a3.Props)
	}
	a6 := l.Features[1]
	if a6.ID != "6" || len(a6.Geometry) != 2 || len(a6.Geometry[1]) != 2 {
		t.Errorf("A.6 read as %+v", a6)
	}
	if strings.Join(l.Fields, ",") != "b,f,n,s,z" {
		t.Errorf("fields %v", l.Fields)
	}
}

func TestWriteThenRead(t *testing.T) {
	l, err := Decode("x", []byte(`{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"k":"001","v":3},"geometry":{"type":"Polygon","coordinates":[[[0,0],[1,0],[1,1],[0,0]]]}}]}`), Options{IDField: "k"})
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "out.geojson")
	if err := Write(p, l); err != nil {
		t.Fatal(err)
	}
	back, err := Read(p, Options{IDField: "k"})
	if err != nil {
		t.Fatal(err)
	}
	if back.Features[0].ID != "001" || back.Features[0].Props["v"] != int64(3) || !back.Features[0].Geometry.Equal(l.Features[0].Geometry) {
		t.Errorf("round trip gave %+v", back.Features[0])
	}
}

func TestSizeCap(t *testing.T) {
	p := filepath.Join(t.TempDir(), "big.geojson")
	os.WriteFile(p, make([]byte, 2048), 0o644)
	_, err := Read(p, Options{MaxBytes: 1024})
	if err == nil || !strings.Contains(err.Error(), "over the 1024 byte limit") {
		t.Errorf("err = %v", err)
	}
}

// FuzzDecode: no input may panic or hang the reader, and what it accepts
// has only finite coordinates.
func FuzzDecode(f *testing.F) {
	seeds, _ := filepath.Glob("../../testdata/bad/geojson/*.geojson")
	seeds = append(seeds, "../../testdata/small/areas.geojson")
	for _, s := range seeds {
		b, err := os.ReadFile(s)
		if err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte(`{"type":"FeatureCollection","features":[{"type":"Feature","properties":null,"geometry":{"type":"MultiPolygon","coordinates":[[[[1,2,3],[4,5],[6,7]]]]}}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		l, err := Decode("fuzz.geojson", data, Options{})
		if err != nil {
			if strings.Contains(err.Error(), "\n") {
				t.Errorf("error spans lines: %q", err)
			}
			return
		}
		for _, ft := range l.Features {
			for _, p := range ft.Geometry {
				for _, r := range p {
					for _, pt := range r {
						if math.IsNaN(pt[0]) || math.IsInf(pt[1], 0) {
							t.Fatalf("accepted a non-finite point %v", pt)
						}
					}
				}
			}
		}
	})
}
