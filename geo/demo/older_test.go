package demo

import (
	"math"
	"testing"

	"github.com/stipple-maps/stipple/geo/crosswalk"
)

// TestOlderCarriesBack: the invented older count, carried by its
// crosswalk, gives the newer count back outside the growth districts
// (exactly where nothing was split, to rounding where the split weights
// are area shares), loses nobody, and has areas split and merged.
func TestOlderCarriesBack(t *testing.T) {
	city := City(1)
	old, pairs := Older(1)
	var src, dst []string
	var counts [][]float64
	for _, f := range old.Features {
		src = append(src, f.ID)
		row := make([]float64, len(Groups))
		for k, g := range Groups {
			row[k] = float64(f.Props[g.Field].(int64))
		}
		counts = append(counts, row)
	}
	for _, f := range city.Features {
		dst = append(dst, f.ID)
	}
	out, rep, err := crosswalk.Apply(src, counts, dst, pairs)
	if err != nil {
		t.Fatal(err)
	}
	if rep.Lost != 0 || len(rep.Normalised) != 0 || math.Abs(rep.Before-rep.After) > 1e-6 {
		t.Errorf("report %+v; want nobody lost and weights summing to 1", rep)
	}
	split, merged := 0, 0
	seen := map[string]int{}
	for _, p := range pairs {
		seen[p.Source]++
	}
	for _, n := range seen {
		if n == 2 {
			split++
		}
	}
	merged = len(old.Features) - len(city.Features) + split
	if split < 10 || merged < 10 {
		t.Errorf("%d older areas split, %d newer areas merged; want at least 10 of each", split, merged)
	}
	same, grown := 0, 0
	for j, f := range city.Features {
		for k, g := range Groups {
			v := float64(f.Props[g.Field].(int64))
			if math.Abs(out[j][k]-v) < 1e-9 {
				same++
			} else if out[j][k] < v {
				grown++
			}
		}
	}
	if same < len(city.Features)*len(Groups)*3/4 || grown == 0 {
		t.Errorf("%d cells the same and %d grown; want most the same and some grown", same, grown)
	}
}
