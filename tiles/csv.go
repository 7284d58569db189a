package tiles

import (
	"bytes"
	"strconv"
	"strings"
)

// CSVCell is one cell of a CSV row a map writes (areas.csv, a batch's
// summary.csv). Text cells may hold text from the map's input or map file.
type CSVCell struct {
	V    string
	Text bool
}

// CSVText is a text cell.
func CSVText(v string) CSVCell { return CSVCell{V: v, Text: true} }

// CSVNumber is a number cell, written as strconv writes it (never a
// formula).
func CSVNumber(v float64) CSVCell { return CSVCell{V: strconv.FormatFloat(v, 'f', -1, 64)} }

// WriteCSVRow writes one RFC 4180 record ending in \n. A cell is quoted
// when it holds a comma, a double quote, CR or LF, or starts with a space
// or tab (as encoding/csv does). A text cell that a spreadsheet would read
// as a formula, one starting with =, +, -, @, tab or CR, gets a single
// quote in front and is always quoted (OWASP, "CSV Injection": prepend a
// single quote, wrap the cell in double quotes, double any double quote).
// Number cells are left as they are: a quote before a negative number
// would turn it into text.
func WriteCSVRow(b *bytes.Buffer, cells []CSVCell) {
	for i, c := range cells {
		if i > 0 {
			b.WriteByte(',')
		}
		v, quote := c.V, false
		if c.Text && v != "" && strings.IndexByte("=+-@\t\r", v[0]) >= 0 {
			v, quote = "'"+v, true
		}
		if quote || strings.ContainsAny(v, ",\"\r\n") || strings.HasPrefix(v, " ") || strings.HasPrefix(v, "\t") {
			b.WriteByte('"')
			b.WriteString(strings.ReplaceAll(v, `"`, `""`))
			b.WriteByte('"')
			continue
		}
		b.WriteString(v)
	}
	b.WriteByte('\n')
}
