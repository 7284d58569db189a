package mapjob

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// Reference files are checked feature by feature; an error names the
// file, the feature and the field (geo.Error).
func TestLoadReferences(t *testing.T) {
	dir := t.TempDir()
	write := func(name, feats string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(`{"type":"FeatureCollection","features":[`+feats+`]}`), 0o644); err != nil {
			t.Fatal(err)
		}
		return name
	}
	pt := func(props string) string {
		return `{"type":"Feature","properties":{` + props + `},"geometry":{"type":"Point","coordinates":[1,2]}}`
	}
	line := `{"type":"Feature","properties":{},"geometry":{"type":"LineString","coordinates":[[0,0],[1,1]]}}`
	cases := []struct {
		name, kind, file, want string
		labels                 int
	}{
		{"labels", "labels", write("ok.geojson", pt(`"n":"B","r":2`)+","+pt(`"n":"A","r":"1"`)+","+pt(`"n":"","r":1`)), "", 2},
		{"bad rank", "labels", write("rank.geojson", pt(`"n":"A","r":0.5`)), `rank.geojson: feature 0 (id "0"): field "r": rank 0.5; want a whole number`, 0},
		{"text rank", "labels", write("text.geojson", pt(`"n":"A","r":"big"`)), `field "r": rank "big" is not a number`, 0},
		{"no name", "labels", write("noname.geojson", pt(`"r":1`)), `field "n": name field is missing`, 0},
		{"no rank", "labels", write("norank.geojson", pt(`"n":"A"`)), `field "r": rank field is missing`, 0},
		{"line as labels", "labels", write("line.geojson", line), `field "geometry": is a line or polygon; a labels reference wants Point`, 0},
		{"point as line", "lines", write("pt.geojson", pt(`"n":"A"`)), `pt.geojson: feature 0 (id "0"): field "geometry": is a point or polygon`, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := mapfile.Reference{File: c.file, Kind: c.kind}
			if c.kind == "labels" {
				r.Name, r.Rank = "n", "r"
			}
			m := &mapfile.Map{Path: filepath.Join(dir, "m.toml"), References: []mapfile.Reference{r}}
			refs, err := LoadReferences(m)
			if c.want != "" {
				if err == nil || !strings.Contains(err.Error(), c.want) {
					t.Errorf("error %v; want %q", err, c.want)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			ls := refs[0].Labels
			tiles.SortLabels(ls)
			if len(ls) != c.labels || ls[0].Name != "A" || ls[0].Rank != 1 || ls[1].Rank != 2 {
				t.Errorf("labels %+v; want A rank 1, B rank 2 (the empty name skipped)", ls)
			}
		})
	}
}
