package mapfile

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/go-fonts/liberation/liberationserifbold"
	"github.com/go-fonts/liberation/liberationserifregular"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/theme"
)

// themeDir is a folder with a desk's theme file, its fonts and a map.
func themeDir(t *testing.T, themeText string) string {
	t.Helper()
	dir := t.TempDir()
	for name, b := range map[string][]byte{
		"fonts/serif.ttf":      liberationserifregular.TTF,
		"fonts/serif-bold.ttf": liberationserifbold.TTF,
		"fonts/broken.ttf":     []byte("OTTO not really"),
		"desk/theme.toml":      []byte(themeText),
	} {
		p := filepath.Join(dir, name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

func TestThemeFileAndTable(t *testing.T) {
	dir := themeDir(t, `ground = "#e0e4e8"
font = "../fonts/serif.ttf"
font_bold = "../fonts/serif-bold.ttf"
[text]
credit_prefix = "Quelle: "
dot_note = "1 Punkt = {n} Personen"
people = "Personen"
`)
	m, err := Parse(filepath.Join(dir, "map.toml"), []byte(base+`
[theme]
file = "desk/theme.toml"
ground = "#dfe6ea"
text.people = "Einwohner"
`))
	if err != nil {
		t.Fatal(err)
	}
	th := m.Theme
	if got := render.Hex(th.Ground); got != "#dfe6ea" {
		t.Errorf("ground %s; the table's #dfe6ea wins over the file's", got)
	}
	if th.Font.Family != "Liberation Serif" || th.Font.BoldIsRegular {
		t.Errorf("font %q (bold is regular %v); want Liberation Serif with its bold", th.Font.Family, th.Font.BoldIsRegular)
	}
	if th.Text.People != "Einwohner" || th.Text.CreditPrefix != "Quelle: " || th.Text.Dots != "dots" {
		t.Errorf("text %+v", th.Text)
	}
	if got := th.DotNote(25); got != "1 Punkt = 25 Personen" {
		t.Errorf("DotNote = %q", got)
	}
	if got := th.CreditLine("Quelle: Amt"); got != "Quelle: Amt" {
		t.Errorf("CreditLine = %q", got)
	}
	// No [theme]: the defaults.
	m, err = Parse(filepath.Join(dir, "map.toml"), []byte(base))
	if err != nil {
		t.Fatal(err)
	}
	if render.Hex(m.Theme.Ground) != render.DefaultGround || !m.Theme.Font.Builtin || m.Theme.Text != theme.DefaultText {
		t.Errorf("default theme not the defaults: %+v", m.Theme)
	}
}

func TestThemeErrors(t *testing.T) {
	dir := themeDir(t, "ground = \"#fff\"\n")
	for _, c := range []struct{ name, table, want string }{
		{"bad ground", "ground = \"white\"\n", `map.toml:11: key theme.ground: "white" is not a colour; want #rrggbb`},
		{"bad ground in theme file", "file = \"desk/theme.toml\"\n", `theme.toml:1: key ground: "#fff" is not a colour`},
		{"missing theme file", "file = \"desk/none.toml\"\n", `map.toml:11: key theme.file: open `},
		{"missing font", "font = \"fonts/none.ttf\"\n", `map.toml:11: key theme.font: open `},
		{"CFF font", "font = \"fonts/broken.ttf\"\n", `map.toml:11: key theme.font: ` + filepath.Join(dir, "fonts/broken.ttf") + `: font: an OpenType font with PostScript (CFF) outlines`},
		{"bold alone", "font_bold = \"fonts/serif-bold.ttf\"\n", `map.toml:11: key theme.font_bold: a bold cut without its regular font`},
		{"placeholder lost", "text.dot_note = \"1 dot = many people\"\n", `map.toml:11: key theme.text.dot_note: "1 dot = many people" lacks {n}`},
		{"unknown text key", "text.colour = \"x\"\n", `map.toml:11: key theme.text.colour: unknown key`},
	} {
		_, err := Parse(filepath.Join(dir, "map.toml"), []byte(base+"\n[theme]\n"+c.table))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: err %v; want %q", c.name, err, c.want)
		}
	}
	// An unknown key in a theme file names the theme file and its line.
	dir = themeDir(t, "ground = \"#e0e4e8\"\nfnt = \"x.ttf\"\n")
	_, err := Parse(filepath.Join(dir, "map.toml"), []byte(base+"\n[theme]\nfile = \"desk/theme.toml\"\n"))
	if want := filepath.Join(dir, "desk/theme.toml") + `:2: key fnt: unknown key in a theme file`; err == nil || err.Error() != want {
		t.Errorf("err %v; want %s", err, want)
	}
}
