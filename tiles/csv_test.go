package tiles

import (
	"bytes"
	"encoding/csv"
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
		cell CSVCell
		want string
	}{
		{CSVText("=1+2"), `"'=1+2"`},
		{CSVText("@SUM(A1)"), `"'@SUM(A1)"`},
		{CSVText("+1"), `"'+1"`},
		{CSVText("-1+2"), `"'-1+2"`},
		{CSVText("\tx"), "\"'\tx\""},
		{CSVText("\rx"), "\"'\rx\""},
		{CSVText(`=HYPERLINK("http://x","y")`), `"'=HYPERLINK(""http://x"",""y"")"`},
		{CSVText("a=b"), `a=b`}, // only the first character counts
		{CSVText("Old Quay"), `Old Quay`},
		{CSVText("Quay, north"), `"Quay, north"`},
		{CSVText(`say "hi"`), `"say ""hi"""`},
		{CSVText(" lead"), `" lead"`},
		{CSVText(""), ``},
		{CSVCell{V: "-3"}, `-3`},
		{CSVCell{V: "-0.5"}, `-0.5`},
		{CSVCell{V: "12"}, `12`},
	} {
		var b bytes.Buffer
		WriteCSVRow(&b, []CSVCell{c.cell})
		if got := strings.TrimSuffix(b.String(), "\n"); got != c.want {
			t.Errorf("%q (text %v): wrote %q, want %q", c.cell.V, c.cell.Text, got, c.want)
		}
		// A CSV reader gets back the cell, with the quote in front of a
		// neutralised one and nothing else changed.
		if c.cell.V == "" {
			continue // encoding/csv skips an empty line
		}
		rec, err := csv.NewReader(strings.NewReader(b.String())).Read()
		want := c.cell.V
		if strings.HasPrefix(c.want, `"'`) {
			want = "'" + want
		}
		if err != nil || len(rec) != 1 || rec[0] != want {
			t.Errorf("%q: read back %q, %v; want %q", c.cell.V, rec, err, want)
		}
	}
}
