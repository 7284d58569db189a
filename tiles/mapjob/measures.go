package mapjob

import (
	"bytes"
	"cmp"
	"context"
	"math"
	"slices"

	"github.com/stipple-maps/stipple/geo/measure"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// AreaTableFile is the per-area table of composition and diversity a map
// writes beside its tiles.
const AreaTableFile = "areas.csv"

// countsOf is the areas' counts (all areas when idx is nil).
func countsOf(in *Input, idx []int) (counts [][]float64, rows []int) {
	if idx == nil {
		rows = make([]int, len(in.Counts))
		for i := range rows {
			rows[i] = i
		}
	} else {
		rows = idx
	}
	counts = make([][]float64, len(rows))
	for r, i := range rows {
		counts[r] = in.Counts[i]
	}
	return counts, rows
}

// AreaTable is the per-area CSV (RFC 4180) of the areas idx (all when
// nil): id, people, each group's share, the entropy diversity score and
// its normalised form (geo/measure.Areas), the largest group and its
// share. Text cells are neutralised against spreadsheet formulas.
func AreaTable(in *Input, m *mapfile.Map, idx []int) ([]byte, error) {
	counts, rows := countsOf(in, idx)
	areas, err := measure.Areas(counts)
	if err != nil {
		return nil, err
	}
	var b bytes.Buffer
	head := []tiles.CSVCell{tiles.CSVText("id"), tiles.CSVText("people")}
	for _, c := range m.Categories {
		head = append(head, tiles.CSVText("share_"+c.Key))
	}
	head = append(head, tiles.CSVText("entropy"), tiles.CSVText("entropy_normalised"), tiles.CSVText("largest_group"), tiles.CSVText("largest_share"))
	tiles.WriteCSVRow(&b, head)
	row := make([]tiles.CSVCell, 0, len(head))
	for r, a := range areas {
		row = append(row[:0], tiles.CSVText(in.Layer.Features[rows[r]].ID), tiles.CSVNumber(a.People))
		for _, s := range a.Shares {
			row = append(row, tiles.CSVNumber(s))
		}
		row = append(row, tiles.CSVNumber(a.Entropy), tiles.CSVNumber(a.Normalized))
		if a.Largest >= 0 {
			row = append(row, tiles.CSVText(m.Categories[a.Largest].Key), tiles.CSVNumber(a.LargestShare))
		} else {
			row = append(row, tiles.CSVText(""), tiles.CSVText("")) // no people, no largest group
		}
		tiles.WriteCSVRow(&b, row)
	}
	return b.Bytes(), nil
}

// RenderDraws is the number of seeded draws of the counts a render makes
// for the measures' intervals when the map gives margins of error
// (stipple measure makes more).
const RenderDraws = 200

// MostDiverse is how many areas Measures names as the most diverse.
const MostDiverse = 5

// Measures are the mixing measures of the areas idx (all when nil) for
// map.json: entropy, Theil's H, the mutual information index M, and the
// most diverse areas (geo/measure). NaN values (undefined, e.g. H with one
// group) are left out as nil.
func Measures(ctx context.Context, in *Input, m *mapfile.Map, idx []int) (*tiles.Measures, error) {
	counts, rows := countsOf(in, idx)
	x, err := measure.Measure(counts)
	if err != nil {
		return nil, err
	}
	areas, err := measure.Areas(counts)
	if err != nil {
		return nil, err
	}
	num := func(v float64) *float64 {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil
		}
		return &v
	}
	out := &tiles.Measures{Entropy: num(x.Entropy), H: num(x.H), M: num(x.M), AreaTable: AreaTableFile, MostDiverse: []tiles.AreaDiversity{}}
	if in.Margins != nil {
		moe := make([][]float64, len(rows))
		for r, i := range rows {
			moe[r] = in.Margins[i]
		}
		iv, err := measure.Simulate(ctx, counts, moe, measure.Options{Draws: RenderDraws, Seed: m.Seed})
		if err != nil {
			return nil, err
		}
		out.Intervals = &tiles.MeasureIntervals{Level: iv.Level, Draws: iv.Draws, Seed: iv.Seed,
			H: [2]*float64{num(iv.H.Lo), num(iv.H.Hi)}, M: [2]*float64{num(iv.M.Lo), num(iv.M.Hi)}}
	}
	order := make([]int, 0, len(areas))
	for r, a := range areas {
		if a.People > 0 {
			order = append(order, r)
		}
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(areas[b].Entropy, areas[a].Entropy) })
	for _, r := range order[:min(MostDiverse, len(order))] {
		a := areas[r]
		out.MostDiverse = append(out.MostDiverse, tiles.AreaDiversity{ID: in.Layer.Features[rows[r]].ID, People: a.People,
			Entropy: a.Entropy, Normalized: a.Normalized, Largest: m.Categories[a.Largest].Key, LargestShare: a.LargestShare})
	}
	return out, nil
}

// PutMeasures computes the areas' measures into md and writes the
// per-area table (AreaTableFile) into out; call it before PutFurniture.
func PutMeasures(ctx context.Context, out sink.Sink, in *Input, m *mapfile.Map, idx []int, md *tiles.Metadata) error {
	ms, err := Measures(ctx, in, m, idx)
	if err != nil {
		return err
	}
	table, err := AreaTable(in, m, idx)
	if err != nil {
		return err
	}
	md.Measures = ms
	return sink.PutFile(ctx, out, AreaTableFile, table)
}
