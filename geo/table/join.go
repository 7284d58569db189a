package table

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/stipple-maps/stipple/geo"
)

// Keys is a list of area keys.
type Keys []string

// Head lists the first n keys, quoted and comma-separated, followed by
// "and N more" when the list is longer; "none" when it is empty.
func (k Keys) Head(n int) string {
	if len(k) == 0 {
		return "none"
	}
	m := min(n, len(k))
	parts := make([]string, m)
	for i := range m {
		parts[i] = strconv.Quote(k[i])
	}
	s := strings.Join(parts, ", ")
	if len(k) > m {
		s += fmt.Sprintf(" and %d more", len(k)-m)
	}
	return s
}

// Report says how a table matched a layer.
type Report struct {
	// Table is the table's path; KeyColumn its key column; KeyField the
	// feature field that was matched against it.
	Table, KeyColumn, KeyField string
	// Features and Rows are the numbers of features and table records.
	Features, Rows int
	// Columns are the joined columns, in the order given.
	Columns []string
	// Matched is the number of features that found their row.
	Matched int
	// FeaturesWithoutRow holds the normalised keys of the features that
	// found no row, in feature order.
	FeaturesWithoutRow Keys
	// RowsWithoutFeature holds the normalised keys of the rows that no
	// feature matched, in file order.
	RowsWithoutFeature Keys
	// PeopleInUnmatchedRows sums each joined column over the rows without
	// a feature; PeopleInUnmatchedTotal sums those sums. These people are
	// not on the map.
	PeopleInUnmatchedRows  map[string]float64
	PeopleInUnmatchedTotal float64
	// ZeroedCells counts, per joined column, the placeholder cells of the
	// whole table read as 0 (Options.NullAsZero).
	ZeroedCells map[string]int
	// Hints name map-file keys under which many unmatched keys would
	// match, one line each: "12 keys would match with pad_zeros = 5".
	Hints []string
}

// String gives the report for people: counts, the first ten keys on each
// side, and the people in rows without a feature.
func (r *Report) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s: column %q joined to feature field %q: %d of %d features matched; %d of %d rows used\n",
		r.Table, r.KeyColumn, r.KeyField, r.Matched, r.Features, r.Rows-len(r.RowsWithoutFeature), r.Rows)
	fmt.Fprintf(&b, "features without a row (%d): %s\n", len(r.FeaturesWithoutRow), r.FeaturesWithoutRow.Head(10))
	fmt.Fprintf(&b, "rows without a feature (%d): %s\n", len(r.RowsWithoutFeature), r.RowsWithoutFeature.Head(10))
	fmt.Fprintf(&b, "people in rows without a feature: %s", formatCount(r.PeopleInUnmatchedTotal))
	if len(r.Columns) > 0 {
		parts := make([]string, len(r.Columns))
		for i, c := range r.Columns {
			parts[i] = c + " " + formatCount(r.PeopleInUnmatchedRows[c])
		}
		fmt.Fprintf(&b, " (%s)", strings.Join(parts, ", "))
	}
	b.WriteString("\nplaceholder cells read as 0:")
	any := false
	for _, c := range r.Columns {
		if n := r.ZeroedCells[c]; n > 0 {
			fmt.Fprintf(&b, " %s %d", c, n)
			any = true
		}
	}
	if !any {
		b.WriteString(" none")
	}
	b.WriteString("\n")
	for _, h := range r.Hints {
		b.WriteString("hint: " + h + "\n")
	}
	return b.String()
}

// formatCount writes v with its whole part grouped in thousands:
// 308745538 → "308,745,538", 12.5 → "12.5".
func formatCount(v float64) string {
	s := strconv.FormatFloat(v, 'f', -1, 64)
	whole, frac, _ := strings.Cut(s, ".")
	var b strings.Builder
	for i, c := range whole {
		if i > 0 && (len(whole)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	if frac != "" {
		b.WriteString("." + frac)
	}
	return b.String()
}

// keyText formats a feature's key value as text: strings as they are,
// integers in decimal, whole floats without decimals ("1001", not "1001.0"
// or "1.001e+03").
func keyText(v any) (string, error) {
	switch x := v.(type) {
	case string:
		return x, nil
	case int64:
		return strconv.FormatInt(x, 10), nil
	case int:
		return strconv.Itoa(x), nil
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return "", fmt.Errorf("key value %v is not a finite number", x)
		}
		return strconv.FormatFloat(x, 'f', -1, 64), nil
	case nil:
		return "", fmt.Errorf("no key value (null)")
	}
	return "", fmt.Errorf("key value %v (%T) cannot be used as a key", v, v)
}

func featureErr(layer *geo.Layer, f *geo.Feature, field, format string, args ...any) error {
	return fmt.Errorf("table: %w", &geo.Error{Path: layer.Path, Index: f.Index, ID: f.ID, Field: field, Message: fmt.Sprintf(format, args...)})
}

// Join writes the named columns of t into the features of layer, matching
// each feature's Props[geoKeyField] (as text, normalised with
// t.Options.Normalize) to the table's keys. A matched feature gets each
// column's value as a float64 in Props; an unmatched one gets nil there, so
// no older value of the same name survives. The columns are appended to
// layer.Fields when missing. Every cell of the joined columns must parse
// (see Number), in unmatched rows too, so their people can be reported.
// Two features with the same normalised key are an error. Nothing is
// changed when Join returns an error.
func Join(layer *geo.Layer, geoKeyField string, t *Table, columns []string) (*Report, error) {
	values := make([][]float64, len(columns))
	rep := &Report{
		Table: t.Path, KeyColumn: t.Options.Key, KeyField: geoKeyField,
		Features: len(layer.Features), Rows: len(t.Records),
		Columns:               append([]string(nil), columns...),
		PeopleInUnmatchedRows: make(map[string]float64, len(columns)),
		ZeroedCells:           make(map[string]int, len(columns)),
	}
	var bad CellErrors
	for i, c := range columns {
		col, err := t.column(c)
		if err != nil {
			return nil, err
		}
		for _, d := range columns[:i] {
			if d == c {
				return nil, &Error{Path: t.Path, Column: c, Message: "column requested twice"}
			}
		}
		values[i], rep.ZeroedCells[c] = t.parseColumn(col, &bad)
	}
	if err := bad.err(); err != nil {
		return nil, err
	}
	if len(layer.Fields) > 0 && !contains(layer.Fields, geoKeyField) {
		return nil, fmt.Errorf("table: %w", &geo.Error{Path: layer.Path, Index: -1, Field: geoKeyField,
			Message: fmt.Sprintf("no such field to join on (fields: %s)", strings.Join(layer.Fields, ", "))})
	}

	// First pass: every feature's row (-1 = none), checking keys.
	rows := make([]int, len(layer.Features))
	byKey := make(map[string]int, len(layer.Features))
	for i := range layer.Features {
		f := &layer.Features[i]
		v, ok := f.Props[geoKeyField]
		if !ok {
			return nil, featureErr(layer, f, geoKeyField, "no key value (field missing)")
		}
		s, err := keyText(v)
		if err != nil {
			return nil, featureErr(layer, f, geoKeyField, "%v", err)
		}
		key := t.Options.Normalize(s)
		if j, dup := byKey[key]; dup {
			g := &layer.Features[j]
			return nil, featureErr(layer, f, geoKeyField, "key %q is also the key of feature %d (id %q): each row may feed one feature only", key, g.Index, g.ID)
		}
		byKey[key] = i
		rows[i] = -1
		if r, ok := t.index[key]; ok {
			rows[i] = r
		} else {
			rep.FeaturesWithoutRow = append(rep.FeaturesWithoutRow, key)
		}
	}

	// Second pass: write the values.
	used := make([]bool, len(t.Records))
	for i := range layer.Features {
		f := &layer.Features[i]
		if f.Props == nil {
			f.Props = make(map[string]any, len(columns))
		}
		r := rows[i]
		if r >= 0 {
			used[r] = true
			rep.Matched++
		}
		for k, c := range columns {
			if r >= 0 {
				f.Props[c] = values[k][r]
			} else {
				f.Props[c] = nil
			}
		}
	}
	for _, c := range columns {
		if !contains(layer.Fields, c) {
			layer.Fields = append(layer.Fields, c)
		}
	}
	for r, u := range used {
		if u {
			continue
		}
		rep.RowsWithoutFeature = append(rep.RowsWithoutFeature, t.Keys[r])
		for k, c := range columns {
			rep.PeopleInUnmatchedRows[c] += values[k][r]
			rep.PeopleInUnmatchedTotal += values[k][r]
		}
	}
	rep.Hints = hints(t.Options, rep.FeaturesWithoutRow, rep.RowsWithoutFeature)
	return rep, nil
}

// hints tries the key normalisations the table does not use yet on the
// keys left unmatched on both sides, and names each that would match many
// of them: at least half of the smaller side, and at least one key. The
// keys given are already normalised with opt, so each try normalises them
// once more with one option added.
func hints(opt Options, features, rows Keys) []string {
	if len(features) == 0 || len(rows) == 0 {
		return nil
	}
	matches := func(o Options) int {
		set := make(map[string]bool, len(rows))
		for _, k := range rows {
			set[o.Normalize(k)] = true
		}
		n := 0
		for _, k := range features {
			if set[o.Normalize(k)] {
				n++
			}
		}
		return n
	}
	enough := max(1, (min(len(features), len(rows))+1)/2)
	var out []string
	if !opt.Trim {
		if n := matches(Options{Trim: true}); n >= enough {
			out = append(out, fmt.Sprintf("%s would match with trim = true", plural(n, "key")))
		}
	}
	if opt.PadZeros == 0 {
		// The widths worth trying are the lengths of the digit keys.
		widths := map[int]bool{}
		for _, ks := range []Keys{features, rows} {
			for _, k := range ks {
				if isDigits(k) && len(k) <= 32 {
					widths[len(k)] = true
				}
			}
		}
		best, bestN := 0, 0
		for w := range widths {
			if n := matches(Options{PadZeros: w}); n > bestN || n == bestN && n > 0 && w < best {
				best, bestN = w, n
			}
		}
		if bestN >= enough {
			out = append(out, fmt.Sprintf("%s would match with pad_zeros = %d", plural(bestN, "key"), best))
		}
	}
	return out
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// plural writes "1 key", "2 keys".
func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}
