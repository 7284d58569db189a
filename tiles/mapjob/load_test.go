package mapjob

import (
	"math"
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
		layer, counts, err := Load(m, nil)
		if err != nil {
			t.Fatal(err)
		}
		store, results, err := Place(layer, counts, m, 2)
		if err != nil {
			t.Fatal(err)
		}
		total := 0
		for i, r := range results {
			for k := range m.Categories {
				want := counts[i][k] / perDot
				// Unbiased rounding gives floor or ceil of count/N, never more.
				if d := float64(r.Dots[k] + r.Lost[k]); d != math.Floor(want) && d != math.Ceil(want) {
					t.Errorf("N=%v feature %s cat %d: %v dots; want ⌊%v⌋ or ⌈%v⌉", perDot, layer.Features[i].ID, k, d, want, want)
				}
				total += r.Dots[k]
			}
		}
		if store.Len() != total {
			t.Errorf("N=%v: store holds %d dots; results say %d", perDot, store.Len(), total)
		}
	}
}

func TestFeatureWithPeopleButNoAreaIsReported(t *testing.T) {
	m, err := mapfile.Read("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	layer, counts, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Feature "010" has no geometry; give it people.
	counts[3][0] = 50
	_, results, err := Place(layer, counts, m, 1)
	if err != nil {
		t.Fatal(err)
	}
	r := results[3]
	if r.Lost[0] != 10 || r.Dots[0] != 0 || r.Problem == "" {
		t.Errorf("no-area feature: lost %d, drew %d, problem %q; want 10 lost and a problem", r.Lost[0], r.Dots[0], r.Problem)
	}
}

func TestMasksKeepDotsOut(t *testing.T) {
	m, err := mapfile.Read("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	m.PeoplePerDot = 1
	m.Input.Mask = []string{"water.geojson"} // the east half of area "007"
	in, err := LoadInput(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	if in.Masks == nil || in.MaskFeatures != 1 {
		t.Fatalf("masks not loaded: %v, %d", in.Masks, in.MaskFeatures)
	}
	store, results, err := Place(in.Layer, in.Counts, m, 2)
	if err != nil {
		t.Fatal(err)
	}
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
	if got, want := results[0].Dots[0]+results[0].Dots[1], 1200+340; got != want {
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
	in, err := LoadInput(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	_, results, err := Place(in.Layer, in.Counts, m, 3)
	if err != nil {
		t.Fatal(err)
	}
	for k := range m.Categories {
		var people float64
		drawn := 0
		for i := range results {
			people += in.Counts[i][k]
			drawn += results[i].Dots[k] + results[i].Lost[k]
		}
		if want := int(math.Round(people / 7)); drawn != want {
			t.Errorf("category %d: %d dots; exact mode wants round(%v/7) = %d", k, drawn, people, want)
		}
	}
}
