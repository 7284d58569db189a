package mapjob

import (
	"context"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

func TestDotsPerFeatureMatchCountsWithinRounding(t *testing.T) {
	m, err := mapfile.Read("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	for _, perDot := range []float64{1, 5, 7.5, 100} {
		m.PeoplePerDot = perDot
		in, err := Load(m, nil)
		if err != nil {
			t.Fatal(err)
		}
		pl, err := Place(context.Background(), in, m, PlaceOptions{Workers: 2})
		if err != nil {
			t.Fatal(err)
		}
		for i := range in.Dots {
			for k := range m.Categories {
				want := in.Counts[i][k] / perDot
				// Unbiased rounding gives floor or ceil of count/N, never more.
				if d := float64(in.Dots[i][k]); d != math.Floor(want) && d != math.Ceil(want) {
					t.Errorf("N=%v feature %s cat %d: %v dots; want ⌊%v⌋ or ⌈%v⌉", perDot, in.Layer.Features[i].ID, k, d, want, want)
				}
			}
		}
		tally := TallyAreas(in, m, pl.Outcomes, nil)
		total := 0
		for _, d := range tally.Dots {
			total += d
		}
		if pl.Store.Len() != total {
			t.Errorf("N=%v: store holds %d dots; the tally says %d", perDot, pl.Store.Len(), total)
		}
	}
}

func TestFeatureWithPeopleButNoAreaIsReported(t *testing.T) {
	m, err := mapfile.Read("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Feature "010" has no geometry; give it people.
	in.Counts[3][0] = 50
	in.Dots[3][0] = 10
	pl, err := Place(context.Background(), in, m, PlaceOptions{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	o := pl.Outcomes[3]
	if o.Lost == nil || o.Lost[0] != 10 || o.Problem == "" {
		t.Errorf("no-area feature: outcome %+v; want 10 lost and a problem", o)
	}
	// A tally without that outcome (as a shard's final step has, since no
	// part samples an area without geometry) counts it the same.
	delete(pl.Outcomes, 3)
	tally := TallyAreas(in, m, pl.Outcomes, []int{3})
	if tally.NotDrawn != 50 || tally.Dots[0] != 0 || len(tally.Problems) != 1 {
		t.Errorf("no-area feature without outcome: not drawn %v, dots %v, problems %q; want 50, 0 and one problem", tally.NotDrawn, tally.Dots, tally.Problems)
	}
}

func TestMasksKeepDotsOut(t *testing.T) {
	m, err := mapfile.Read("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	m.PeoplePerDot = 1
	m.Input.Mask = []string{"water.geojson"} // the east half of area "007"
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	if in.Masks == nil || in.MaskFeatures != 1 {
		t.Fatalf("masks not loaded: %v, %d", in.Masks, in.MaskFeatures)
	}
	pl, err := Place(context.Background(), in, m, PlaceOptions{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	store := pl.Store
	// Every dot of the store west of −140.0 lies in "007" or "009"; none of
	// them may fall in the pond (lon −140.01 … −140.0, lat −30.02 … −30.0).
	inPond := 0
	for _, k := range store.Range(0, ^uint64(0)) {
		x, y, _ := dotstore.Split(k)
		lon := (float64(x)+0.5)/dotstore.WorldSize*360 - 180
		lat := 180 / math.Pi * math.Atan(math.Sinh(math.Pi*(1-2*(float64(y)+0.5)/dotstore.WorldSize)))
		if lon > -140.01+1e-6 && lon < -140.0-1e-6 && lat > -30.02+1e-6 && lat < -30.0-1e-6 {
			inPond++
		}
	}
	if inPond != 0 {
		t.Errorf("%d dots in the masked pond", inPond)
	}
	if tally := TallyAreas(in, m, pl.Outcomes, []int{0}); tally.Dots[0]+tally.Dots[1] != 1200+340 || tally.NotDrawn != 0 {
		got, want := tally.Dots[0]+tally.Dots[1], 1200+340
		t.Errorf("area 007 drew %d dots; want all %d, outside the pond", got, want)
	}
}

func TestExactRoundingGivesRoundedTotals(t *testing.T) {
	m, err := mapfile.Read("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	m.PeoplePerDot = 7
	m.Rounding = "exact"
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	for k := range m.Categories {
		var people float64
		drawn := 0
		for i := range in.Dots {
			people += in.Counts[i][k]
			drawn += in.Dots[i][k]
		}
		if want := int(math.Round(people / 7)); drawn != want {
			t.Errorf("category %d: %d dots; exact mode wants round(%v/7) = %d", k, drawn, people, want)
		}
	}
}

// TestTableColumnShadowingAreaFieldIsAnError: a count column of the table
// with the name of a property the areas already have would replace the
// areas' values silently; it is refused with both files named.
func TestTableColumnShadowingAreaFieldIsAnError(t *testing.T) {
	m := smallWithMask(t)
	dir := filepath.Dir(m.Path)
	if err := os.WriteFile(filepath.Join(dir, "counts.csv"), []byte("code,north\n007,1\n008,2\n010,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	m.Input.Table = &mapfile.Table{File: "counts.csv", Key: "code"}
	_, err := Load(m, nil)
	if err == nil || !strings.Contains(err.Error(), `"north" is both a column of counts.csv and a property of the areas in areas.geojson`) {
		t.Fatalf("got %v; want the shadowing refused", err)
	}
}

// TestAbsurdScaleStopsBeforeWork: a count cell of 1e15 (a sentinel or a
// slipped decimal) and a map that would place more dots than max_dots stop
// in Load, before any dot is placed, naming the row or the key.
func TestAbsurdScaleStopsBeforeWork(t *testing.T) {
	m := smallWithMask(t)
	dir := filepath.Dir(m.Path)
	b, _ := os.ReadFile(filepath.Join(dir, "areas.geojson"))
	os.WriteFile(filepath.Join(dir, "areas.geojson"), []byte(strings.Replace(string(b), `"north": 15,`, `"north": 1e15,`, 1)), 0o644)
	_, err := Load(m, nil)
	if err == nil || !strings.Contains(err.Error(), `feature 1 (id "008"), category "n"`) || !strings.Contains(err.Error(), "allow_outliers") {
		t.Fatalf("1e15 cell: %v; want the row named and allow_outliers suggested", err)
	}
	m.AllowOutliers = true
	_, err = Load(m, nil)
	if err == nil || !strings.Contains(err.Error(), "key max_dots") || !strings.Contains(err.Error(), "about 200,000,000,001,070 dots (1,000,000,000,005,351 people") {
		t.Fatalf("1e15 people at 5 a dot: %v; want max_dots named with the estimate", err)
	}
}

// TestFullBandAndStrayHole: a box written from −180° to 180° along two
// parallels is the whole band round the globe between them (not a
// zero-width strip whose dots lie on its outline), and a hole lying wholly
// outside its outer ring is dropped with a note, the area keeping its
// people (testdata/edges/band-and-stray-hole.geojson, invented).
func TestFullBandAndStrayHole(t *testing.T) {
	dir := t.TempDir()
	m := &mapfile.Map{Path: filepath.Join(dir, "m.toml"), PeoplePerDot: 10, Seed: 1, Out: filepath.Join(dir, "out"), Rounding: "random",
		Input:      mapfile.Input{File: "../../testdata/edges/band-and-stray-hole.geojson", ID: "id"},
		Categories: []mapfile.Category{{Key: "p", Label: "P", Color: "#0072B2", Fields: []string{"pop"}}}}
	m.Input.File, _ = filepath.Abs(m.Input.File)
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	notes := strings.Join(in.Read.Notes, "\n")
	for _, want := range []string{`feature 0 (id "band"): field "geometry": part 0 outer ring 0 runs along a parallel from −180° to 180°, all the way round: drawn as the full band of longitudes it encloses`,
		`feature 1 (id "holey"): field "geometry": part 0 hole 1 lies wholly outside its outer ring; dropped (the area's people stay in the outer ring)`} {
		if !strings.Contains(notes, want) {
			t.Errorf("notes lack %q:\n%s", want, notes)
		}
	}
	pl, err := Place(context.Background(), in, m, PlaceOptions{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if tally := TallyAreas(in, m, pl.Outcomes, nil); tally.NotDrawn != 0 || len(tally.Notes) != 0 || tally.Dots[0] != 11000 {
		t.Errorf("tally %+v; want all 11,000 dots drawn plainly", tally)
	}
	// The band's 10,000 dots: uniform in longitude (eight 45° sectors,
	// chi-square df 7, NIST/SEMATECH table 1.3.6.7.4: 24.322 at α = 0.001),
	// all within ±10° of latitude; the other area's dots within its square.
	var sector [8]float64
	for lon, lat := range cellCentres(pl) {
		switch {
		case lat >= -10 && lat <= 10:
			sector[min(7, int((lon+180)/45))]++
		case lon >= 0 && lon <= 10 && lat >= 40 && lat <= 50:
		default:
			t.Errorf("dot at %v, %v outside both areas", lon, lat)
		}
	}
	x := 0.0
	for _, n := range sector {
		x += (n - 1250) * (n - 1250) / 1250
	}
	if x > 24.322 {
		t.Errorf("band dots by 45° sector %v: chi-square %.1f > 24.322", sector, x)
	}
}
