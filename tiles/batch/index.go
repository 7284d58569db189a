package batch

import (
	"bytes"
	"embed"
	"encoding/json"
	"fmt"
	"html/template"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
)

//go:embed assets/index.html assets/index.css
var assets embed.FS

// Files the batch writes into its folder.
const (
	IndexPage   = "index.html"
	indexCSS    = "index.css"
	SummaryCSV  = "summary.csv"
	SummaryJSON = "summary.json"
)

// Summary is summary.json.
type Summary struct {
	Format     string           `json:"format"` // "stipple-batch/1"
	Title      string           `json:"title"`
	Map        string           `json:"map"`
	Seed       uint64           `json:"seed"`
	Categories []tiles.Category `json:"categories"` // key, label and colour; no totals
	Extents    []Result         `json:"extents"`
}

// WriteIndex writes the batch's index page (index.html, index.css) and its
// summary tables (summary.csv, summary.json) into dir, one row or card per
// extent in batch-file order, failed ones with their reason.
func WriteIndex(dir string, f *File, rep *Report) error {
	m := f.Map
	sum := Summary{Format: "stipple-batch/1", Title: m.Title, Map: f.MapPath, Seed: m.Seed, Extents: rep.Results}
	for _, c := range m.Categories {
		sum.Categories = append(sum.Categories, tiles.Category{Key: c.Key, Label: c.Label, Color: strings.ToUpper(c.Color)})
	}
	js, err := json.MarshalIndent(sum, "", "  ")
	if err != nil {
		return fmt.Errorf("batch: %w", err)
	}
	if err := tiles.WriteFileAtomic(filepath.Join(dir, SummaryJSON), append(js, '\n')); err != nil {
		return err
	}
	csvData, err := summaryCSV(f, rep.Results)
	if err != nil {
		return err
	}
	if err := tiles.WriteFileAtomic(filepath.Join(dir, SummaryCSV), csvData); err != nil {
		return err
	}

	// The stylesheet carries the swatch colours as classes: the page's
	// Content-Security-Policy allows no inline style.
	css, err := assets.ReadFile("assets/index.css")
	if err != nil {
		return fmt.Errorf("batch: %w", err)
	}
	var sheet bytes.Buffer
	sheet.Write(css)
	for k, c := range m.Categories {
		col, err := render.ParseHex(c.Color)
		if err != nil {
			col = render.LegendMuted
		}
		fmt.Fprintf(&sheet, ".sb-c%d { background: %s; }\n", k, render.Hex(col))
	}
	if err := tiles.WriteFileAtomic(filepath.Join(dir, indexCSS), sheet.Bytes()); err != nil {
		return err
	}
	tmpl, err := template.ParseFS(assets, "assets/index.html")
	if err != nil {
		return fmt.Errorf("batch: index template: %w", err)
	}
	data := indexData{Title: m.Title, Note: render.DotNote(m.PeoplePerDot), Seed: m.Seed, Caution: render.Caution, Credit: m.Credit, Count: len(rep.Results)}
	for k, c := range m.Categories {
		data.Categories = append(data.Categories, indexCategory{Class: "sb-c" + strconv.Itoa(k), Label: c.Label})
	}
	for _, r := range rep.Results {
		cd := indexCard{Slug: r.Slug, Title: r.Title, Status: string(r.Status), Failed: r.Status == Failed, Error: r.Error,
			Viewer: r.Slug + "/" + tiles.ViewerPage, Thumb: r.Slug + "/" + ThumbFile, Legend: r.Slug + "/legend.png",
			Meta: r.Slug + "/" + tiles.MetadataFile, Def: r.Slug + "/" + ExtentFile,
			People: render.FormatCount(sumPeople(r.People)), Areas: r.Features, Note: render.DotNote(r.PerDot),
			Zooms: fmt.Sprintf("%d–%d", r.MinZoom, r.MaxZoom), Tiles: r.Tiles + r.Tiles2x,
			MB: fmt.Sprintf("%.1f", float64(r.Bytes)/1e6), Seconds: fmt.Sprintf("%.2f", r.Seconds)}
		if cd.Failed {
			data.Failed++
		}
		for k, c := range m.Categories {
			cd.Rows = append(cd.Rows, indexRow{Class: "sb-c" + strconv.Itoa(k), Label: c.Label,
				People: render.FormatCount(r.People[c.Key]), Dots: render.FormatCount(float64(r.Dots[c.Key]))})
		}
		for _, p := range r.Print {
			cd.Prints = append(cd.Prints, indexLink{Name: p, Href: r.Slug + "/" + p})
		}
		data.Cards = append(data.Cards, cd)
	}
	var page bytes.Buffer
	if err := tmpl.Execute(&page, data); err != nil {
		return fmt.Errorf("batch: index: %w", err)
	}
	return tiles.WriteFileAtomic(filepath.Join(dir, IndexPage), page.Bytes())
}

type indexData struct {
	Title, Note, Caution, Credit string
	Seed                         uint64
	Count, Failed                int
	Categories                   []indexCategory
	Cards                        []indexCard
}

type indexCategory struct{ Class, Label string }

type indexCard struct {
	Slug, Title, Status, Error       string
	Failed                           bool
	Viewer, Thumb, Legend, Meta, Def string
	People, Note, Zooms, MB, Seconds string
	Areas                            int
	Tiles                            int64
	Rows                             []indexRow
	Prints                           []indexLink
}

type indexRow struct{ Class, Label, People, Dots string }

type indexLink struct{ Name, Href string }

// summaryCSV is one row per extent: people and dots per category, tiles,
// bytes and seconds. Numbers are plain (no grouping), people as counted.
// Text cells (the header, slug, title, status and error) are neutralised
// by writeCSVRow, so a title such as "=1+2" stays text in a spreadsheet.
// Numeric cells are written as they are: strconv never writes a formula,
// and a quote in front of a negative number would turn it into text.
func summaryCSV(f *File, results []Result) ([]byte, error) {
	var b bytes.Buffer
	var head []csvCell
	for _, h := range []string{"slug", "title", "status", "areas", "people_per_dot", "people_total"} {
		head = append(head, textCell(h))
	}
	for _, c := range f.Map.Categories {
		head = append(head, textCell("people_"+c.Key))
	}
	head = append(head, textCell("dots_total"))
	for _, c := range f.Map.Categories {
		head = append(head, textCell("dots_"+c.Key))
	}
	for _, h := range []string{"not_drawn_people", "tiles", "tiles_2x", "bytes", "seconds", "error"} {
		head = append(head, textCell(h))
	}
	writeCSVRow(&b, head)
	num := func(v float64) csvCell { return csvCell{v: strconv.FormatFloat(v, 'f', -1, 64)} }
	integer := func(v int64) csvCell { return csvCell{v: strconv.FormatInt(v, 10)} }
	for _, r := range results {
		row := []csvCell{textCell(r.Slug), textCell(r.Title), textCell(string(r.Status)), integer(int64(r.Features)), num(r.PerDot), num(sumPeople(r.People))}
		dots := 0
		for _, c := range f.Map.Categories {
			row = append(row, num(r.People[c.Key]))
			dots += r.Dots[c.Key]
		}
		row = append(row, integer(int64(dots)))
		for _, c := range f.Map.Categories {
			row = append(row, integer(int64(r.Dots[c.Key])))
		}
		row = append(row, num(r.NotDrawn), integer(r.Tiles), integer(r.Tiles2x),
			integer(r.Bytes), csvCell{v: strconv.FormatFloat(r.Seconds, 'f', 3, 64)}, textCell(r.Error))
		writeCSVRow(&b, row)
	}
	return b.Bytes(), nil
}

// csvCell is one cell of a CSV row; text cells may hold user text.
type csvCell struct {
	v    string
	text bool
}

func textCell(v string) csvCell { return csvCell{v: v, text: true} }

// writeCSVRow writes one RFC 4180 record ending in \n. A cell is quoted
// when it holds a comma, a double quote, CR or LF, or starts with a space
// or tab (as encoding/csv does). A text cell that a spreadsheet would read
// as a formula, one starting with =, +, -, @, tab or CR, gets a single
// quote in front and is always quoted (OWASP, "CSV Injection": prepend a
// single quote, wrap the cell in double quotes, double any double quote).
func writeCSVRow(b *bytes.Buffer, cells []csvCell) {
	for i, c := range cells {
		if i > 0 {
			b.WriteByte(',')
		}
		v, quote := c.v, false
		if c.text && v != "" && strings.IndexByte("=+-@\t\r", v[0]) >= 0 {
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
