package batch

import (
	"context"
	"image/png"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// TestExtentAcrossTheAntimeridian: a box written west > east crosses 180°
// (RFC 7946 §5.2). Two invented islands, one either side of the
// antimeridian, are both picked; the extent's tiles are those of both
// sides (x = 0 and x = 2^z − 1 at every zoom), its map.json bounds keep
// west > east, and the thumbnail shows both islands.
func TestExtentAcrossTheAntimeridian(t *testing.T) {
	dir := t.TempDir()
	areas := `{"type":"FeatureCollection","features":[
{"type":"Feature","properties":{"id":"west-isle","p":400},"geometry":{"type":"Polygon","coordinates":[[[179.4,-17.2],[179.9,-17.2],[179.9,-16.8],[179.4,-16.8],[179.4,-17.2]]]}},
{"type":"Feature","properties":{"id":"east-isle","p":400},"geometry":{"type":"Polygon","coordinates":[[[-179.9,-17.2],[-179.4,-17.2],[-179.4,-16.8],[-179.9,-16.8],[-179.9,-17.2]]]}},
{"type":"Feature","properties":{"id":"far-isle","p":400},"geometry":{"type":"Polygon","coordinates":[[[10,-17.2],[10.5,-17.2],[10.5,-16.8],[10,-16.8],[10,-17.2]]]}}]}`
	os.WriteFile(filepath.Join(dir, "isles.geojson"), []byte(areas), 0o644)
	os.WriteFile(filepath.Join(dir, "map.toml"), []byte(`title = "Invented isles"
people_per_dot = 1
[input]
file = "isles.geojson"
id = "id"
[tiles]
min_zoom = 3
max_zoom = 6
[[category]]
key = "p"
label = "People"
color = "#0072B2"
fields = ["p"]
`), 0o644)
	os.WriteFile(filepath.Join(dir, "batch.toml"), []byte(`map = "map.toml"
out = "out"
margin = 0.05
[[extent]]
slug = "isles"
title = "Isles either side of 180°"
bbox = [179, -18, -179, -16]
`), 0o644)
	f, err := Read(filepath.Join(dir, "batch.toml"))
	if err != nil {
		t.Fatal(err)
	}
	rep, err := Run(context.Background(), f, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	r := rep.Results[0]
	if r.Status != Done || r.Features != 2 || r.People["p"] != 800 {
		t.Fatalf("extent %+v; want the two isles by the antimeridian, 800 people", r)
	}
	if b := r.Bounds; !(b[0] == 179 && b[2] == -179) {
		t.Errorf("bounds %v; want west 179 > east −179", b)
	}
	ext := filepath.Join(f.Out, "isles")
	for z := 3; z <= 6; z++ {
		n := 1 << z
		for _, x := range []int{0, n - 1} {
			matches, _ := filepath.Glob(filepath.Join(ext, strconv.Itoa(z), strconv.Itoa(x), "*.png"))
			if len(matches) == 0 {
				t.Errorf("zoom %d: no tile in column %d", z, x)
			}
		}
	}
	fh, err := os.Open(filepath.Join(ext, ThumbFile))
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(fh)
	fh.Close()
	if err != nil {
		t.Fatal(err)
	}
	// Ink (blue dots: more blue than red) in the left and the right half.
	halves := [2]int{}
	bb := img.Bounds()
	for y := bb.Min.Y; y < bb.Max.Y; y++ {
		for x := bb.Min.X; x < bb.Max.X; x++ {
			r, _, b, _ := img.At(x, y).RGBA()
			if b > r+0x2000 {
				halves[(x-bb.Min.X)*2/bb.Dx()]++
			}
		}
	}
	if halves[0] == 0 || halves[1] == 0 {
		t.Errorf("thumbnail ink left %d, right %d; want both isles", halves[0], halves[1])
	}
}
