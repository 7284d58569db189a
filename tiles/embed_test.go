package tiles

import (
	"fmt"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/render"
)

func altMeta() *Metadata {
	return &Metadata{
		Title: "Home languages of an invented town", Credit: "Invented counts, made up for this test",
		Bounds: [4]float64{-128.56, -34.36, -128.26, -34.09}, PeoplePerDot: 10,
		Note: render.DotNote(10), Caution: render.Caution,
		Categories: []Category{{Label: "Orvesh", People: 750}, {Label: "Tamsic", People: 250}},
	}
}

func TestAltText(t *testing.T) {
	got := AltText(altMeta())
	want := "Dot-density map: Home languages of an invented town. Each dot stands for 10 people, coloured by group and placed at random inside the area where they were counted." +
		" 2 groups, 1,000 people in all: Orvesh, 750 people (75.0%); Tamsic, 250 people (25.0%)." +
		" The map covers longitudes 128.56°W to 128.26°W and latitudes 34.36°S to 34.09°S. " + render.Caution +
		" Source: Invented counts, made up for this test.\n"
	if got != want {
		t.Errorf("AltText =\n%q\nwant\n%q", got, want)
	}
	// Plain text: no markup, and hostile labels pass through as the words
	// they are (alt.txt is text; whoever puts it in HTML escapes it there).
	m := altMeta()
	m.PeoplePerDot = 1
	m.Categories = m.Categories[:1]
	m.NotDrawn = NotDrawn{People: 20, RowsWithoutArea: 5}
	m.Layer, m.LayerLabel = "2031", "Census of 2031"
	b := *m
	b.LayerLabel = ""
	got = AltText(m, &b)
	for _, s := range []string{
		"A viewer of 2 dot-density maps", "Map 1 (Census of 2031): Dot-density map", "Map 2 (2031): ",
		"Each dot stands for one person", "One group: Orvesh, 750 people.", "25 people are not drawn.",
	} {
		if !strings.Contains(got, s) {
			t.Errorf("AltText of two layers lacks %q:\n%s", s, got)
		}
	}
}

func TestEmbedSnippet(t *testing.T) {
	m := altMeta()
	m.Title = `Quotes "here" & <there>`
	got := EmbedSnippet(m, `https://maps.example/town/embed.html?a=1&b="2"`)
	want := `<iframe src="https://maps.example/town/embed.html?a=1&amp;b=&#34;2&#34;" title="Quotes &#34;here&#34; &amp; &lt;there&gt;" ` +
		`style="display:block;width:100%;aspect-ratio:1/1;border:0" loading="lazy" referrerpolicy="no-referrer" sandbox="allow-scripts"></iframe>`
	if got != want {
		t.Errorf("EmbedSnippet =\n%s\nwant\n%s", got, want)
	}
	if s := EmbedSnippet(m, ""); !strings.HasPrefix(s, `<iframe src="embed.html" `) {
		t.Errorf("default src: %s", s)
	}
}

func TestEmbedAspect(t *testing.T) {
	for _, c := range []struct {
		b    [4]float64
		want Aspect
	}{
		{[4]float64{0, 0, 16, 9}, Aspect{16, 9}}, // near the equator Mercator barely stretches
		{[4]float64{0, 0, 10, 10}, Aspect{1, 1}}, //
		{[4]float64{0, 0, 8, 10}, Aspect{4, 5}},  //
		{[4]float64{0, 0, 10, 1}, Aspect{16, 9}}, // very wide: the widest shape
		{[4]float64{0, 0, 1, 10}, Aspect{4, 5}},  // very tall: the tallest
		{[4]float64{0, 59, 6, 61}, Aspect{3, 2}}, // at 60°N a degree of latitude is drawn twice as tall (sec 60° = 2): 6 by 2×2 is 3:2
		{[4]float64{0, 0, 0, 0}, Aspect{4, 3}},   // no bounds
		{[4]float64{5, 0, 1, 3}, Aspect{4, 3}},   // west past east
	} {
		if got := EmbedAspect(&Metadata{Bounds: c.b}); got != c.want {
			t.Errorf("EmbedAspect(%v) = %v; want %v", c.b, got, c.want)
		}
	}
}

func ExampleEmbedSnippet() {
	m := &Metadata{Title: "An invented town", Bounds: [4]float64{-128.56, -34.36, -128.26, -34.09}}
	fmt.Println(EmbedSnippet(m, "https://maps.example/town/embed.html"))
	// Output:
	// <iframe src="https://maps.example/town/embed.html" title="An invented town" style="display:block;width:100%;aspect-ratio:1/1;border:0" loading="lazy" referrerpolicy="no-referrer" sandbox="allow-scripts"></iframe>
}

func ExampleAltText() {
	m := &Metadata{
		Title: "An invented town", Credit: "Invented counts", PeoplePerDot: 5,
		Categories: []Category{{Label: "Green", People: 30}, {Label: "Blue", People: 10}},
	}
	fmt.Print(AltText(m))
	// Output:
	// Dot-density map: An invented town. Each dot stands for 5 people, coloured by group and placed at random inside the area where they were counted. 2 groups, 40 people in all: Green, 30 people (75.0%); Blue, 10 people (25.0%). Source: Invented counts.
}
