package render

import (
	"encoding/xml"
	"fmt"
	"image/color"
	"math"
	"slices"
	"strings"
	"testing"
)

// W3C WCAG 2.x, definitions of "relative luminance" and "contrast ratio";
// the check values are computed ones listed in CHECKS.md (Colour).
func TestContrastCheckValues(t *testing.T) {
	white := color.NRGBA{255, 255, 255, 255}
	for _, c := range []struct {
		hex  string
		want float64
	}{{"#777777", 4.478}, {"#767676", 4.542}, {"#000000", 21}, {"#ffffff", 1}} {
		fg, err := ParseHex(c.hex)
		if err != nil {
			t.Fatal(err)
		}
		if got := Contrast(fg, white); math.Abs(got-c.want) > 0.0005 {
			t.Errorf("contrast of %s on white = %.4f; want %.3f", c.hex, got, c.want)
		}
		if Contrast(fg, white) != Contrast(white, fg) {
			t.Errorf("contrast of %s depends on the order", c.hex)
		}
	}
	// The sRGB linearisation's two pieces meet at 0.04045 (about 10/255).
	if l := Luminance(color.NRGBA{10, 10, 10, 255}); math.Abs(l-10.0/255/12.92) > 1e-12 {
		t.Errorf("luminance of #0a0a0a = %v", l)
	}
}

func TestLegendTextContrast(t *testing.T) {
	for _, c := range []struct {
		name string
		c    color.NRGBA
	}{{"ink", LegendInk}, {"muted", LegendMuted}} {
		if r := Contrast(c.c, LegendPaper); r < 4.5 {
			t.Errorf("legend %s %s on paper %s: %.2f; want at least 4.5 (WCAG 2.x AA)", c.name, Hex(c.c), Hex(LegendPaper), r)
		}
	}
}

func TestPalettes(t *testing.T) {
	// Okabe & Ito (2008), as listed in CHECKS.md.
	want := []string{"#000000", "#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"}
	if !slices.Equal(OkabeIto, want) {
		t.Errorf("OkabeIto = %v; want %v", OkabeIto, want)
	}
	if DefaultPalette[len(DefaultPalette)-1] != "#000000" {
		t.Errorf("DefaultPalette %v: want black last", DefaultPalette)
	}
}

func TestParseHex(t *testing.T) {
	for _, c := range []struct {
		in   string
		want color.NRGBA
		ok   bool
	}{
		{"#0072B2", color.NRGBA{0, 0x72, 0xb2, 255}, true}, {"#cc79a7", color.NRGBA{0xcc, 0x79, 0xa7, 255}, true},
		{"0072B2", color.NRGBA{}, false}, {"#0072B", color.NRGBA{}, false}, {"#0072BG", color.NRGBA{}, false}, {"red", color.NRGBA{}, false},
	} {
		got, err := ParseHex(c.in)
		if (err == nil) != c.ok || got != c.want {
			t.Errorf("ParseHex(%q) = %v, %v", c.in, got, err)
		}
	}
	if s := Hex(color.NRGBA{0xd5, 0x5e, 0, 255}); s != "#d55e00" {
		t.Errorf("Hex = %s", s)
	}
	if c := Over(color.NRGBA{0, 0, 0, 255}, 0.5, color.NRGBA{255, 255, 255, 255}); c != (color.NRGBA{128, 128, 128, 255}) {
		t.Errorf("Over = %v", c)
	}
}

func testLegend() Legend {
	l := Legend{Title: `Groups of an invented town & <its> "harbour"`, Note: DotNote(25), Caution: Caution,
		Credit: `Invented <b>counts</b> & co`, NotDrawn: "40 people are not drawn."}
	for i, c := range []string{"#0072B2", "#E69F00", "#F0E442"} {
		col, _ := ParseHex(c)
		l.Entries = append(l.Entries, LegendEntry{Label: []string{`<img src=x onerror=alert(1)>`, "Tamsic", "A label long enough that it has to wrap onto a second line"}[i], Color: col, People: float64(1000 * (i + 1))})
	}
	return l
}

func TestLegendSVGWellFormed(t *testing.T) {
	l := testLegend()
	svg := LegendSVG(l, 300)
	dec := xml.NewDecoder(strings.NewReader(string(svg)))
	var texts []string
	var circles []string
	title := ""
	var stack []string
	for {
		tok, err := dec.Token()
		if err != nil {
			if err.Error() == "EOF" {
				break
			}
			t.Fatalf("legend.svg does not parse: %v\n%s", err, svg)
		}
		switch v := tok.(type) {
		case xml.StartElement:
			stack = append(stack, v.Name.Local)
			if v.Name.Local == "svg" && v.Name.Space != "http://www.w3.org/2000/svg" {
				t.Errorf("root element in namespace %q", v.Name.Space)
			}
			if v.Name.Local == "circle" {
				for _, a := range v.Attr {
					if a.Name.Local == "fill" {
						circles = append(circles, a.Value)
					}
				}
			}
		case xml.EndElement:
			stack = stack[:len(stack)-1]
		case xml.CharData:
			if len(stack) == 0 {
				continue
			}
			switch stack[len(stack)-1] {
			case "text":
				texts = append(texts, string(v))
			case "title":
				title += string(v)
			}
		}
	}
	if title != l.Title {
		t.Errorf("title %q; want %q", title, l.Title)
	}
	if !slices.Equal(circles, []string{"#0072b2", "#e69f00", "#f0e442"}) {
		t.Errorf("swatches %v", circles)
	}
	all := strings.Join(texts, " ")
	for _, s := range []string{l.Entries[0].Label, "1,000", "3,000", "1 dot = 25 people", "Source: Invented <b>counts</b> & co", "40 people are not drawn.", "Tamsic"} {
		if !strings.Contains(all, s) {
			t.Errorf("legend.svg text lacks %q: %q", s, texts)
		}
	}
	if !strings.Contains(strings.Join(texts, " "), "misused") {
		t.Error("legend.svg lacks the caution's last sentence")
	}
}

func TestDrawLegendScales(t *testing.T) {
	l := testLegend()
	one, two := DrawLegend(l, 300, 1).Bounds(), DrawLegend(l, 300, 2).Bounds()
	if one.Dx() != 300 || two.Dx() != 600 || math.Abs(float64(two.Dy()-2*one.Dy())) > 1 {
		t.Errorf("legend sizes %v and %v; want 300 and 600 wide, the second twice as tall", one, two)
	}
	_, h := legendLayout(l, 300)
	if one.Dy() != int(h+0.5) {
		t.Errorf("PNG %d px tall; layout says %.1f", one.Dy(), h)
	}
}

func ExampleContrast() {
	grey, _ := ParseHex("#767676")
	fmt.Printf("%.3f\n", Contrast(grey, color.NRGBA{255, 255, 255, 255}))
	// Output: 4.542
}

// TestFormatCount: thousands separated by commas, at most two decimals
// rounded half away from zero (common practice for counts in prose); a
// fraction that rounds to a whole carries into it (94,299,999.999 is
// 94,300,000, not "94,299,9991.").
func TestFormatCount(t *testing.T) {
	for _, c := range []struct {
		in   float64
		want string
	}{
		{0, "0"}, {7, "7"}, {999, "999"}, {1000, "1,000"}, {1234567, "1,234,567"},
		{2.5, "2.5"}, {0.25, "0.25"}, {12.999, "13"}, {94299999.999, "94,300,000"}, {1e15, "1,000,000,000,000,000"},
		{-123, "-123"}, {-1234.5, "-1,234.5"}, {math.Inf(1), "∞"}, {math.NaN(), "NaN"},
	} {
		if got := FormatCount(c.in); got != c.want {
			t.Errorf("FormatCount(%v) = %q; want %q", c.in, got, c.want)
		}
	}
}

// TestCreditLine: every output prints one "Source: " prefix, never two
// (a map file's credit often starts with its own).
func TestCreditLine(t *testing.T) {
	for in, want := range map[string]string{
		"":                                   "",
		"Statistics office, table X (2020)":  "Source: Statistics office, table X (2020)",
		"Source: statistics office, table X": "Source: statistics office, table X",
		"Sources: two offices":               "Sources: two offices",
		"Data: an invented survey":           "Data: an invented survey",
		"https://example.org/table":          "Source: https://example.org/table",
		"Table 3: counts by district":        "Source: Table 3: counts by district",
	} {
		if got := CreditLine(in); got != want {
			t.Errorf("CreditLine(%q) = %q; want %q", in, got, want)
		}
	}
}

// TestCreditLineWith: a theme's own prefix keeps the rule: one prefix,
// never two, also when the credit starts with the prefix itself (a prefix
// whose word has a space before its colon, as French typography puts it).
func TestCreditLineWith(t *testing.T) {
	for _, c := range []struct{ prefix, in, want string }{
		{"Quelle: ", "Statistikamt, Tabelle 3", "Quelle: Statistikamt, Tabelle 3"},
		{"Quelle: ", "Quelle: Statistikamt", "Quelle: Statistikamt"},
		{"Source : ", "Source : office de la statistique", "Source : office de la statistique"},
		{"Source : ", "office de la statistique", "Source : office de la statistique"},
		{"Fuente: ", "Data: invented survey", "Data: invented survey"},
		{"", "office", "Source: office"},
		{"Credit — ", "credit — the desk", "credit — the desk"},
	} {
		if got := CreditLineWith(c.prefix, c.in); got != c.want {
			t.Errorf("CreditLineWith(%q, %q) = %q; want %q", c.prefix, c.in, got, c.want)
		}
	}
}
