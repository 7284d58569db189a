package crosswalk

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/table"
)

// rect is the lon/lat box [w, e] × [s, n] as an anticlockwise polygon.
func rect(w, s, e, n float64) orb.MultiPolygon {
	return orb.MultiPolygon{{{{w, s}, {e, s}, {e, n}, {w, n}, {w, s}}}}
}

func layer(ids []string, gs ...orb.MultiPolygon) *geo.Layer {
	l := &geo.Layer{Path: "test"}
	for i, g := range gs {
		l.Features = append(l.Features, geo.Feature{Index: i, ID: ids[i], Geometry: g})
	}
	return l
}

func sin(deg float64) float64 { return math.Sin(deg * math.Pi / 180) }

// TestAreaWeightsSquareSplit checks the area-weighting fallback on a
// square split in two. The source is the box 0°–10°E × 10°–20°N. The
// reference is the area of a zone of the sphere between latitudes a < b,
// 2πR²(sin b − sin a) (Archimedes' hat-box theorem; ../shared/CHECKS.md,
// "Sphere geometry"), so a lon/lat box's area is R²·Δλ·(sin n − sin s).
func TestAreaWeightsSquareSplit(t *testing.T) {
	mid := math.Asin((sin(10)+sin(20))/2) * 180 / math.Pi // equal-area midline
	cases := []struct {
		name   string
		halves []orb.MultiPolygon
		want   []float64
	}{
		// Split along the middle meridian: two halves of equal area on any measure.
		{"meridian", []orb.MultiPolygon{rect(0, 10, 5, 20), rect(5, 10, 10, 20)}, []float64{0.5, 0.5}},
		// Split along the parallel whose sine is the mean: equal halves on the
		// sphere (hat-box theorem), though the northern one is taller in degrees.
		{"equal-area parallel", []orb.MultiPolygon{rect(0, 10, 10, mid), rect(0, mid, 10, 20)}, []float64{0.5, 0.5}},
		// Split along 15°N: the southern half is larger on the sphere.
		{"15N", []orb.MultiPolygon{rect(0, 10, 10, 15), rect(0, 15, 10, 20)},
			[]float64{(sin(15) - sin(10)) / (sin(20) - sin(10)), (sin(20) - sin(15)) / (sin(20) - sin(10))}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			src := layer([]string{"S"}, rect(0, 10, 10, 20))
			dst := layer([]string{"A", "B"}, c.halves...)
			pairs := AreaWeights(src, dst)
			if len(pairs) != 2 {
				t.Fatalf("pairs %v; want 2", pairs)
			}
			for j, p := range pairs {
				if p.Source != "S" || p.Target != dst.Features[j].ID || math.Abs(p.Weight-c.want[j]) > 1e-12 {
					t.Errorf("pair %d = %+v; want S → %s weight %.15f", j, p, dst.Features[j].ID, c.want[j])
				}
			}
			// Square metres: R²·Δλ·(sin n − sin s), Δλ in radians (hat-box).
			want := earthRadius * earthRadius * (10 * math.Pi / 180) * (sin(20) - sin(10))
			if a := Area(src.Features[0].Geometry); math.Abs(a-want) > 1e-9*want {
				t.Errorf("area %.1f m²; want %.1f", a, want)
			}
		})
	}
}

// TestOverlapCases checks overlap areas against boxes whose shared part is
// known by the hat-box formula: partial overlap, containment, a hole, a
// shared edge with the interiors on either side (no area), disjoint boxes,
// and the same box given clockwise.
func TestOverlapCases(t *testing.T) {
	box := func(w, s, e, n float64) float64 {
		return earthRadius * earthRadius * ((e - w) * math.Pi / 180) * (sin(n) - sin(s))
	}
	holed := orb.MultiPolygon{{rect(0, 0, 4, 4)[0][0], {{1, 1}, {1, 3}, {3, 3}, {3, 1}, {1, 1}}}}
	cw := orb.MultiPolygon{{{{0, 0}, {0, 2}, {2, 2}, {2, 0}, {0, 0}}}}
	cases := []struct {
		name string
		a, b orb.MultiPolygon
		want float64
	}{
		{"partial", rect(0, 0, 2, 2), rect(1, 1, 3, 3), box(1, 1, 2, 2)},
		{"inside", rect(0, 0, 4, 4), rect(1, 1, 2, 2), box(1, 1, 2, 2)},
		{"same", rect(0, 0, 2, 2), rect(0, 0, 2, 2), box(0, 0, 2, 2)},
		{"clockwise", cw, rect(0, 0, 2, 2), box(0, 0, 2, 2)},
		{"edge only", rect(0, 0, 2, 2), rect(2, 0, 4, 2), 0},
		{"disjoint", rect(0, 0, 1, 1), rect(5, 5, 6, 6), 0},
		{"hole", holed, rect(0, 0, 2, 4), box(0, 0, 1, 4) + box(1, 0, 2, 1) + box(1, 3, 2, 4)},
		{"shares three edges", rect(0, 0, 2, 2), rect(0, 0, 2, 1), box(0, 0, 2, 1)},
	}
	for _, c := range cases {
		for _, swap := range []bool{false, true} {
			a, b := c.a, c.b
			if swap {
				a, b = b, a
			}
			if got := Overlap(a, b); math.Abs(got-c.want) > 1e-9*max(1, c.want) {
				t.Errorf("%s (swapped %v): overlap %.3f m²; want %.3f", c.name, swap, got, c.want)
			}
		}
	}
}

// TestAreaWeightsPartition: the targets tile the source exactly (a jittered
// grid with shared vertices), so each source's weights sum to 1; and
// summing a target's overlaps over a tiling of sources gives its area.
// Both follow from additivity of area (a measure), no outside source.
func TestAreaWeightsPartition(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	const n = 6
	var vert [n + 1][n + 1]orb.Point
	for j := 0; j <= n; j++ {
		for i := 0; i <= n; i++ {
			p := orb.Point{float64(i) * 0.01, 40 + float64(j)*0.01}
			if i > 0 && i < n && j > 0 && j < n {
				p[0] += (rng.Float64() - 0.5) * 0.006
				p[1] += (rng.Float64() - 0.5) * 0.006
			}
			vert[j][i] = p
		}
	}
	var gs []orb.MultiPolygon
	var ids []string
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			gs = append(gs, orb.MultiPolygon{{{vert[j][i], vert[j][i+1], vert[j+1][i+1], vert[j+1][i], vert[j][i]}}})
			ids = append(ids, string(rune('a'+i))+string(rune('0'+j)))
		}
	}
	dst := layer(ids, gs...)
	// Sources: a 3×3 grid of plain boxes over the same square, whose
	// edges cross the jittered ones.
	var sg []orb.MultiPolygon
	var sids []string
	for j := 0; j < 3; j++ {
		for i := 0; i < 3; i++ {
			sg = append(sg, rect(float64(i)*0.02, 40+float64(j)*0.02, float64(i+1)*0.02, 40+float64(j+1)*0.02))
			sids = append(sids, "s"+string(rune('0'+3*j+i)))
		}
	}
	src := layer(sids, sg...)
	pairs := AreaWeights(src, dst)
	sum := map[string]float64{}
	got := map[string]float64{}
	for _, p := range pairs {
		sum[p.Source] += p.Weight
		for i, f := range src.Features {
			if f.ID == p.Source {
				got[p.Target] += p.Weight * Area(sg[i])
			}
		}
	}
	for _, id := range sids {
		if math.Abs(sum[id]-1) > 1e-9 {
			t.Errorf("source %s: weights sum to %.12f; want 1", id, sum[id])
		}
	}
	for j, id := range ids {
		if a := Area(gs[j]); math.Abs(got[id]-a) > 1e-7*a {
			t.Errorf("target %s: overlaps sum to %.3f m²; want its area %.3f", id, got[id], a)
		}
	}
}

// TestApplySplitMerge: invented areas. Old area A (1,000 people) split
// into new A1 (60%) and A2 (40%); old B (300) and C (200) merged into new
// BC; D kept its id; E (50 people) is not in the crosswalk (lost); F (20)
// goes half to BC and half to a target id not on the map (lost); G's
// weights are rounded thirds (0.333 ×3, normalised).
func TestApplySplitMerge(t *testing.T) {
	sources := []string{"A", "B", "C", "D", "E", "F", "G"}
	counts := [][]float64{{600, 400}, {300, 0}, {100, 100}, {70, 7}, {50, 0}, {10, 10}, {90, 0}}
	targets := []string{"A1", "A2", "BC", "D", "G1", "G2", "G3"}
	pairs := []Pair{
		{"A", "A1", 0.6}, {"A", "A2", 0.4},
		{"B", "BC", 1}, {"C", "BC", 1},
		{"D", "D", 1},
		{"F", "BC", 0.5}, {"F", "ZZ", 0.5},
		{"G", "G1", 0.333}, {"G", "G2", 0.333}, {"G", "G3", 0.333},
	}
	out, rep, err := Apply(sources, counts, targets, pairs)
	if err != nil {
		t.Fatal(err)
	}
	want := [][]float64{{360, 240}, {240, 160}, {405, 105}, {70, 7}, {30, 0}, {30, 0}, {30, 0}}
	for j := range want {
		for k := range want[j] {
			if math.Abs(out[j][k]-want[j][k]) > 1e-9 {
				t.Errorf("%s category %d: %v people; want %v", targets[j], k, out[j][k], want[j][k])
			}
		}
	}
	if rep.Before != 1737 || math.Abs(rep.After-1677) > 1e-9 || math.Abs(rep.Lost-60) > 1e-9 {
		t.Errorf("before %v after %v lost %v; want 1737, 1677, 60", rep.Before, rep.After, rep.Lost)
	}
	if math.Abs(rep.Before-(rep.After+rep.Lost)) > 1e-9 {
		t.Errorf("before %v ≠ after %v + lost %v", rep.Before, rep.After, rep.Lost)
	}
	for k := range rep.BeforeBy {
		if math.Abs(rep.BeforeBy[k]-rep.AfterBy[k]-rep.LostBy[k]) > 1e-9 {
			t.Errorf("category %d: before %v ≠ after %v + lost %v", k, rep.BeforeBy[k], rep.AfterBy[k], rep.LostBy[k])
		}
	}
	if strings.Join(rep.Unmatched, ",") != "E" || rep.PeopleUnmatched != 50 {
		t.Errorf("unmatched %v (%v people); want E (50)", rep.Unmatched, rep.PeopleUnmatched)
	}
	if strings.Join(rep.UnknownTargets, ",") != "ZZ" || rep.PeopleToUnknown != 10 {
		t.Errorf("unknown targets %v (%v people); want ZZ (10)", rep.UnknownTargets, rep.PeopleToUnknown)
	}
	if strings.Join(rep.Normalised, ",") != "G" || math.Abs(rep.MaxDeviation-0.001) > 1e-12 {
		t.Errorf("normalised %v (max %v); want G (0.001)", rep.Normalised, rep.MaxDeviation)
	}
	// Moved: everyone but D's 77 and the lost 60 changed area id.
	if math.Abs(rep.Kept-77) > 1e-9 || math.Abs(rep.Moved-1600) > 1e-9 {
		t.Errorf("kept %v moved %v; want 77 and 1600", rep.Kept, rep.Moved)
	}
	if s := rep.String(); !strings.Contains(s, "1 source areas' weights did not sum to 1") || !strings.Contains(s, "ZZ") {
		t.Errorf("report text lacks the normalised or unknown lines:\n%s", s)
	}
}

func TestApplyRefuses(t *testing.T) {
	cases := []struct {
		name    string
		sources []string
		targets []string
		pairs   []Pair
		want    string
	}{
		{"negative", []string{"A"}, []string{"B"}, []Pair{{"A", "B", -1}}, "weight -1"},
		{"dup target", []string{"A"}, []string{"B", "B"}, nil, `target id "B" is listed twice`},
		{"dup source", []string{"A", "A"}, []string{"B"}, nil, `source id "A" is listed twice`},
	}
	for _, c := range cases {
		counts := make([][]float64, len(c.sources))
		for i := range counts {
			counts[i] = []float64{1}
		}
		_, _, err := Apply(c.sources, counts, c.targets, c.pairs)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v; want one with %q", c.name, err, c.want)
		}
	}
}

func TestRead(t *testing.T) {
	dir := t.TempDir()
	cases := []struct {
		name, text, want string
		pairs            []Pair
	}{
		{"ok", "old,new,w\nA,A1,0.6\nA,A2,0.4\n B ,BC,1\n", "", []Pair{{"A", "A1", 0.6}, {"A", "A2", 0.4}, {"B", "BC", 1}}},
		{"bad weight", "old,new,w\nA,A1,x\n", "line 2", nil},
		{"negative", "old,new,w\nA,A1,-0.5\n", "from 0 up", nil},
		{"no target column", "old,neu,w\nA,A1,1\n", `column "new"`, nil},
		{"twice", "old,new,w\nA,A1,0.5\nA,A1,0.5\n", "also on line 2", nil},
		{"empty target", "old,new,w\nA,,1\n", "empty target id", nil},
	}
	for _, c := range cases {
		p := filepath.Join(dir, c.name+".csv")
		if err := os.WriteFile(p, []byte(c.text), 0o644); err != nil {
			t.Fatal(err)
		}
		pairs, err := Read(p, Options{Source: "old", Target: "new", Weight: "w", Table: table.Options{Trim: true}})
		if c.want != "" {
			if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), p) {
				t.Errorf("%s: error %v; want one naming the file and %q", c.name, err, c.want)
			}
			continue
		}
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if len(pairs) != len(c.pairs) {
			t.Fatalf("%s: %v; want %v", c.name, pairs, c.pairs)
		}
		for i := range pairs {
			if pairs[i] != c.pairs[i] {
				t.Errorf("%s: pair %d = %v; want %v", c.name, i, pairs[i], c.pairs[i])
			}
		}
	}
}
