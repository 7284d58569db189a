package crosswalk

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strings"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/table"
)

// Pair is one row of a crosswalk: Weight is the share of the source
// area's people that goes to the target area.
type Pair struct {
	Source, Target string
	Weight         float64
}

// Tolerance is how far a source's weights may sum from 1 before the
// report names it (its weights are normalised either way).
const Tolerance = 1e-6

// Options name a crosswalk file's columns.
type Options struct {
	// Source, Target and Weight are the column names.
	Source, Target, Weight string
	// Table holds the reading options of the CSV: delimiter, rows to skip
	// under the header, and the key normalisation; its Key and NullAsZero
	// are not used.
	Table table.Options
}

// Read reads a crosswalk CSV file with a header row: one row per (source,
// target) pair with a weight. Keys are normalised by opt.Table's rules
// (trim, prefix, keep last, pad zeros), the same as a count table's; its
// Delimiter and SkipRows apply too. A missing column, a weight that is not
// a number ≥ 0 (geo.ParseDecimal's syntax), an empty id or a pair listed
// twice is an error naming the file, the line and the column.
func Read(path string, opt Options) ([]Pair, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("crosswalk: %w", err)
	}
	defer f.Close()
	fail := func(line int, col, format string, args ...any) error {
		return &table.Error{Path: path, Line: line, Column: col, Message: fmt.Sprintf(format, args...)}
	}
	br := bufio.NewReader(f)
	if b, err := br.Peek(3); err == nil && bytes.Equal(b, []byte{0xEF, 0xBB, 0xBF}) {
		br.Discard(3) // UTF-8 byte order mark
	}
	cr := csv.NewReader(br)
	if d := opt.Table.Delimiter; d != 0 {
		cr.Comma = d
	}
	header, err := cr.Read()
	if err != nil {
		return nil, fail(1, "", "reading the header row: %v", err)
	}
	col := map[string]int{}
	for i, h := range header {
		col[strings.TrimSpace(h)] = i
	}
	var idx [3]int
	for n, c := range []struct{ name, role string }{{opt.Source, "source (older) area"}, {opt.Target, "target (newer) area"}, {opt.Weight, "weight"}} {
		i, ok := col[c.name]
		if !ok {
			return nil, fail(1, c.name, "no such column (columns: %s); it holds the %s", strings.Join(header, ", "), c.role)
		}
		idx[n] = i
	}
	seen := map[[2]string]int{}
	var pairs []Pair
	for skipped := 0; ; {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fail(0, "", "%v", err)
		}
		line, _ := cr.FieldPos(0)
		if skipped < opt.Table.SkipRows {
			skipped++
			continue
		}
		src, dst := opt.Table.Normalize(rec[idx[0]]), opt.Table.Normalize(rec[idx[1]])
		if src == "" {
			return nil, fail(line, opt.Source, "empty source id")
		}
		if dst == "" {
			return nil, fail(line, opt.Target, "empty target id")
		}
		w, err := geo.ParseDecimal(strings.TrimSpace(rec[idx[2]]))
		if err != nil || !(w >= 0) || math.IsInf(w, 0) {
			return nil, fail(line, opt.Weight, "weight %q; want a number from 0 up", rec[idx[2]])
		}
		k := [2]string{src, dst}
		if prev, dup := seen[k]; dup {
			return nil, fail(line, opt.Target, "pair %s → %s is also on line %d; list each pair once", src, dst, prev)
		}
		seen[k] = line
		pairs = append(pairs, Pair{Source: src, Target: dst, Weight: w})
	}
	return pairs, nil
}

// Report is what Apply did, in people (all categories together unless
// the field says per category).
type Report struct {
	// Before is the people of the sources, After of the targets, Lost the
	// people put nowhere: Before = After + Lost, up to rounding.
	Before, After, Lost float64
	// BeforeBy, AfterBy and LostBy are the same per category.
	BeforeBy, AfterBy, LostBy []float64
	// Moved is the people put into a target whose id differs from their
	// source's (areas split, merged or renamed); Kept is the people whose
	// area kept its id.
	Moved, Kept float64
	// Unmatched lists the sources with people that the crosswalk does not
	// list, or lists with weights that are all zero, sorted;
	// PeopleUnmatched is their people.
	Unmatched       []string
	PeopleUnmatched float64
	// UnknownTargets lists the target ids of the crosswalk that are not
	// among the targets, sorted; PeopleToUnknown is the people sent there.
	UnknownTargets  []string
	PeopleToUnknown float64
	// Normalised lists the sources whose weights summed to more than
	// Tolerance away from 1 (they were divided by their sum), sorted;
	// MaxDeviation is the largest |sum − 1| among them.
	Normalised   []string
	MaxDeviation float64
	// Pairs is the number of crosswalk rows used.
	Pairs int
}

// String is the report in a few lines, for a run's log.
func (r *Report) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "crosswalk: %s people before, %s after on the new areas, %s lost (%d pairs)\n", people(r.Before), people(r.After), people(r.Lost), r.Pairs)
	fmt.Fprintf(&b, "crosswalk: %s people moved to another area id, %s kept their area id\n", people(r.Moved), people(r.Kept))
	if len(r.Unmatched) > 0 {
		fmt.Fprintf(&b, "crosswalk: %s people in %d source areas the crosswalk does not list (lost): %s\n", people(r.PeopleUnmatched), len(r.Unmatched), head(r.Unmatched))
	}
	if len(r.UnknownTargets) > 0 {
		fmt.Fprintf(&b, "crosswalk: %s people sent to %d target ids that are not on the map (lost): %s\n", people(r.PeopleToUnknown), len(r.UnknownTargets), head(r.UnknownTargets))
	}
	if len(r.Normalised) > 0 {
		fmt.Fprintf(&b, "crosswalk: %d source areas' weights did not sum to 1 (largest difference %.3g); each was divided by its sum: %s\n", len(r.Normalised), r.MaxDeviation, head(r.Normalised))
	}
	return b.String()
}

func people(v float64) string { return fmt.Sprintf("%.1f", v) }

func head(ids []string) string {
	if len(ids) <= 5 {
		return strings.Join(ids, ", ")
	}
	return strings.Join(ids[:5], ", ") + fmt.Sprintf(" and %d more", len(ids)-5)
}

// Apply carries counts from sources onto targets: counts[i][k] is the
// people of category k in the source with id sources[i]; the result's row
// j holds the people of targets[j]. Each source's people go to its pairs'
// targets in proportion to the weights, normalised per source (see the
// package documentation for the rule and for what is lost). Pairs listing
// the same (source, target) twice are summed. The result does not depend
// on the order of the pairs beyond floating-point rounding, which is fixed
// for a fixed input. Ids must be unique on each side.
func Apply(sources []string, counts [][]float64, targets []string, pairs []Pair) ([][]float64, *Report, error) {
	if len(sources) != len(counts) {
		return nil, nil, fmt.Errorf("crosswalk: %d source ids but %d rows of counts", len(sources), len(counts))
	}
	cats := 0
	for _, c := range counts {
		cats = max(cats, len(c))
	}
	tIndex := make(map[string]int, len(targets))
	for j, id := range targets {
		if _, dup := tIndex[id]; dup {
			return nil, nil, fmt.Errorf("crosswalk: target id %q is listed twice", id)
		}
		tIndex[id] = j
	}
	sIndex := make(map[string]int, len(sources))
	for i, id := range sources {
		if _, dup := sIndex[id]; dup {
			return nil, nil, fmt.Errorf("crosswalk: source id %q is listed twice", id)
		}
		sIndex[id] = i
	}
	for _, p := range pairs {
		if !(p.Weight >= 0) || math.IsInf(p.Weight, 0) {
			return nil, nil, fmt.Errorf("crosswalk: pair %s → %s: weight %v; want a number ≥ 0", p.Source, p.Target, p.Weight)
		}
	}
	sum := make(map[string]float64, len(sources))
	for _, p := range pairs {
		sum[p.Source] += p.Weight
	}
	rep := &Report{BeforeBy: make([]float64, cats), AfterBy: make([]float64, cats), LostBy: make([]float64, cats)}
	out := make([][]float64, len(targets))
	for j := range out {
		out[j] = make([]float64, cats)
	}
	total := func(i int) float64 {
		s := 0.0
		for _, v := range counts[i] {
			s += v
		}
		return s
	}
	for i, c := range counts {
		for k, v := range c {
			rep.BeforeBy[k] += v
		}
		if s := sum[sources[i]]; !(s > 0) && total(i) > 0 {
			rep.Unmatched = append(rep.Unmatched, sources[i])
			rep.PeopleUnmatched += total(i)
			for k, v := range c {
				rep.LostBy[k] += v
			}
		}
	}
	normalised := map[string]bool{}
	unknown := map[string]bool{}
	for _, p := range pairs {
		i, ok := sIndex[p.Source]
		if !ok || p.Weight == 0 {
			continue // a source not in this count: nothing to carry
		}
		rep.Pairs++
		s := sum[p.Source]
		if d := math.Abs(s - 1); d > Tolerance && !normalised[p.Source] {
			normalised[p.Source] = true
			rep.Normalised = append(rep.Normalised, p.Source)
			rep.MaxDeviation = max(rep.MaxDeviation, d)
		}
		w := p.Weight / s
		j, ok := tIndex[p.Target]
		if !ok {
			if !unknown[p.Target] {
				unknown[p.Target] = true
				rep.UnknownTargets = append(rep.UnknownTargets, p.Target)
			}
			for k, v := range counts[i] {
				rep.LostBy[k] += v * w
				rep.PeopleToUnknown += v * w
			}
			continue
		}
		for k, v := range counts[i] {
			out[j][k] += v * w
			if p.Source == p.Target {
				rep.Kept += v * w
			} else {
				rep.Moved += v * w
			}
		}
	}
	for _, row := range out {
		for k, v := range row {
			rep.AfterBy[k] += v
		}
	}
	for k := 0; k < cats; k++ {
		rep.Before += rep.BeforeBy[k]
		rep.After += rep.AfterBy[k]
		rep.Lost += rep.LostBy[k]
	}
	sort.Strings(rep.Unmatched)
	sort.Strings(rep.UnknownTargets)
	sort.Strings(rep.Normalised)
	return out, rep, nil
}
