package build

import (
	"math"
	"testing"

	"github.com/stipple-maps/stipple/cmd/stipple/mapfile"
)

func TestDotsPerFeatureMatchCountsWithinRounding(t *testing.T) {
	m, err := mapfile.Read("../../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	for _, perDot := range []float64{1, 5, 7.5, 100} {
		m.PeoplePerDot = perDot
		layer, counts, err := Load(m, nil)
		if err != nil {
			t.Fatal(err)
		}
		store, results := Place(layer, counts, m, 2)
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
	m, err := mapfile.Read("../../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	layer, counts, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Feature "010" has no geometry; give it people.
	counts[3][0] = 50
	_, results := Place(layer, counts, m, 1)
	r := results[3]
	if r.Lost[0] != 10 || r.Dots[0] != 0 || r.Problem == "" {
		t.Errorf("no-area feature: lost %d, drew %d, problem %q; want 10 lost and a problem", r.Lost[0], r.Dots[0], r.Problem)
	}
}
