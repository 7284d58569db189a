package mapjob

import (
	"context"
	"encoding/json"
	"html"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/proj"
	"github.com/stipple-maps/stipple/geo/reftool"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/render/theme"
	"github.com/stipple-maps/stipple/render/theme/themetest"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// markedMap is the edited small map (smallEdited: an area without a
// polygon whose 50 people are not drawn, an open ring the reader closes)
// with the diversity shading on and every [theme.text] key set to the
// marked pseudo-translation tx.
func markedMap(t *testing.T, tx theme.Text) *mapfile.Map {
	t.Helper()
	m, _ := smallEdited(t)
	raw, err := os.ReadFile(m.Path)
	if err != nil {
		t.Fatal(err)
	}
	text := "shade_diversity = true\n" + string(raw) + "\n" + themetest.TOML(tx)
	if err := os.WriteFile(m.Path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	out := m.Out
	if m, err = mapfile.Read(m.Path); err != nil {
		t.Fatal(err)
	}
	m.Out = out
	return m
}

// svgText is the text a legend.svg shows and says: its title, its
// description and every text element, unescaped, one a line.
func svgText(svg string) string {
	var b strings.Builder
	for _, m := range regexp.MustCompile(`<(?:text|title|desc)\b[^>]*>([^<]*)</`).FindAllStringSubmatch(svg, -1) {
		b.WriteString(html.UnescapeString(m[1]))
		b.WriteString("\n")
	}
	return b.String()
}

// TestThemeWordsReachEveryOutput renders the edited small map with a
// theme whose every text is marked («xx», upper-cased): alt.txt,
// methods.txt, legend.svg, map.json's methods block, the viewer's
// shading key and the print PDFs (an areas page with a rule, a box page;
// their text read back by poppler's pdftotext) hold each marked text they
// use, and none of the English sentences.
func TestThemeWordsReachEveryOutput(t *testing.T) {
	ctx := context.Background()
	tx := themetest.Marked("«xx»")
	m := markedMap(t, tx)
	if _, err := Run(ctx, m, Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	read := func(name string) string {
		b, err := os.ReadFile(filepath.Join(m.Out, name))
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	check := func(name, text string, keys ...string) {
		t.Helper()
		if miss := themetest.Missing(text, tx, keys...); len(miss) != 0 {
			t.Errorf("%s lacks %q:\n%s", name, miss, text)
		}
		if e := themetest.English(text); len(e) != 0 {
			t.Errorf("%s holds English %q:\n%s", name, e, text)
		}
	}
	check(tiles.AltFile, read(tiles.AltFile), "alt_title", "alt_dots", "alt_groups", "alt_group", "alt_not_drawn",
		"alt_theil_h", "alt_mutual_information", "alt_covers", "longitude_west", "latitude_south", "caution", "credit_prefix")
	check(tiles.MethodsFile, read(tiles.MethodsFile), "methods_title", "credit_prefix", "methods_totals", "dot_note",
		"methods_groups", "methods_placement", "methods_rounding", "methods_rounding_random", "methods_not_drawn",
		"methods_not_drawn_in", "methods_areas_one", "methods_repairs", "methods_repairs_count", "methods_notes_count",
		"methods_repair_closed_rings", "methods_repair_empty_features", "methods_measures", "methods_theil_h",
		"methods_mutual_information", "methods_evenness", "methods_caution", "caution", "methods_made_with")
	check("legend.svg", svgText(read("legend.svg")), "dot_note", "not_drawn", "caution", "credit_prefix")

	var md tiles.Metadata
	if err := json.Unmarshal([]byte(read(tiles.MetadataFile)), &md); err != nil {
		t.Fatal(err)
	}
	if me := md.Methods; me.Source != tx.CreditPrefix+"Invented test data" || me.RoundingRule != tx.MethodsRoundingRandom || me.Caution != tx.Caution {
		t.Errorf("map.json methods: source %q, rounding rule %q, caution %q; want the theme's", me.Source, me.RoundingRule, me.Caution)
	}
	for _, l := range readShade(t, m.Out) {
		if l.KeyTitle != tx.ShadeKeyTitle {
			t.Errorf("viewer shading key titled %q; want %q", l.KeyTitle, tx.ShadeKeyTitle)
		}
	}

	pdftotext := reftool.Need(t, "pdftotext")
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	pl, err := PlaceForPrint(ctx, in, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer pl.Store.Close()
	size, _ := page.ParseSize("A5")
	frame := orb.Bound{Min: orb.Point{-140.005, -30.02}, Max: orb.Point{-139.99, -30.005}}
	for _, c := range []struct {
		name string
		opt  PrintOptions
		keys []string
	}{
		{"areas", PrintOptions{Rule: "every area of the test map"}, []string{"print_subtitle", "print_rule", "print_not_drawn",
			"people", "dots", "all", "dot_note", "scale", "latitude_south", "projection_albers", "caution", "credit_prefix", "shade_key_title"}},
		{"box", PrintOptions{Frame: &frame}, []string{"print_subtitle_frame", "print_frame_people", "people", "dots", "all", "dot_note", "caution"}},
	} {
		opt := c.opt
		opt.Size, opt.DPI, opt.Margin, opt.Projection, opt.DotMM = size, 72, 10, "auto", 0.4
		pp, err := Print(ctx, in, m, pl, opt)
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(t.TempDir(), "page.pdf")
		f, err := os.Create(path)
		if err != nil {
			t.Fatal(err)
		}
		if err := pp.Page.WritePDF(f, page.DotsAuto); err != nil {
			t.Fatal(err)
		}
		if err := f.Close(); err != nil {
			t.Fatal(err)
		}
		// -raw keeps the content stream's order: each wrapped paragraph's
		// lines one after another.
		txt, err := exec.Command(pdftotext, "-raw", "-enc", "UTF-8", path, "-").CombinedOutput()
		if err != nil {
			t.Fatalf("pdftotext: %v\n%s", err, txt)
		}
		check(c.name+" page PDF", string(txt), c.keys...)
	}
}

// TestPrintWordsFromTheTheme: the default theme gives the page its own
// English words (page.DefaultWords), and a marked theme's words reach
// every projection note, hemisphere and footnote of a page.
func TestPrintWordsFromTheTheme(t *testing.T) {
	if got := printWords(nil); got != page.DefaultWords {
		t.Errorf("printWords(default theme) = %+v;\nwant page.DefaultWords %+v", got, page.DefaultWords)
	}
	tx := themetest.Marked("«xx»")
	th := theme.Default()
	th.Text = tx
	w := printWords(th)
	albersOne, err := proj.NewAlbers(proj.WGS84, 20, 10, 20, 20, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	north := orb.Bound{Min: orb.Point{10, 40}, Max: orb.Point{12, 42}}
	south := orb.Bound{Min: orb.Point{-60, -30}, Max: orb.Point{-58, -28}}
	for _, c := range []struct {
		name  string
		p     func() (proj.Projection, error)
		keys  []string
		exact string
	}{
		{"albers", func() (proj.Projection, error) { return page.Projection("albers", south) },
			[]string{"projection_albers", "latitude_south"}, "«xx» ALBERS EQUAL-AREA CONIC, STANDARD PARALLELS «xx» 29.67°S AND «xx» 28.33°S, WGS 84"},
		{"albers, one parallel", func() (proj.Projection, error) { return albersOne, nil },
			[]string{"projection_albers_one", "latitude_north"}, "«xx» ALBERS EQUAL-AREA CONIC, STANDARD PARALLEL «xx» 20°N, WGS 84"},
		{"laea", func() (proj.Projection, error) { return page.Projection("laea", north) },
			[]string{"projection_laea", "latitude_north", "longitude_east"}, "«xx» LAMBERT AZIMUTHAL EQUAL-AREA, CENTRED AT «xx» 41°N «xx» 11°E, WGS 84"},
		{"equal earth", func() (proj.Projection, error) { return page.Projection("equalearth", south) },
			[]string{"projection_equal_earth", "longitude_west"}, "«xx» EQUAL EARTH, CENTRAL MERIDIAN «xx» 59°W, WGS 84"},
		{"mercator", func() (proj.Projection, error) { return page.Projection("mercator", north) },
			[]string{"projection_mercator"}, tx.ProjectionMercator},
		{"plate carrée", func() (proj.Projection, error) { return page.Projection("platecarree", north) },
			[]string{"projection_plate_carree"}, tx.ProjectionPlateCarree},
	} {
		p, err := c.p()
		if err != nil {
			t.Fatal(err)
		}
		got := w.Describe(p)
		if got != c.exact {
			t.Errorf("%s: %q; want %q", c.name, got, c.exact)
		}
		if miss := themetest.Missing(got, tx, c.keys...); len(miss) != 0 {
			t.Errorf("%s: %q lacks %q", c.name, got, miss)
		}
		if e := themetest.English(got); len(e) != 0 {
			t.Errorf("%s: %q holds English %q", c.name, got, e)
		}
		if d := page.Describe(p); len(themetest.English(d)) == 0 {
			t.Errorf("%s: page.Describe gives %q, not the English note", c.name, d)
		}
	}
	for _, c := range []struct {
		people float64
		want   string
	}{
		{0, tx.PrintAllDrawn},
		{1250, "«xx» NOT DRAWN: 1,250 PEOPLE, IN AREAS TOO SMALL OR TOO THIN TO HOLD THEIR DOTS."},
	} {
		if got := NotDrawnNote(th, c.people); got != c.want {
			t.Errorf("NotDrawnNote(%v) = %q; want %q", c.people, got, c.want)
		}
	}
	if got := NotDrawnNote(nil, 0); got != "Not drawn: 0 people; every dot found room in its area." {
		t.Errorf("NotDrawnNote in English = %q", got)
	}
}

// TestMethodsAndCautionFromTheTheme: the methods block takes its reasons,
// rounding rule, source and caution from the map's theme, and the caution
// of estimates adds the theme's word on them; the English constants of
// this package are the default theme's texts.
func TestMethodsAndCautionFromTheTheme(t *testing.T) {
	tx := themetest.Marked("«xx»")
	th := theme.Default()
	th.Text = tx
	m := &mapfile.Map{Credit: "Invented", PeoplePerDot: 5, Rounding: "exact", Theme: th,
		Categories: []mapfile.Category{{Key: "a"}}}
	me := MethodsOf(m, &Summary{Tally: Tally{People: []float64{10}, Dots: []int{2}, BeyondPeople: 3}, RowsWithoutArea: 4})
	if me.Source != "«xx» SOURCE: Invented" || me.RoundingRule != tx.MethodsRoundingExact || me.Caution != tx.Caution {
		t.Errorf("methods: source %q, rule %q, caution %q; want the theme's", me.Source, me.RoundingRule, me.Caution)
	}
	if len(me.NotDrawn) != 2 || me.NotDrawn[0].Reason != tx.MethodsBeyondLimit || me.NotDrawn[1].Reason != tx.MethodsRowsWithoutArea {
		t.Errorf("not drawn %+v; want the theme's reasons for the 3 beyond the limit and the 4 in rows without area", me.NotDrawn)
	}
	if got := cautionOf(tx, &Summary{Tally: Tally{Estimates: true}}); got != tx.Caution+" "+tx.CautionEstimates {
		t.Errorf("caution of estimates %q", got)
	}
	if got := cautionOf(tx, &Summary{}); got != tx.Caution {
		t.Errorf("caution %q", got)
	}
	def := theme.DefaultText
	if EstimatesCaution != " "+def.CautionEstimates || ShadeKeyTitle != def.ShadeKeyTitle || PrintCaution != def.Caution || PrintCaution != render.Caution {
		t.Error("the package's English constants differ from the default theme's texts")
	}
}
