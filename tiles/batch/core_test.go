package batch

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// Ponds of the mask, in lon/lat: first inside area 007, then moved into
// the larger part of area 009 (testdata/small/areas.geojson).
var (
	firstPond = orb.Bound{Min: orb.Point{-140.01, -30.02}, Max: orb.Point{-140.0, -30.0}}
	movedPond = orb.Bound{Min: orb.Point{-139.996, -30.038}, Max: orb.Point{-139.984, -30.027}}
	area008   = orb.Bound{Min: orb.Point{-140.0, -30.02}, Max: orb.Point{-139.98, -30.0}}
)

// smallMap copies testdata/small into dir: its areas, with people given to
// feature "010" (null geometry: 40 north, 15 south, so 11 dots at 5 people
// per dot that no placement can draw), its map file with the pond as a mask,
// and a batch file with one extent of all four areas and a print page.
func smallMap(t *testing.T, dir string) (mapPath string, f *File) {
	t.Helper()
	src, err := os.ReadFile("../../testdata/small/areas.geojson")
	if err != nil {
		t.Fatal(err)
	}
	areas := strings.Replace(string(src), `"code": "010", "north": 0, "south": 0`, `"code": "010", "north": 40, "south": 15`, 1)
	if areas == string(src) {
		t.Fatal("testdata/small/areas.geojson: feature 010 not as expected")
	}
	writeFile(t, filepath.Join(dir, "areas.geojson"), areas)
	writePond(t, dir, firstPond)
	text, err := os.ReadFile("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	m := strings.Replace(string(text), `id = "code"`, "id = \"code\"\nmask = [\"water.geojson\"]", 1)
	mapPath = filepath.Join(dir, "map.toml")
	writeFile(t, mapPath, m)
	batchPath := filepath.Join(dir, "batch.toml")
	writeFile(t, batchPath, `map = "map.toml"
out = "batch"

[print]
page = "A5"
dpi = 72
format = ["png"]

[[extent]]
slug = "whole"
title = "Test map <b>bold</b> & co"
ids = ["007", "008", "009", "010"]
print = true
`)
	f, err = Read(batchPath)
	if err != nil {
		t.Fatal(err)
	}
	return mapPath, f
}

func writeFile(t *testing.T, path, text string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}

// writePond writes the mask file water.geojson: one rectangle b.
func writePond(t *testing.T, dir string, b orb.Bound) {
	t.Helper()
	writeFile(t, filepath.Join(dir, "water.geojson"), fmt.Sprintf(`{"type": "FeatureCollection", "features": [
{"type": "Feature", "properties": {"name": "invented pond"}, "geometry": {"type": "Polygon", "coordinates": [[[%v, %v], [%v, %v], [%v, %v], [%v, %v], [%v, %v]]]}}
]}
`, b.Min[0], b.Min[1], b.Max[0], b.Min[1], b.Max[0], b.Max[1], b.Min[0], b.Max[1], b.Min[0], b.Min[1]))
}

// storeDots reads a dot store's dots as cell centres in lon/lat.
func storeDots(t *testing.T, path string) []orb.Point {
	t.Helper()
	s, err := dotstore.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	var out []orb.Point
	for _, k := range s.Keys() {
		x, y, _ := dotstore.Split(k)
		lon, lat := dotstore.CellLonLat(x, y)
		out = append(out, orb.Point{lon, lat})
	}
	return out
}

// inside counts the points in b shrunk by 1e-6° (about 0.1 m) on every
// side: a dot's cell centre is within 4 cm of where it was placed
// (mapjob's printDots), so a dot kept out of b is never counted.
func inside(pts []orb.Point, b orb.Bound) (n int) {
	const e = 1e-6
	for _, p := range pts {
		if p[0] > b.Min[0]+e && p[0] < b.Max[0]-e && p[1] > b.Min[1]+e && p[1] < b.Max[1]-e {
			n++
		}
	}
	return n
}

// TestMaskEditedInPlaceRedrawsTheExtent moves the mask's pond within the
// same file (same name, same folder): the rerun must place the dots again
// (the sampling fingerprint hashes the mask's contents, not its name), and
// the extent's tiles change where the pond was and where it went, while
// the dots of the area neither pond touches stay where they were (an area's
// dots depend on its own seeded streams alone).
func TestMaskEditedInPlaceRedrawsTheExtent(t *testing.T) {
	dir := t.TempDir()
	_, f := smallMap(t, dir)
	store := filepath.Join(storeDir(f.Out, 5), "dots.bin")
	first, err := Run(context.Background(), f, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if first.Placed != 1 || first.Results[0].Status != Done {
		t.Fatalf("first run: %d placed, status %s (%s)", first.Placed, first.Results[0].Status, first.Results[0].Error)
	}
	before := storeDots(t, store)
	beforeTiles := tileFiles(t, filepath.Join(f.Out, "whole"))

	writePond(t, dir, movedPond)
	again, err := Run(context.Background(), f, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if again.Placed != 1 || again.Reused != 0 {
		t.Fatalf("after the mask edit: %d placed, %d reused; want the dots placed again", again.Placed, again.Reused)
	}
	if s := again.Results[0].Status; s != Done {
		t.Fatalf("after the mask edit the extent is %s; want done (redrawn)", s)
	}
	after := storeDots(t, store)
	afterTiles := tileFiles(t, filepath.Join(f.Out, "whole"))

	cases := []struct {
		name          string
		bound         orb.Bound
		before, after func(n int) bool
	}{
		{"first pond: empty, then filled", firstPond, func(n int) bool { return n == 0 }, func(n int) bool { return n > 0 }},
		{"moved pond: filled, then empty", movedPond, func(n int) bool { return n > 0 }, func(n int) bool { return n == 0 }},
	}
	for _, c := range cases {
		nb, na := inside(before, c.bound), inside(after, c.bound)
		if !c.before(nb) || !c.after(na) {
			t.Errorf("%s: %d dots before the edit, %d after", c.name, nb, na)
		}
		z := 14
		changed := 0
		for _, tl := range Cover(c.bound, z) {
			k := fmt.Sprintf("%d/%d/%d.png", z, tl[0], tl[1])
			if !bytes.Equal(beforeTiles[k], afterTiles[k]) {
				changed++
			}
		}
		if changed == 0 {
			t.Errorf("%s: no zoom-%d tile under it changed", c.name, z)
		}
	}
	var keep8 = func(pts []orb.Point) []orb.Point {
		var out []orb.Point
		for _, p := range pts {
			if area008.Contains(p) {
				out = append(out, p)
			}
		}
		return out
	}
	if b, a := keep8(before), keep8(after); len(b) < 100 || !reflect.DeepEqual(b, a) {
		t.Errorf("area 008 (no pond): %d dots before, %d after, or moved", len(b), len(a))
	}
	// Editing nothing keeps everything.
	kept, err := Run(context.Background(), f, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if kept.Results[0].Status != Skipped || kept.Placed+kept.Reused != 0 {
		t.Errorf("unchanged rerun: %s, %d placed, %d reused", kept.Results[0].Status, kept.Placed, kept.Reused)
	}
}

// TestWholeMapExtentIsTheRender: a batch extent of every area is the map
// "stipple render" makes of the same map file: the same dot store, tiles,
// totals, legends, alt text and map.json, and its print page is the page
// mapjob.Print lays out for the same areas. (Cross-command equivalence,
// as STYLE.md asks of every command: one copy of each step.)
func TestWholeMapExtentIsTheRender(t *testing.T) {
	dir := t.TempDir()
	mapPath, f := smallMap(t, dir)
	rep, err := Run(context.Background(), f, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if r := rep.Results[0]; r.Status != Done {
		t.Fatalf("extent: %s (%s)", r.Status, r.Error)
	}
	m, err := mapfile.Read(mapPath)
	if err != nil {
		t.Fatal(err)
	}
	m.Out = filepath.Join(dir, "render")
	if _, err := mapjob.Run(context.Background(), m, mapjob.Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	ext := filepath.Join(f.Out, "whole")

	t.Run("dots", func(t *testing.T) {
		a, b := storeDots(t, filepath.Join(storeDir(f.Out, 5), "dots.bin")), storeDots(t, filepath.Join(m.Out, tiles.StateDir, "dots.bin"))
		if len(a) < 1000 || !slices.Equal(a, b) {
			t.Errorf("batch store: %d dots; render store: %d, or different", len(a), len(b))
		}
	})
	t.Run("tiles", func(t *testing.T) {
		a, b := tileFiles(t, ext), tileFiles(t, m.Out)
		if len(a) < 4 || len(a) != len(b) {
			t.Fatalf("batch: %d tiles; render: %d", len(a), len(b))
		}
		for k, v := range b {
			if !bytes.Equal(a[k], v) {
				t.Errorf("tile %s differs", k)
			}
		}
	})
	t.Run("furniture", func(t *testing.T) {
		for _, name := range []string{"legend.png", "legend@2x.png", "legend.svg", "alt.txt"} {
			a, errA := os.ReadFile(filepath.Join(ext, name))
			b, errB := os.ReadFile(filepath.Join(m.Out, name))
			if errA != nil || errB != nil || len(a) == 0 || !bytes.Equal(a, b) {
				t.Errorf("%s differs (batch %d bytes %v, render %d bytes %v)", name, len(a), errA, len(b), errB)
			}
		}
	})
	t.Run("map.json", func(t *testing.T) {
		a, b := readJSON(t, filepath.Join(ext, "map.json")), readJSON(t, filepath.Join(m.Out, "map.json"))
		if !reflect.DeepEqual(a, b) {
			for k := range b {
				if !reflect.DeepEqual(a[k], b[k]) {
					t.Errorf("map.json %q: batch %v; render %v", k, a[k], b[k])
				}
			}
		}
	})
	t.Run("totals", func(t *testing.T) {
		md, err := tiles.ReadMetadata(ext)
		if err != nil {
			t.Fatal(err)
		}
		// The areas' counts, summed by hand from areas.geojson: north
		// 1200 + 15 + 800 + 40, south 340 + 2210.5 + 800 + 15. Feature
		// 010 has no geometry: its 40 + 15 people are not drawn.
		want := map[string]float64{"n": 2055, "s": 3365.5}
		r := rep.Results[0]
		for _, c := range md.Categories {
			if c.People != want[c.Key] || r.People[c.Key] != want[c.Key] || r.Dots[c.Key] != c.DotsDrawn {
				t.Errorf("%s: map.json %v people, %d dots; summary %v people, %d dots; want %v people", c.Key, c.People, c.DotsDrawn, r.People[c.Key], r.Dots[c.Key], want[c.Key])
			}
		}
		if md.NotDrawn.People != 55 || r.NotDrawn != 55 || len(md.NotDrawn.Features) != 1 || !strings.Contains(md.NotDrawn.Features[0], `"010"`) {
			t.Errorf("not drawn: map.json %v people %q, summary %v; want 55 people of feature 010", md.NotDrawn.People, md.NotDrawn.Features, r.NotDrawn)
		}
	})
	t.Run("print page", func(t *testing.T) {
		got, err := os.ReadFile(filepath.Join(ext, "print.png"))
		if err != nil {
			t.Fatal(err)
		}
		in, pl := placeWhole(t, m)
		margin, _ := page.ParseLength("12mm")
		pg, err := mapjob.Print(context.Background(), in, m, pl, mapjob.PrintOptions{
			Size: page.A5, DPI: 72, Margin: margin, Projection: "auto", DotMM: 0.35,
			Areas: []int{0, 1, 2, 3}, Rule: "the 4 areas listed by id",
		})
		if err != nil {
			t.Fatal(err)
		}
		if pg.NotDrawn != 55 || pg.Areas != 4 {
			t.Errorf("mapjob.Print: %d areas, %v not drawn; want 4 and 55", pg.Areas, pg.NotDrawn)
		}
		var want bytes.Buffer
		if err := pg.Page.WritePNG(&want); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got, want.Bytes()) {
			t.Errorf("print.png (%d bytes) is not mapjob.Print's page (%d bytes)", len(got), want.Len())
		}
	})
}

func readJSON(t *testing.T, path string) map[string]any {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var v map[string]any
	if err := json.Unmarshal(data, &v); err != nil {
		t.Fatal(err)
	}
	return v
}

// placeWhole loads and places the whole map m as "stipple render" does
// (no state folder); the store is closed when the test ends.
func placeWhole(t *testing.T, m *mapfile.Map) (*mapjob.Input, *mapjob.Placed) {
	t.Helper()
	in, err := mapjob.Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	pl, err := mapjob.Place(context.Background(), in, m, mapjob.PlaceOptions{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { pl.Store.Close() })
	return in, pl
}

// TestNearSamplingIsKeptWhenOneExtentChanges: with sample = "near" the
// placed areas are those near every extent of the dot value, not only the
// extents a run redraws, so retitling one extent reuses the dots and the
// tile cache.
func TestNearSamplingIsKeptWhenOneExtentChanges(t *testing.T) {
	dir := t.TempDir()
	smallMap(t, dir)
	body := `map = "map.toml"
out = "batch"
sample = "near"

[[extent]]
slug = "west"
title = "West"
ids = ["007"]

[[extent]]
slug = "south"
title = "South"
ids = ["009"]
`
	run := func(body string) *Report {
		t.Helper()
		path := filepath.Join(dir, "near.toml")
		writeFile(t, path, body)
		f, err := Read(path)
		if err != nil {
			t.Fatal(err)
		}
		rep, err := Run(context.Background(), f, Options{Workers: 2})
		if err != nil {
			t.Fatal(err)
		}
		return rep
	}
	first := run(body)
	if first.Placed != 1 || len(first.Failed()) != 0 || first.TilesDrawn == 0 {
		t.Fatalf("first run: %d placed, %d tiles drawn, failed %+v", first.Placed, first.TilesDrawn, first.Failed())
	}
	rep := run(strings.Replace(body, `title = "South"`, `title = "South (revised)"`, 1))
	if rep.Results[0].Status != Skipped || rep.Results[1].Status != Done || rep.Reused != 1 || rep.Placed != 0 || rep.TilesDrawn != 0 {
		t.Errorf("after retitling south: %s, %s; %d reused, %d placed, %d tiles drawn; want west kept, south redone from the kept dots and tiles",
			rep.Results[0].Status, rep.Results[1].Status, rep.Reused, rep.Placed, rep.TilesDrawn)
	}
}
