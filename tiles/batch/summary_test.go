package batch

import (
	"bytes"
	"context"
	"encoding/csv"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCSVCellsAreNotFormulas checks writeCSVRow cell by cell. Text cells
// starting with =, +, -, @, tab or CR are the ones OWASP's "CSV Injection"
// page lists as formula triggers; its advice is to prepend a single quote
// and wrap the cell in double quotes, doubling any double quote inside.
// Quoting otherwise follows RFC 4180, section 2 (fields with commas,
// double quotes or line breaks are quoted; quotes are doubled). Numeric
// cells are left alone: -3 must stay a number.
func TestCSVCellsAreNotFormulas(t *testing.T) {
	for _, c := range []struct {
		cell csvCell
		want string
	}{
		{textCell("=1+2"), `"'=1+2"`},
		{textCell("@SUM(A1)"), `"'@SUM(A1)"`},
		{textCell("+1"), `"'+1"`},
		{textCell("-1+2"), `"'-1+2"`},
		{textCell("\tx"), "\"'\tx\""},
		{textCell("\rx"), "\"'\rx\""},
		{textCell(`=HYPERLINK("http://x","y")`), `"'=HYPERLINK(""http://x"",""y"")"`},
		{textCell("a=b"), `a=b`}, // only the first character counts
		{textCell("Old Quay"), `Old Quay`},
		{textCell("Quay, north"), `"Quay, north"`},
		{textCell(`say "hi"`), `"say ""hi"""`},
		{textCell(" lead"), `" lead"`},
		{textCell(""), ``},
		{csvCell{v: "-3"}, `-3`},
		{csvCell{v: "-0.5"}, `-0.5`},
		{csvCell{v: "12"}, `12`},
	} {
		var b bytes.Buffer
		writeCSVRow(&b, []csvCell{c.cell})
		if got := strings.TrimSuffix(b.String(), "\n"); got != c.want {
			t.Errorf("%q (text %v): wrote %q, want %q", c.cell.v, c.cell.text, got, c.want)
		}
		// A CSV reader gets back the cell, with the quote in front of a
		// neutralised one and nothing else changed.
		if c.cell.v == "" {
			continue // encoding/csv skips an empty line
		}
		rec, err := csv.NewReader(strings.NewReader(b.String())).Read()
		want := c.cell.v
		if strings.HasPrefix(c.want, `"'`) {
			want = "'" + want
		}
		if err != nil || len(rec) != 1 || rec[0] != want {
			t.Errorf("%q: read back %q, %v; want %q", c.cell.v, rec, err, want)
		}
	}
}

// TestSummaryTitlesAreNotFormulas runs a batch whose extent titles are
// formulas and checks the bytes of summary.csv: each title neutralised as
// in TestCSVCellsAreNotFormulas, the numbers in the same rows untouched,
// and summary.json keeping the title as written (JSON is not read as a
// spreadsheet).
func TestSummaryTitlesAreNotFormulas(t *testing.T) {
	dir := t.TempDir()
	f := writeBatch(t, dir, `
[[extent]]
slug = "formula"
title = "=1+2"
field = "district"
values = ["Harrowfield"]
max_zoom = 11

[[extent]]
slug = "at-sum"
title = "@SUM(A1)"
field = "district"
values = ["Tannery Row"]
max_zoom = 11
`)
	rep, err := Run(context.Background(), f, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Failed()) > 0 {
		t.Fatalf("failed: %+v", rep.Failed())
	}
	data, err := os.ReadFile(filepath.Join(f.Out, SummaryCSV))
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(string(data), "\n"), "\n")
	if len(lines) != 3 {
		t.Fatalf("summary.csv has %d lines, want 3:\n%s", len(lines), data)
	}
	for i, want := range []string{`formula,"'=1+2",done,`, `at-sum,"'@SUM(A1)",done,`} {
		if !strings.HasPrefix(lines[i+1], want) {
			t.Errorf("row %d: %q, want it to start %q", i+1, lines[i+1], want)
		}
	}
	// The rest of the file still reads as CSV and agrees with map.json.
	checkSummary(t, f)
	js, err := os.ReadFile(filepath.Join(f.Out, SummaryJSON))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(js, []byte(`"title": "=1+2"`)) && !bytes.Contains(js, []byte(`"title":"=1+2"`)) {
		t.Errorf("summary.json lost the title as written:\n%.400s", js)
	}
}
