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
	"github.com/stipple-maps/stipple/tiles/sink"
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
	// Mixing splits the extents' segregation into between and within.
	Mixing *Mixing `json:"mixing,omitempty"`
}

// WriteIndex writes the batch's index page (index.html, index.css) and its
// summary tables (summary.csv, summary.json) into dir, one row or card per
// extent in batch-file order, failed ones with their reason.
func WriteIndex(dir string, f *File, rep *Report) error {
	// A batch killed while it wrote these pages may have left a
	// temporary file beside them; no lock guards this folder.
	sink.SweepGoneTemp(dir)
	m := f.Map
	sum := Summary{Format: "stipple-batch/1", Title: m.Title, Map: f.MapPath, Seed: m.Seed, Extents: rep.Results, Mixing: rep.Mixing}
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
	data := indexData{Title: m.Title, Note: render.DotNote(m.PeoplePerDot), Seed: m.Seed, Caution: render.Caution, Credit: render.CreditLine(m.Credit), Count: len(rep.Results)}
	if rep.Mixing != nil {
		data.Mixing = rep.Mixing.Identity()
	}
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
		if r.H != nil && r.M != nil {
			cd.H, cd.M = fmt.Sprintf("%.3f", *r.H), fmt.Sprintf("%.3f", *r.M)
		}
		cd.Diverse = strings.Join(r.MostDiverse, ", ")
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
	Mixing                       string
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
	H, M, Diverse                    string
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
	var head []tiles.CSVCell
	for _, h := range []string{"slug", "title", "status", "areas", "people_per_dot", "people_total"} {
		head = append(head, tiles.CSVText(h))
	}
	for _, c := range f.Map.Categories {
		head = append(head, tiles.CSVText("people_"+c.Key))
	}
	head = append(head, tiles.CSVText("dots_total"))
	for _, c := range f.Map.Categories {
		head = append(head, tiles.CSVText("dots_"+c.Key))
	}
	for _, h := range []string{"not_drawn_people", "theil_h", "mutual_information_m", "tiles", "tiles_2x", "bytes", "seconds", "error"} {
		head = append(head, tiles.CSVText(h))
	}
	tiles.WriteCSVRow(&b, head)
	num := func(v float64) tiles.CSVCell { return tiles.CSVCell{V: strconv.FormatFloat(v, 'f', -1, 64)} }
	integer := func(v int64) tiles.CSVCell { return tiles.CSVCell{V: strconv.FormatInt(v, 10)} }
	for _, r := range results {
		row := []tiles.CSVCell{tiles.CSVText(r.Slug), tiles.CSVText(r.Title), tiles.CSVText(string(r.Status)), integer(int64(r.Features)), num(r.PerDot), num(sumPeople(r.People))}
		dots := 0
		for _, c := range f.Map.Categories {
			row = append(row, num(r.People[c.Key]))
			dots += r.Dots[c.Key]
		}
		row = append(row, integer(int64(dots)))
		for _, c := range f.Map.Categories {
			row = append(row, integer(int64(r.Dots[c.Key])))
		}
		opt := func(v *float64) tiles.CSVCell {
			if v == nil {
				return tiles.CSVText("")
			}
			return num(*v)
		}
		row = append(row, num(r.NotDrawn), opt(r.H), opt(r.M), integer(r.Tiles), integer(r.Tiles2x),
			integer(r.Bytes), tiles.CSVCell{V: strconv.FormatFloat(r.Seconds, 'f', 3, 64)}, tiles.CSVText(r.Error))
		tiles.WriteCSVRow(&b, row)
	}
	return b.Bytes(), nil
}
