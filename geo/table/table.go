package table

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/stipple-maps/stipple/geo"
)

// DefaultMaxRows caps the data rows read when Options.MaxRows is 0.
const DefaultMaxRows = 20_000_000

// Options controls Read and the key normalisation.
type Options struct {
	// Key is the name of the column that holds the area key.
	Key string
	// SkipRows is the number of description rows under the header to skip.
	SkipRows int
	// Trim removes white space around keys (see Normalize).
	Trim bool
	// StripPrefix is removed from the start of keys that carry it.
	StripPrefix string
	// KeepLast keeps only the last KeepLast characters of longer keys
	// (0 = the whole key).
	KeepLast int
	// PadZeros left-pads keys made of digits only to PadZeros digits with
	// zeros (0 = no padding), for a table whose program dropped leading
	// zeros ("1001" beside "01001").
	PadZeros int
	// NullAsZero counts placeholder cells ("", "-", "(X)", "NA", ...; see
	// IsPlaceholder) as 0 instead of failing.
	NullAsZero bool
	// Delimiter separates fields; 0 means ','.
	Delimiter rune
	// MaxRows caps the number of data rows (0 = DefaultMaxRows).
	MaxRows int
}

// Normalize applies the key normalisation of o, in this order: Trim (white
// space around the key), StripPrefix (once, when present), KeepLast (the
// last KeepLast characters, when the key is longer), PadZeros (zeros before
// a key of digits shorter than PadZeros). Join applies the same function to
// the table's keys and to the features' keys, so both sides are compared
// in one form; leading zeros are always kept.
func (o Options) Normalize(key string) string {
	if o.Trim {
		key = strings.TrimSpace(key)
	}
	if o.StripPrefix != "" {
		key = strings.TrimPrefix(key, o.StripPrefix)
	}
	if o.KeepLast > 0 && utf8.RuneCountInString(key) > o.KeepLast {
		r := []rune(key)
		key = string(r[len(r)-o.KeepLast:])
	}
	if o.PadZeros > len(key) && isDigits(key) {
		key = strings.Repeat("0", o.PadZeros-len(key)) + key
	}
	return key
}

// isDigits reports whether s is one or more ASCII digits.
func isDigits(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return s != ""
}

// Error is a problem at one place of a table file. Line is the 1-based line
// number in the file (0 when not about one line), Column the column name
// ("" when not about one column).
type Error struct {
	Path    string
	Line    int
	Column  string
	Message string
}

func (e *Error) Error() string {
	s := "table: " + e.Path
	if e.Line > 0 {
		s += fmt.Sprintf(": line %d", e.Line)
	}
	if e.Column != "" {
		s += fmt.Sprintf(": column %q", e.Column)
	}
	return s + ": " + e.Message
}

// Table is a CSV file of counts keyed by area.
type Table struct {
	// Path is the file the table was read from.
	Path string
	// Options are the options it was read with; Options.Normalize gives
	// the key form used by Index and Join.
	Options Options
	// Header holds the column names in file order.
	Header []string
	// Records holds the data rows (description rows skipped), each with
	// len(Header) cells as they appear in the file.
	Records [][]string
	// Lines holds the 1-based line number in the file where each record
	// starts.
	Lines []int
	// Keys holds each record's normalised key.
	Keys []string

	keyCol int
	cols   map[string]int
	index  map[string]int
}

// Read reads a CSV table with a header row. See the package documentation
// for the rules.
func Read(path string, opt Options) (*Table, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("table: %w", err)
	}
	defer f.Close()
	return read(f, path, opt)
}

func read(r io.Reader, path string, opt Options) (*Table, error) {
	fail := func(line int, col, format string, args ...any) error {
		return &Error{Path: path, Line: line, Column: col, Message: fmt.Sprintf(format, args...)}
	}
	if opt.Key == "" {
		return nil, fail(0, "", "no key column given")
	}
	if opt.SkipRows < 0 || opt.KeepLast < 0 || opt.MaxRows < 0 || opt.PadZeros < 0 {
		return nil, fail(0, "", "SkipRows, KeepLast, PadZeros and MaxRows must not be negative")
	}
	if opt.MaxRows == 0 {
		opt.MaxRows = DefaultMaxRows
	}
	if opt.Delimiter == 0 {
		opt.Delimiter = ','
	}
	if opt.Delimiter == '"' || opt.Delimiter == '\r' || opt.Delimiter == '\n' || opt.Delimiter == utf8.RuneError || !utf8.ValidRune(opt.Delimiter) {
		return nil, fail(0, "", "invalid delimiter %q", opt.Delimiter)
	}

	br := bufio.NewReader(r)
	if b, err := br.Peek(3); err == nil && bytes.Equal(b, []byte{0xEF, 0xBB, 0xBF}) {
		br.Discard(3) // UTF-8 byte order mark
	}
	cr := csv.NewReader(br)
	cr.Comma = opt.Delimiter
	cr.LazyQuotes = false
	cr.FieldsPerRecord = 0 // set by the header: every row must match it
	csvErr := func(err error) error {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			if errors.Is(pe.Err, csv.ErrFieldCount) {
				return fail(pe.StartLine, "", "row has a different number of fields than the header's %d", cr.FieldsPerRecord)
			}
			if errors.Is(pe.Err, csv.ErrQuote) && pe.StartLine != pe.Line {
				return fail(pe.StartLine, "", "quoted field opened here has a missing or stray closing quote (found on line %d)", pe.Line)
			}
			return fail(pe.StartLine, "", "%v (column %d of line %d)", pe.Err, pe.Column, pe.Line)
		}
		return fail(0, "", "%v", err)
	}

	header, err := cr.Read()
	if err == io.EOF {
		return nil, fail(0, "", "empty file: a header row naming the columns is required")
	}
	if err != nil {
		return nil, csvErr(err)
	}
	t := &Table{Path: path, Options: opt, Header: header, cols: make(map[string]int, len(header)), index: make(map[string]int)}
	for i, h := range header {
		if i == 0 {
			h = strings.TrimPrefix(h, "\ufeff")
			header[i] = h
		}
		if h == "" {
			return nil, fail(1, "", "header column %d has no name", i+1)
		}
		if j, dup := t.cols[h]; dup {
			return nil, fail(1, h, "header names this column twice (columns %d and %d)", j+1, i+1)
		}
		t.cols[h] = i
	}
	kc, ok := t.cols[opt.Key]
	if !ok {
		msg := fmt.Sprintf("key column %q is not in the header (columns: %s)", opt.Key, strings.Join(header, ", "))
		for _, h := range header {
			if _, err := strconv.ParseFloat(strings.TrimSpace(h), 64); err == nil {
				msg += "; the first line looks like data: a header row is required"
				break
			}
		}
		return nil, fail(1, "", "%s", msg)
	}
	t.keyCol = kc

	for skipped := 0; ; {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, csvErr(err)
		}
		line, _ := cr.FieldPos(0)
		if skipped < opt.SkipRows {
			skipped++
			continue
		}
		if len(t.Records) >= opt.MaxRows {
			return nil, fail(line, "", "more than %d data rows (MaxRows)", opt.MaxRows)
		}
		key := opt.Normalize(rec[kc])
		if key == "" {
			return nil, fail(line, opt.Key, "empty key")
		}
		if prev, dup := t.index[key]; dup {
			return nil, fail(line, opt.Key, "key %q (as %q) is also on line %d", rec[kc], key, t.Lines[prev])
		}
		t.index[key] = len(t.Records)
		t.Records = append(t.Records, rec)
		t.Lines = append(t.Lines, line)
		t.Keys = append(t.Keys, key)
	}
	return t, nil
}

// Index returns the record index of a key, after normalising it with the
// table's options.
func (t *Table) Index(key string) (int, bool) {
	i, ok := t.index[t.Options.Normalize(key)]
	return i, ok
}

func (t *Table) column(name string) (int, error) {
	c, ok := t.cols[name]
	if !ok {
		return 0, &Error{Path: t.Path, Column: name, Message: fmt.Sprintf("no such column (columns: %s)", strings.Join(t.Header, ", "))}
	}
	return c, nil
}

// IsPlaceholder reports whether a cell (after trimming white space) is one
// of the tokens that tables use for "no value": empty, "-", "--", ".",
// "..", "...", "(X)", "X", "N", "NA", "N/A", "(NA)", "null", "none" (any
// letter case), or a run of "*". NaN is not one: it is rejected as a
// number.
func IsPlaceholder(cell string) bool {
	s := strings.ToLower(strings.TrimSpace(cell))
	switch s {
	case "", "-", "--", ".", "..", "...", "(x)", "x", "n", "na", "n/a", "(na)", "null", "none":
		return true
	}
	return strings.Trim(s, "*") == ""
}

// Number parses the cell of a record (0-based record index) in the named
// column as a count: a non-negative number in the syntax of
// geo.ParseDecimal (the one rule for counts in every format), such as "12",
// "0.5" or "1.5e3", white space around it ignored. Thousands separators
// ("1,234"), hexadecimal, digit separators, NaN and infinities are
// rejected. A placeholder (see IsPlaceholder) is an error unless
// Options.NullAsZero is set, when it reads as 0. Errors name the file, the
// line and the column.
func (t *Table) Number(row int, column string) (float64, error) {
	c, err := t.column(column)
	if err != nil {
		return 0, err
	}
	if row < 0 || row >= len(t.Records) {
		return 0, &Error{Path: t.Path, Column: column, Message: fmt.Sprintf("record %d out of range (%d records)", row, len(t.Records))}
	}
	v, _, err := t.number(row, c)
	return v, err
}

// number parses one cell; zeroed reports a placeholder read as 0.
func (t *Table) number(row, c int) (v float64, zeroed bool, err error) {
	cell := strings.TrimSpace(t.Records[row][c])
	fail := func(format string, args ...any) (float64, bool, error) {
		return 0, false, &Error{Path: t.Path, Line: t.Lines[row], Column: t.Header[c], Message: fmt.Sprintf(format, args...)}
	}
	if IsPlaceholder(cell) {
		if t.Options.NullAsZero {
			return 0, true, nil
		}
		return fail("%q is not a number (a placeholder for no value: set null_as_zero = true in [input.table] to count it as 0)", cell)
	}
	if strings.Contains(cell, ",") && strings.Trim(cell, "0123456789,.") == "" {
		return fail("%q: commas are not accepted in numbers (thousands separator or decimal comma); write digits with an optional \".\" decimal point", cell)
	}
	v, err = geo.ParseDecimal(cell)
	if err != nil {
		return fail("%v", err)
	}
	if v < 0 {
		return fail("%q is negative; counts must be 0 or more", cell)
	}
	return v, false, nil
}

// Column parses the named column of every record (see Number) and returns
// the values in record order and how many placeholder cells were read as 0.
// When cells are bad the error lists every one of them (see CellErrors).
func (t *Table) Column(name string) (values []float64, zeroed int, err error) {
	c, err := t.column(name)
	if err != nil {
		return nil, 0, err
	}
	var bad CellErrors
	values, zeroed = t.parseColumn(c, &bad)
	if err := bad.err(); err != nil {
		return nil, 0, err
	}
	return values, zeroed, nil
}

// parseColumn parses column c, adding its bad cells to bad.
func (t *Table) parseColumn(c int, bad *CellErrors) (values []float64, zeroed int) {
	values = make([]float64, len(t.Records))
	for i := range t.Records {
		v, z, err := t.number(i, c)
		if err != nil {
			*bad = append(*bad, err.(*Error))
			continue
		}
		values[i] = v
		if z {
			zeroed++
		}
	}
	return values, zeroed
}

// MaxListedCells is how many bad cells a CellErrors message lists.
const MaxListedCells = 20

// CellErrors holds every bad cell of a table, in the order found (by
// column, then line).
type CellErrors []*Error

// Error lists the first MaxListedCells cells, one a line, then "and N
// more".
func (e CellErrors) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "table: %s: %d cells are not counts:", e[0].Path, len(e))
	for i, c := range e {
		if i == MaxListedCells {
			fmt.Fprintf(&b, "\n  and %d more", len(e)-MaxListedCells)
			break
		}
		fmt.Fprintf(&b, "\n  line %d: column %q: %s", c.Line, c.Column, c.Message)
	}
	return b.String()
}

// err is nil for no bad cell, the *Error itself for one, else e.
func (e CellErrors) err() error {
	switch len(e) {
	case 0:
		return nil
	case 1:
		return e[0]
	}
	return e
}
