package batch

import (
	"fmt"
	"math"

	"github.com/stipple-maps/stipple/geo/measure"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// Mixing is the decomposition of the extents' segregation (Theil's H and
// the mutual information index M, Reardon & Firebaugh 2002; package
// geo/measure): the areas of all extents together measured as one
// (Total), the extents measured as if each were one area (Between), and
// the rest, the extents' own segregation weighted by their people
// (Within): Total = Between + Within for both M and H.
type Mixing struct {
	TotalH   float64 `json:"theil_h_total"`
	BetweenH float64 `json:"theil_h_between_extents"`
	WithinH  float64 `json:"theil_h_within_extents"`
	TotalM   float64 `json:"mutual_information_m_total"`
	BetweenM float64 `json:"mutual_information_m_between_extents"`
	WithinM  float64 `json:"mutual_information_m_within_extents"`
	// Note says why there is no decomposition (overlapping extents: an
	// area in two extents would be counted twice), "" when there is.
	Note string `json:"note,omitempty"`
}

// Identity is the summary line that shows the decomposition adding up.
func (x *Mixing) Identity() string {
	if x.Note != "" {
		return x.Note
	}
	return fmt.Sprintf("H = %.4f between extents + %.4f within = %.4f in all; M = %.4f + %.4f = %.4f",
		x.BetweenH, x.WithinH, x.TotalH, x.BetweenM, x.WithinM, x.TotalM)
}

// mixingOf decomposes the segregation of the extents that were drawn or
// kept (nil when any failed or none has people).
func mixingOf(f *File, in *mapjob.Input, results []Result) *Mixing {
	var tables [][][]float64
	seen := map[int]string{}
	for i, r := range results {
		if r.Status == Failed {
			return nil
		}
		p, err := Pick(f.Extents[i], in.Layer)
		if err != nil {
			return nil
		}
		var t [][]float64
		for _, a := range p.Features {
			if other, dup := seen[a]; dup {
				return &Mixing{Note: fmt.Sprintf("extents %q and %q share area %q; the between/within split needs extents that do not overlap",
					other, r.Slug, in.Layer.Features[a].ID)}
			}
			seen[a] = r.Slug
			t = append(t, in.Counts[a])
		}
		if len(t) > 0 {
			tables = append(tables, t)
		}
	}
	if len(tables) == 0 {
		return nil
	}
	d, err := measure.Decompose(tables)
	if err != nil || math.IsNaN(d.Total.H) {
		return nil
	}
	return &Mixing{TotalH: d.Total.H, BetweenH: d.Between.H, WithinH: d.HWithin, TotalM: d.Total.M, BetweenM: d.Between.M, WithinM: d.MWithin}
}
