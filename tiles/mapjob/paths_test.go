package mapjob

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/measure"
	"github.com/stipple-maps/stipple/geo/proj"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// smallWithMask copies testdata/small (three invented areas, one of them,
// "010", with null geometry) into a folder of its own with a mask, so a
// test can edit the mask in place.
func smallWithMask(t *testing.T) *mapfile.Map {
	t.Helper()
	dir := t.TempDir()
	for _, f := range []string{"areas.geojson", "water.geojson"} {
		b, err := os.ReadFile(filepath.Join("../../testdata/small", f))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, f), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	src, err := os.ReadFile("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(src), `id = "code"`, "id = \"code\"\nmask = [\"water.geojson\"]", 1)
	if err := os.WriteFile(filepath.Join(dir, "map.toml"), []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	m, err := mapfile.Read(filepath.Join(dir, "map.toml"))
	if err != nil {
		t.Fatal(err)
	}
	m.Out = filepath.Join(dir, "out")
	return m
}

// published reads the files a render publishes (everything but the state
// folder) into a map of slash path → bytes.
func published(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	return files(t, dir, func(rel string) bool { return strings.HasPrefix(filepath.ToSlash(rel), tiles.StateDir+"/") })
}

// TestRenderPathsAgree renders one map (null-geometry area, a mask, two
// categories) into a folder and through a file:// URL: every published
// file is the same, the not-drawn report names the area without geometry,
// and a print page from the render's store draws the same dots as one
// placed anew.
func TestRenderPathsAgree(t *testing.T) {
	ctx := context.Background()
	m := smallWithMask(t)
	folder := m.Out
	a, err := Run(ctx, m, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if a.NotDrawn != 0 || len(a.Problems) != 0 {
		// "010" has no geometry and no people in testdata/small.
		t.Logf("not drawn %v: %q", a.NotDrawn, a.Problems)
	}
	m2 := *m
	m2.Out = "file://" + filepath.ToSlash(filepath.Join(t.TempDir(), "viaurl"))
	b, err := Run(ctx, &m2, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	sameFiles(t, published(t, folder), published(t, strings.TrimPrefix(m2.Out, "file://")))
	for k := range a.People {
		if a.People[k] != b.People[k] || a.Dots[k] != b.Dots[k] {
			t.Errorf("category %d: folder %v people %d dots; file:// %v people %d dots", k, a.People[k], a.Dots[k], b.People[k], b.Dots[k])
		}
	}
	for _, f := range []string{"legend.png", "legend@2x.png", "legend.svg", "alt.txt", "map.json", "index.html", "embed.html"} {
		if _, err := os.Stat(filepath.Join(folder, f)); err != nil {
			t.Errorf("render wrote no %s", f)
		}
	}

	// Print: dots from the render's store, and dots placed anew, give the
	// same page; its legend counts all the map's people.
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	stored, err := PlaceForPrint(ctx, in, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer stored.Store.Close()
	if !stored.Reused {
		t.Fatal("print did not read the render's store")
	}
	fresh, err := Place(ctx, in, m, PlaceOptions{Workers: 3})
	if err != nil {
		t.Fatal(err)
	}
	size, _ := page.ParseSize("A5")
	opt := PrintOptions{Size: size, DPI: 100, Margin: 10, Projection: "auto", DotMM: 0.4}
	p1, err := Print(ctx, in, m, stored, opt)
	if err != nil {
		t.Fatal(err)
	}
	p2, err := Print(ctx, in, m, fresh, opt)
	if err != nil {
		t.Fatal(err)
	}
	var png1, png2 bytes.Buffer
	if err := p1.Page.WritePNG(&png1); err != nil {
		t.Fatal(err)
	}
	if err := p2.Page.WritePNG(&png2); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(png1.Bytes(), png2.Bytes()) {
		t.Error("print from the render's store differs from print with dots placed anew")
	}
	for k := range a.People {
		if p1.People[k] != a.People[k] || p1.Dots[k] != a.Dots[k] {
			t.Errorf("category %d: print %v people %d dots; render %v people %d dots", k, p1.People[k], p1.Dots[k], a.People[k], a.Dots[k])
		}
	}
	if p1.Page.Len() != sum(a.Dots) {
		t.Errorf("print page holds %d dots; the render drew %d", p1.Page.Len(), sum(a.Dots))
	}
}

// TestNullGeometryPeopleAreNotDrawnOnEveryPath gives the area without
// geometry people: the render and the tally both count them as not drawn
// and name the area.
func TestNullGeometryPeopleAreNotDrawnOnEveryPath(t *testing.T) {
	m := smallWithMask(t)
	dir := filepath.Dir(m.Path)
	b, _ := os.ReadFile(filepath.Join(dir, "areas.geojson"))
	var fc map[string]any
	if err := json.Unmarshal(b, &fc); err != nil {
		t.Fatal(err)
	}
	feats := fc["features"].([]any)
	found := false
	for _, f := range feats {
		props := f.(map[string]any)["properties"].(map[string]any)
		if props["code"] == "010" {
			props["north"] = 25
			found = true
		}
	}
	if !found {
		t.Fatal("testdata/small has no area 010")
	}
	b, _ = json.Marshal(fc)
	os.WriteFile(filepath.Join(dir, "areas.geojson"), b, 0o644)
	s, err := Run(context.Background(), m, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if s.NotDrawn != 25 || len(s.Problems) != 1 || !strings.Contains(s.Problems[0], `"010"`) {
		t.Errorf("not drawn %v, problems %q; want 25 people in area 010", s.NotDrawn, s.Problems)
	}
	if s.Metadata.NotDrawn.People != 25 {
		t.Errorf("map.json not drawn %v; want 25", s.Metadata.NotDrawn.People)
	}
}

// TestMaskEditedInPlaceReplacesDots edits the mask file without renaming
// it: the next render places the dots again, and none lies in the new pond.
func TestMaskEditedInPlaceReplacesDots(t *testing.T) {
	ctx := context.Background()
	m := smallWithMask(t)
	if _, err := Run(ctx, m, Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	// Move the pond from the east half of area 007 to its west half.
	pond := `{"type": "FeatureCollection", "features": [{"type": "Feature", "properties": {},
 "geometry": {"type": "Polygon", "coordinates": [[[-140.02, -30.02], [-140.01, -30.02], [-140.01, -30.0], [-140.02, -30.0], [-140.02, -30.02]]]}}]}`
	if err := os.WriteFile(filepath.Join(filepath.Dir(m.Path), "water.geojson"), []byte(pond), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := Run(ctx, m, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if s.StoreReused {
		t.Fatal("an in-place mask edit reused the old dots")
	}
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	pl, err := PlaceForPrint(ctx, in, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer pl.Store.Close()
	west := 0
	for lon, lat := range cellCentres(pl) {
		if lon > -140.02+1e-6 && lon < -140.01-1e-6 && lat > -30.02+1e-6 && lat < -30.0-1e-6 {
			west++
		}
	}
	if west != 0 {
		t.Errorf("%d dots in the moved pond", west)
	}
}

// cellCentres yields the store's dots at their cells' centres.
func cellCentres(pl *Placed) func(yield func(lon, lat float64) bool) {
	return func(yield func(lon, lat float64) bool) {
		printDots(context.Background(), nil, nil, &Placed{Store: pl.Store}, nil)(func(lon, lat float64, _ int) bool {
			return yield(lon, lat)
		})
	}
}

// TestPolarDotsAreReportedNotClamped: an invented area reaching the south
// pole. Web Mercator ends at ±85.0511287798° (IOGP Guidance Note 7-2,
// method 1024: the square world's edge, φ = 2·atan(e^π) − π/2); dots south
// of it are counted as beyond the tiles' limit, never drawn on the
// pyramid's bottom row, and a print page draws them all.
func TestPolarDotsAreReportedNotClamped(t *testing.T) {
	ctx := context.Background()
	if got := 2*math.Atan(math.Exp(math.Pi))*180/math.Pi - 90; math.Abs(got-proj.WebMercatorMaxLat) > 1e-9 {
		t.Fatalf("latitude limit %v; GN7-2 gives %v", proj.WebMercatorMaxLat, got)
	}
	dir := t.TempDir()
	layer := &geo.Layer{Path: "polar.geojson", Features: []geo.Feature{{
		Index: 0, ID: "cap",
		Geometry: orb.MultiPolygon{{{{-30, -90}, {30, -90}, {30, -80}, {-30, -80}, {-30, -90}}}},
		Props:    map[string]any{"people": 20000.0},
	}}}
	m := &mapfile.Map{Path: filepath.Join(dir, "map.toml"), Title: "Invented polar cap", PeoplePerDot: 10, Seed: 1, Out: filepath.Join(dir, "out"),
		Input: mapfile.Input{ID: "id"}, Tiles: mapfile.Tiles{MinZoom: 0, MaxZoom: 3, Size: 256},
		Dots:       mapfile.Dots{Diameter: 2, MinDiameter: 0.6, Opacity: 0.9},
		Categories: []mapfile.Category{{Key: "p", Label: "People", Color: "#0072B2", Fields: []string{"people"}}}}
	s, err := Run(ctx, m, Options{Layer: layer, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	// Share of the cap's area south of the limit, on the sphere: area
	// between latitudes is proportional to the difference of their sines
	// (Snyder 1987, "Map Projections — A Working Manual", USGS PP 1395,
	// eq. 3-12 with the authalic sphere).
	share := (math.Sin(-proj.WebMercatorMaxLat*math.Pi/180) - math.Sin(-math.Pi/2)) / (math.Sin(-80*math.Pi/180) - math.Sin(-math.Pi/2))
	beyond := s.Beyond[0]
	want := share * 2000
	if sd := math.Sqrt(2000 * share * (1 - share)); math.Abs(float64(beyond)-want) > 4*sd {
		t.Errorf("%d dots beyond the limit; want %.0f ± %.0f", beyond, want, 4*sd)
	}
	if s.Dots[0]+beyond != 2000 || s.BeyondPeople != float64(beyond)*10 {
		t.Errorf("drawn %d + beyond %d (people %v); want 2000 dots in all", s.Dots[0], beyond, s.BeyondPeople)
	}
	if s.Metadata.NotDrawn.BeyondTileLimit != float64(beyond)*10 || s.Metadata.Categories[0].DotsBeyond != beyond {
		t.Errorf("map.json: %+v, category %+v", s.Metadata.NotDrawn, s.Metadata.Categories[0])
	}
	alt, _ := os.ReadFile(filepath.Join(m.Out, "alt.txt"))
	if !strings.Contains(string(alt), "latitude limit") {
		t.Errorf("alt.txt says nothing of the people beyond the latitude limit: %s", alt)
	}
	// Bottom row of the zoom-3 tiles under the cap: no more ink than the
	// rows above it (a clamped line of dots would be solid there).
	for _, name := range []string{"3/3/7.png", "3/4/7.png"} {
		f, err := os.Open(filepath.Join(m.Out, name))
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(f)
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		ink := func(y int) int {
			n := 0
			for x := 0; x < 256; x++ {
				if _, _, _, a := img.At(x, y).RGBA(); a > 0 {
					n++
				}
			}
			return n
		}
		last, above := ink(255), 0
		for y := 245; y < 255; y++ {
			above = max(above, ink(y))
		}
		if last > above {
			t.Errorf("%s: bottom row holds %d inked pixels, the ten rows above at most %d: dots clamped onto the edge", name, last, above)
		}
	}
	// A print page holds every dot, beyond the limit included.
	in, err := Load(m, layer)
	if err != nil {
		t.Fatal(err)
	}
	pl, err := PlaceForPrint(ctx, in, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer pl.Store.Close()
	size, _ := page.ParseSize("A5")
	p, err := Print(ctx, in, m, pl, PrintOptions{Size: size, DPI: 72, Margin: 10, Projection: "auto", DotMM: 0.4})
	if err != nil {
		t.Fatal(err)
	}
	if p.Page.Len() != 2000 || p.Dots[0] != 2000 {
		t.Errorf("print page holds %d dots (legend %d); want all 2000", p.Page.Len(), p.Dots[0])
	}
	south := 0
	printDots(ctx, in, m, pl, nil)(func(lon, lat float64, _ int) bool {
		if lat < -proj.WebMercatorMaxLat {
			south++
		}
		if !planar.MultiPolygonContains(layer.Features[0].Geometry, orb.Point{lon, lat}) && lat > -89.999 {
			t.Errorf("dot at %v, %v outside the cap", lon, lat)
			return false
		}
		return true
	})
	if south != beyond {
		t.Errorf("print draws %d dots south of the limit; the render counted %d", south, beyond)
	}
}

// TestPrintFrameCountsWhatItShows: with a frame (--bbox), the legend's
// people are the frame's dots times the people per dot, and the page
// holds exactly those dots.
func TestPrintFrameCountsWhatItShows(t *testing.T) {
	ctx := context.Background()
	m := smallWithMask(t)
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	pl, err := Place(ctx, in, m, PlaceOptions{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	frame := orb.Bound{Min: orb.Point{-140.005, -30.02}, Max: orb.Point{-139.99, -30.005}}
	size, _ := page.ParseSize("A5")
	p, err := Print(ctx, in, m, pl, PrintOptions{Size: size, DPI: 100, Margin: 10, Projection: "auto", DotMM: 0.4, Frame: &frame})
	if err != nil {
		t.Fatal(err)
	}
	inside := 0
	printDots(ctx, in, m, pl, nil)(func(lon, lat float64, _ int) bool {
		if frame.Contains(orb.Point{lon, lat}) {
			inside++
		}
		return true
	})
	people := 0.0
	for _, v := range p.People {
		people += v
	}
	if inside == 0 || p.Page.Len() != inside || sum(p.Dots) != inside || people != float64(inside)*m.PeoplePerDot {
		t.Errorf("frame holds %d dots; page %d, legend dots %v, people %v (want %v)", inside, p.Page.Len(), p.Dots, people, float64(inside)*m.PeoplePerDot)
	}
}

// TestDroppedZoomsLeaveTheFolder: raising the lowest zoom on a rerun
// removes the tiles and tile-index scripts of the zooms no longer in the
// map; lowering it again draws them anew, the same bytes as at first.
func TestDroppedZoomsLeaveTheFolder(t *testing.T) {
	ctx := context.Background()
	m := smallWithMask(t)
	if _, err := Run(ctx, m, Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	first := published(t, m.Out)
	m.Tiles.MinZoom = 13
	if _, err := Run(ctx, m, Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	for p := range published(t, m.Out) {
		p = filepath.ToSlash(p)
		if strings.HasPrefix(p, "11/") || strings.HasPrefix(p, "12/") || strings.HasSuffix(p, "-11.js") || strings.HasSuffix(p, "-12.js") {
			t.Errorf("%s is left from a zoom the map no longer has", p)
		}
	}
	m.Tiles.MinZoom = 11
	if _, err := Run(ctx, m, Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	sameFiles(t, first, published(t, m.Out))
}

// TestMeasuresBesideTheMap: a render writes the per-area table and the
// map's mixing measures into map.json and alt.txt, the values of package
// geo/measure on the same counts (its own tests check the formulas against
// Reardon & Firebaugh 2002).
func TestMeasuresBesideTheMap(t *testing.T) {
	m := smallWithMask(t)
	s, err := Run(context.Background(), m, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	x, err := measure.Measure(in.Counts)
	if err != nil {
		t.Fatal(err)
	}
	ms := s.Metadata.Measures
	if ms == nil || ms.H == nil || *ms.H != x.H || *ms.M != x.M || *ms.Entropy != x.Entropy {
		t.Fatalf("map.json measures %+v; want H %v M %v E %v", ms, x.H, x.M, x.Entropy)
	}
	table, err := os.ReadFile(filepath.Join(m.Out, AreaTableFile))
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(table)).ReadAll()
	if err != nil || len(rows) != 1+len(in.Layer.Features) || rows[0][0] != "id" || rows[1][0] != in.Layer.Features[0].ID {
		t.Fatalf("areas.csv: %v rows (%v); want a header and %d areas", len(rows), err, len(in.Layer.Features))
	}
	methods, _ := os.ReadFile(filepath.Join(m.Out, "methods.txt"))
	if !strings.Contains(string(methods), fmt.Sprintf("- Theil's H = %.3f: how unevenly", x.H)) {
		t.Errorf("methods.txt does not state H:\n%s", methods)
	}
	alt, _ := os.ReadFile(filepath.Join(m.Out, "alt.txt"))
	if !strings.Contains(string(alt), fmt.Sprintf("Theil's H, how unevenly the groups are spread over the areas (0 when every area has the whole map's mix, 1 when each area holds one group), is %.3f.", x.H)) {
		t.Errorf("alt.txt does not state H: %s", alt)
	}
}

// TestEstimatesCarryIntervals: with fields_moe (testdata/estimates,
// invented), the map says its counts are estimates (caution, legend,
// alt.txt) and map.json gives the measures' intervals with the draw count
// and seed; the two-area table of ../shared/CHECKS.md (Reardon & Firebaugh
// 2002) has H = 0.531004, which its interval holds. With all margins zero
// the interval has no width.
func TestEstimatesCarryIntervals(t *testing.T) {
	m, err := mapfile.Read("../../testdata/estimates/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	m.Out = filepath.Join(t.TempDir(), "out")
	s, err := Run(context.Background(), m, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	ms := s.Metadata.Measures
	if ms == nil || ms.Intervals == nil || ms.Intervals.Draws != RenderDraws || ms.Intervals.Seed != 4 {
		t.Fatalf("map.json measures %+v; want intervals from %d draws, seed 4", ms, RenderDraws)
	}
	lo, hi := *ms.Intervals.H[0], *ms.Intervals.H[1]
	if math.Abs(*ms.H-0.531004) > 1e-6 || !(lo < 0.531004 && 0.531004 < hi) {
		t.Errorf("H %v in [%v, %v]; want 0.531004 inside", *ms.H, lo, hi)
	}
	if !strings.HasSuffix(s.Metadata.Caution, EstimatesCaution) {
		t.Errorf("caution %q does not say the counts are estimates", s.Metadata.Caution)
	}
	alt, _ := os.ReadFile(filepath.Join(m.Out, "alt.txt"))
	if !strings.Contains(string(alt), "The counts are survey estimates: over 200 seeded draws") {
		t.Errorf("alt.txt: %s", alt)
	}
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	for i := range in.Margins {
		for k := range in.Margins[i] {
			in.Margins[i][k] = 0
		}
	}
	zero, err := Measures(context.Background(), in, m, nil)
	if err != nil {
		t.Fatal(err)
	}
	if *zero.Intervals.H[0] != *zero.H || *zero.Intervals.H[1] != *zero.H {
		t.Errorf("zero margins: H interval [%v, %v]; want both %v", *zero.Intervals.H[0], *zero.Intervals.H[1], *zero.H)
	}
}

// TestCategoryKeyRenameReplaces: dots are seeded by category key, so a
// renamed key places them again (the sampling fingerprint holds the keys),
// and the tiles differ from those of the old key.
func TestCategoryKeyRenameReplaces(t *testing.T) {
	ctx := context.Background()
	m := smallWithMask(t)
	if _, err := Run(ctx, m, Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	before := published(t, m.Out)
	m.Categories[0].Key = "north"
	s, err := Run(ctx, m, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if s.StoreReused {
		t.Fatal("a renamed category key reused the old dots")
	}
	changed := 0
	for p, b := range published(t, m.Out) {
		if strings.Count(filepath.ToSlash(p), "/") == 2 && !bytes.Equal(b, before[p]) {
			changed++
		}
	}
	if changed == 0 {
		t.Error("no tile changed with the category's key")
	}
}

// recordingSink is a sink that notes the path of every Put, in order.
type recordingSink struct {
	sink.Sink
	puts []string
}

func (r *recordingSink) Put(ctx context.Context, path string, data []byte, contentType, cacheControl string) error {
	r.puts = append(r.puts, path)
	return r.Sink.Put(ctx, path, data, contentType, cacheControl)
}

// TestFurnitureEntryPointsLast: the furniture writes the tile index before
// map.json and map.json before the pages, which come last, so a run cut
// off while writing it never leaves map.json (or a page) beside an index
// that names another map's tiles.
func TestFurnitureEntryPointsLast(t *testing.T) {
	ctx := context.Background()
	m := smallWithMask(t)
	s, err := Run(ctx, m, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	rec := &recordingSink{Sink: sink.NewDir(m.Out)}
	if err := PutFurniture(ctx, rec, s.Metadata, m.RGBA()); err != nil {
		t.Fatal(err)
	}
	at := map[string]int{}
	lastIndex := -1
	for i, p := range rec.puts {
		at[p] = i
		if strings.HasPrefix(p, tiles.IndexDir+"/") {
			lastIndex = i
		}
	}
	meta, ok := at[tiles.MetadataFile]
	if !ok || lastIndex < 0 {
		t.Fatalf("the furniture wrote no %s or no tile index: %v", tiles.MetadataFile, rec.puts)
	}
	if meta < lastIndex {
		t.Errorf("%s is written (step %d) before the tile index is complete (step %d)", tiles.MetadataFile, meta, lastIndex)
	}
	embed, view := at[tiles.EmbedPage], at[tiles.ViewerPage]
	if embed < meta || view < meta {
		t.Errorf("a page is written before %s: %v", tiles.MetadataFile, rec.puts)
	}
	if n := len(rec.puts); max(embed, view) != n-1 || min(embed, view) != n-2 {
		t.Errorf("the pages are not the last two files written: %v", rec.puts)
	}
}
