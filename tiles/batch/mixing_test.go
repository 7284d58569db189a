package batch

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/stipple-maps/stipple/geo/measure"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// TestBatchMixingAddsUp: the eight districts of the invented demo city, drawn as
// a batch, carry each extent's H and M (those of geo/measure on the
// extent's areas), and summary.json splits the whole city's H and M into
// the parts between and within districts, which add up to the total
// (Reardon & Firebaugh 2002: M is additive over a partition; H·E likewise,
// see geo/measure's doc) to 1e-12.
func TestBatchMixingAddsUp(t *testing.T) {
	p, err := filepath.Abs("../../examples/batch/districts.toml")
	if err != nil {
		t.Fatal(err)
	}
	f, err := Read(p)
	if err != nil {
		t.Skipf("examples/batch: %v", err)
	}
	f.Out = t.TempDir()
	// The eight districts partition the city; the file's later extents
	// (a group of districts, a box, a list) overlap them.
	f.Extents = f.Extents[:8]
	for _, e := range f.Extents {
		e.Print = nil
		e.MinZoom, e.MaxZoom = 11, 12
	}
	rep, err := Run(context.Background(), f, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Mixing == nil || rep.Mixing.Note != "" {
		t.Fatalf("no decomposition: %+v", rep.Mixing)
	}
	x := rep.Mixing
	if math.Abs(x.BetweenM+x.WithinM-x.TotalM) > 1e-12 || math.Abs(x.BetweenH+x.WithinH-x.TotalH) > 1e-12 {
		t.Errorf("does not add up: %s", x.Identity())
	}
	in, err := mapjob.Load(f.Map, nil)
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range rep.Results {
		pk, err := Pick(f.Extents[i], in.Layer)
		if err != nil {
			t.Fatal(err)
		}
		var counts [][]float64
		for _, a := range pk.Features {
			counts = append(counts, in.Counts[a])
		}
		want, err := measure.Measure(counts)
		if err != nil {
			t.Fatal(err)
		}
		if r.H == nil || *r.H != want.H || *r.M != want.M {
			t.Errorf("%s: H %v M %v; want %v %v", r.Slug, r.H, r.M, want.H, want.M)
		}
		if len(r.MostDiverse) == 0 || len(r.MostDiverse) > mapjob.MostDiverse {
			t.Errorf("%s: most diverse areas %v", r.Slug, r.MostDiverse)
		}
	}
	b, err := os.ReadFile(filepath.Join(f.Out, SummaryJSON))
	if err != nil {
		t.Fatal(err)
	}
	var sum Summary
	if err := json.Unmarshal(b, &sum); err != nil || sum.Mixing == nil || sum.Mixing.TotalH != x.TotalH {
		t.Errorf("summary.json mixing %+v (%v); want %+v", sum.Mixing, err, x)
	}
	t.Log(x.Identity())
}
