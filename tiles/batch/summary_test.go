package batch

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

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
