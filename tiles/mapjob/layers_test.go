package mapjob

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"image"
	"image/draw"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/geojson"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// gridAreas is an invented n×n grid of square areas of side d degrees in
// the open South Pacific (nobody lives there), ids "g<col>-<row>".
func gridAreas(n int, d float64) *geo.Layer {
	l := &geo.Layer{Path: "grid (test)"}
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			w, s := -140+float64(i)*d, -40+float64(j)*d
			l.Features = append(l.Features, geo.Feature{
				Index: len(l.Features), ID: fmt.Sprintf("g%d-%d", i, j),
				Geometry: orb.MultiPolygon{{{{w, s}, {w + d, s}, {w + d, s + d}, {w, s + d}, {w, s}}}},
				Props:    map[string]any{},
			})
		}
	}
	return l
}

var testCats = []struct{ key, color string }{{"p", "#0072B2"}, {"q", "#E69F00"}, {"r", "#009E73"}}

// twoYearMap is a map of the grid with two layers, "before" (fields p0,
// q0, r0) and "after" (p1, q1, r1, its categories listed in reverse
// order), with a mask over part of the grid, random rounding at 3 people
// per dot (so rounding is exercised), zooms 9–13.
func twoYearMap(t *testing.T, dir string) *mapfile.Map {
	t.Helper()
	m := mapfile.Defaults
	m.Path = filepath.Join(dir, "m.toml")
	m.Out = filepath.Join(dir, "out")
	m.Title = "Two invented years"
	m.Input.File = "grid"
	m.PeoplePerDot = 3
	m.Rounding = "random"
	m.Seed = 7
	m.Tiles.MinZoom, m.Tiles.MaxZoom = 9, 13
	mask := &geo.Layer{Features: []geo.Feature{{ID: "lake", Geometry: orb.MultiPolygon{{{{-139.97, -39.97}, {-139.95, -39.97}, {-139.95, -39.95}, {-139.97, -39.95}, {-139.97, -39.97}}}}}}}
	if err := geojson.Write(filepath.Join(dir, "mask.geojson"), mask); err != nil {
		t.Fatal(err)
	}
	m.Input.Mask = []string{"mask.geojson"}
	var before, after []mapfile.Category
	for _, c := range testCats {
		before = append(before, mapfile.Category{Key: c.key, Label: c.key, Color: c.color, Fields: []string{c.key + "0"}})
		after = append(after, mapfile.Category{Key: c.key, Label: c.key, Color: c.color, Fields: []string{c.key + "1"}})
	}
	slices.Reverse(after)
	m.Categories = before
	m.Layers = []mapfile.Layer{{Key: "before", Label: "Year A", Categories: before}, {Key: "after", Label: "Year B", Categories: after}}
	return &m
}

// TestLayersStableDots renders year A and year B of the invented grid:
// counts are the same except category "p" of one area, 10% higher in
// year B. With the same seed and areas, dot i of a category in an area is
// the same point in both years (sample: seeded by seed, area id, category
// key and i), and random rounding never gives a larger count fewer dots,
// so: year B's dots are year A's plus new ones in the changed area; every
// tile away from that area is the same picture; and the folder gets the
// compare viewer over both layers. No outside source: the property is the
// design (README, "Comparing two counts").
func TestLayersStableDots(t *testing.T) {
	dir := t.TempDir()
	m := twoYearMap(t, dir)
	areas := gridAreas(8, 0.02)
	changed := "g1-1" // under the mask's corner too
	for i := range areas.Features {
		f := &areas.Features[i]
		for k, c := range testCats {
			v := float64(200 + 37*((i*7+k*13)%23)) // 200–1014 people
			f.Props[c.key+"0"] = v
			if f.ID == changed && c.key == "p" {
				v *= 1.1
			}
			f.Props[c.key+"1"] = v
		}
	}
	sum, err := RunLayers(context.Background(), m, Options{Layer: areas, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	out := m.Out

	// The compare viewer: both layers' folders, one viewer listing both.
	for _, f := range []string{"index.html", "embed.html", "map-data.js", "viewer.js", "before/map.json", "after/map.json", "before/index.html", "after/legend.png"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("missing %s: %v", f, err)
		}
	}
	js, err := os.ReadFile(filepath.Join(out, "map-data.js"))
	if err != nil {
		t.Fatal(err)
	}
	var data struct {
		Layers []struct{ Key string } `json:"layers"`
	}
	if err := json.Unmarshal(bytes.TrimSuffix(bytes.TrimPrefix(bytes.TrimSpace(js), []byte("window.stippleMap = ")), []byte(";")), &data); err != nil {
		t.Fatalf("map-data.js: %v", err)
	}
	if len(data.Layers) != 2 || data.Layers[0].Key != "before" || data.Layers[1].Key != "after" {
		t.Errorf("map-data.js lists layers %+v; want before, after", data.Layers)
	}
	page, _ := os.ReadFile(filepath.Join(out, "index.html"))
	for _, s := range []string{"Year A", "Year B"} {
		if !bytes.Contains(page, []byte(s)) {
			t.Errorf("index.html does not name layer %q", s)
		}
	}

	// Dot stores, compared as (cell, category key) so category order
	// does not matter.
	type dot struct {
		x, y uint32
		key  string
	}
	dots := func(layer int) []dot {
		lr := sum.Layers[layer]
		s, err := dotstore.Open(filepath.Join(lr.Dir, tiles.StateDir, "dots.bin"))
		if err != nil {
			t.Fatal(err)
		}
		defer s.Close()
		var ds []dot
		for _, k := range s.Keys() {
			x, y, c := dotstore.Split(k)
			ds = append(ds, dot{x, y, lr.Map.Categories[c].Key})
		}
		slices.SortFunc(ds, func(a, b dot) int {
			if a.x != b.x {
				return int(a.x) - int(b.x)
			}
			if a.y != b.y {
				return int(a.y) - int(b.y)
			}
			return strings.Compare(a.key, b.key)
		})
		return ds
	}
	a, b := dots(0), dots(1)
	var cf geo.Feature
	for _, f := range areas.Features {
		if f.ID == changed {
			cf = f
		}
	}
	box := cf.Geometry.Bound()
	// Multiset difference b − a by merging the sorted lists.
	var added []dot
	i := 0
	for _, x := range b {
		if i < len(a) && a[i] == x {
			i++
			continue
		}
		added = append(added, x)
	}
	if i != len(a) {
		t.Fatalf("only %d of year A's %d dots are in year B", i, len(a))
	}
	want := int(math.Round(0.1 * cf.Props["p0"].(float64) / m.PeoplePerDot))
	if len(added) < want-2 || len(added) > want+2 {
		t.Errorf("%d dots added; want about %d (10%% of the area's p at %v per dot)", len(added), want, m.PeoplePerDot)
	}
	for _, x := range added {
		lon, lat := dotstore.CellLonLat(x.x, x.y)
		if x.key != "p" || !box.Pad(1e-6).Contains(orb.Point{lon, lat}) {
			t.Errorf("added dot %+v at (%.6f, %.6f) is not a p dot of %s", x, lon, lat, changed)
		}
	}

	// Tiles: the same pixels wherever the changed area is not within a
	// dot of the tile.
	same, differ := 0, 0
	for z := m.Tiles.MinZoom; z <= m.Tiles.MaxZoom; z++ {
		pad := 2 * m.Dots.Diameter // pixels: a dot drawn at the area's edge reaches this far
		lo := worldPixel(box.Min[0], box.Max[1], z)
		hi := worldPixel(box.Max[0], box.Min[1], z)
		paths, _ := filepath.Glob(filepath.Join(sum.Layers[0].Dir, fmt.Sprint(z), "*", "*.png"))
		paths2, _ := filepath.Glob(filepath.Join(sum.Layers[1].Dir, fmt.Sprint(z), "*", "*.png"))
		if len(paths) != len(paths2) || len(paths) == 0 {
			t.Fatalf("zoom %d: %d tiles in year A, %d in year B", z, len(paths), len(paths2))
		}
		for _, p := range paths {
			rel, _ := filepath.Rel(sum.Layers[0].Dir, p)
			var tx, ty int
			fmt.Sscanf(filepath.ToSlash(rel), fmt.Sprintf("%d/%%d/%%d.png", z), &tx, &ty)
			near := float64(tx*256) <= hi[0]+pad && float64(tx*256+256) >= lo[0]-pad &&
				float64(ty*256) <= hi[1]+pad && float64(ty*256+256) >= lo[1]-pad
			eq := samePixels(t, p, filepath.Join(sum.Layers[1].Dir, rel))
			switch {
			case eq:
				same++
			case near:
				differ++
			default:
				t.Errorf("tile %s differs but holds no changed area", rel)
			}
		}
	}
	if differ == 0 || same < 3*differ {
		t.Errorf("%d tiles the same, %d differ; want the change to show in a few tiles and the rest the same", same, differ)
	}

	// Workers do not matter: the before layer placed alone by one worker
	// is the same store.
	lm, in, _, _, err := LoadLayer(m, 0, areas)
	if err != nil {
		t.Fatal(err)
	}
	pl, err := Place(context.Background(), in, lm, PlaceOptions{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	defer pl.Store.Close()
	if got := pl.Store.Len(); got != len(a) {
		t.Errorf("one worker placed %d dots; two placed %d", got, len(a))
	}
}

// worldPixel is the global pixel position of lon/lat at zoom z (256-pixel
// tiles), by the store's Web Mercator cells.
func worldPixel(lon, lat float64, z int) [2]float64 {
	x, y := dotstore.World(lon, lat)
	s := 256 * math.Exp2(float64(z)) / dotstore.WorldSize
	return [2]float64{float64(x) * s, float64(y) * s}
}

func samePixels(t *testing.T, a, b string) bool {
	t.Helper()
	read := func(p string) *image.NRGBA {
		f, err := os.Open(p)
		if err != nil {
			t.Fatal(err)
		}
		defer f.Close()
		im, err := png.Decode(f)
		if err != nil {
			t.Fatalf("%s: %v", p, err)
		}
		n := image.NewNRGBA(im.Bounds())
		draw.Draw(n, n.Rect, im, im.Bounds().Min, draw.Src)
		return n
	}
	return bytes.Equal(read(a).Pix, read(b).Pix)
}

// TestLayersCarryOlderAreas: an invented older count on other boundaries
// is carried onto the map's areas, by a crosswalk file and, without one,
// by area. Old area W (1,000 p) was split into the new g0-0 and g0-1; old
// Es (300) and En (100) were merged into g1-0; X (50) is g1-1 unchanged; Y
// (70) lies off the map and is in no crosswalk row, so it is lost.
func TestLayersCarryOlderAreas(t *testing.T) {
	dir := t.TempDir()
	areas := gridAreas(2, 0.02)
	for i := range areas.Features {
		areas.Features[i].Props["pop"] = 10.0
	}
	box := func(w, s, e, n float64) orb.MultiPolygon {
		return orb.MultiPolygon{{{{w, s}, {e, s}, {e, n}, {w, n}, {w, s}}}}
	}
	old := &geo.Layer{Fields: []string{"code", "pop"}}
	for _, o := range []struct {
		id  string
		g   orb.MultiPolygon
		pop float64
	}{
		{"W", box(-140, -40, -139.98, -39.96), 1000},
		{"Es", box(-139.98, -40, -139.96, -39.99), 300},
		{"En", box(-139.98, -39.99, -139.96, -39.98), 100},
		{"X", box(-139.98, -39.98, -139.96, -39.96), 50},
		{"Y", box(-130, -40, -129.98, -39.98), 70},
	} {
		old.Features = append(old.Features, geo.Feature{Index: len(old.Features), ID: o.id, Geometry: o.g, Props: map[string]any{"code": o.id, "pop": o.pop}})
	}
	if err := geojson.Write(filepath.Join(dir, "old.geojson"), old); err != nil {
		t.Fatal(err)
	}
	cw := "old_code,new_code,share\nW,g0-0,0.5\nW,g0-1,0.5\nEs,g1-0,1\nEn,g1-0,1\nX,g1-1,1\n"
	if err := os.WriteFile(filepath.Join(dir, "cw.csv"), []byte(cw), 0o644); err != nil {
		t.Fatal(err)
	}
	m := mapfile.Defaults
	m.Path = filepath.Join(dir, "m.toml")
	m.Out = filepath.Join(dir, "out")
	m.Input.File = "grid"
	m.Tiles.MinZoom, m.Tiles.MaxZoom = 8, 9
	m.Categories = []mapfile.Category{{Key: "all", Label: "Everyone", Color: "#0072B2", Fields: []string{"pop"}}}
	oldIn := &mapfile.Input{File: "old.geojson", ID: "code"}
	m.Layers = []mapfile.Layer{
		{Key: "now", Label: "Now"},
		{Key: "then", Label: "Then (crosswalk)", Input: oldIn, Crosswalk: &mapfile.Crosswalk{File: "cw.csv", Source: "old_code", Target: "new_code", Weight: "share"}},
		{Key: "byarea", Label: "Then (by area)", Input: oldIn},
	}
	var log bytes.Buffer
	sum, err := RunLayers(context.Background(), &m, Options{Layer: areas, Log: &log})
	if err != nil {
		t.Fatal(err)
	}
	// Rows follow the grid's order: g0-0, g1-0, g0-1, g1-1. By area, W's
	// halves are the zones −40°…−39.98° and −39.98°…−39.96°, whose areas
	// are in the ratio of the sines' differences (hat-box theorem,
	// ../shared/CHECKS.md, "Sphere geometry").
	sd := func(a, b float64) float64 { return math.Sin(b*math.Pi/180) - math.Sin(a*math.Pi/180) }
	south := sd(-40, -39.98) / sd(-40, -39.96)
	cases := []struct {
		layer int
		want  []float64
	}{
		{1, []float64{500, 400, 500, 50}},
		{2, []float64{1000 * south, 400, 1000 * (1 - south), 50}},
	}
	for _, c := range cases {
		lr := sum.Layers[c.layer]
		for j, w := range c.want {
			if got := lr.Input.Counts[j][0]; math.Abs(got-w) > 1e-6 {
				t.Errorf("layer %s, area %s: %.6f people; want %.6f", lr.Key, areas.Features[j].ID, got, w)
			}
		}
		r := lr.Crosswalk
		if r == nil || r.Before != 1520 || math.Abs(r.After-1450) > 1e-6 || math.Abs(r.Lost-70) > 1e-9 || strings.Join(r.Unmatched, ",") != "Y" {
			t.Errorf("layer %s report %+v; want 1520 before, 1450 after, 70 lost (Y)", lr.Key, r)
		}
		if got := lr.Summary.Metadata.Categories[0].People; math.Abs(got-1450) > 1e-6 {
			t.Errorf("layer %s draws %v people; want the 1450 carried", lr.Key, got)
		}
	}
	if sum.Layers[0].Crosswalk != nil || !sum.Layers[2].AreaWeighted || sum.Layers[1].AreaWeighted {
		t.Errorf("crosswalk kinds: %v %v %v", sum.Layers[0].Crosswalk, sum.Layers[1].AreaWeighted, sum.Layers[2].AreaWeighted)
	}
	if !strings.Contains(log.String(), "70.0 people in 1 source areas the crosswalk does not list (lost): Y") {
		t.Errorf("the log does not report the lost people:\n%s", log.String())
	}
	if _, err := os.Stat(filepath.Join(m.Out, "byarea", "map.json")); err != nil {
		t.Error(err)
	}
}
