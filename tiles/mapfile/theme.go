package mapfile

import (
	"fmt"
	"os"
	"strings"

	"github.com/BurntSushi/toml"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/theme"
)

// ThemeTable is a map file's [theme] table, and also the whole of a theme
// file (without its file key): a desk keeps one theme file for all its
// maps and each map names it, setting here only what differs.
type ThemeTable struct {
	// File names a theme file (TOML with the keys below), relative to the
	// map file. Keys set in the table itself win over the file's.
	File string `toml:"file"`
	// Ground is the map's ground colour, #rrggbb.
	Ground string `toml:"ground"`
	// Font is a TrueType font file (.ttf, or .otf with TrueType outlines)
	// for the legends, print pages and viewer, relative to the file that
	// names it.
	Font string `toml:"font"`
	// FontBold is the font's bold cut (without it, bold text uses Font).
	FontBold string `toml:"font_bold"`
	// Text replaces any of the words around the map ([theme.text]).
	Text theme.Text `toml:"text"`
}

// themeFile is a theme file as decoded: the table without file.
type themeFile struct {
	Ground   string     `toml:"ground"`
	Font     string     `toml:"font"`
	FontBold string     `toml:"font_bold"`
	Text     theme.Text `toml:"text"`
}

// resolveTheme reads the theme file and the fonts and fills m.Theme.
func (m *Map) resolveTheme(lines *Lines) error {
	t := theme.Default()
	tt := m.ThemeTable
	errAt := func(path string, l *Lines, key, msg string) error {
		return &Error{Path: path, Line: l.Near(key), Key: key, Msg: msg}
	}
	// Fonts and text from the theme file first, then the table over them.
	type fontRef struct {
		path, key, file string // file naming it, key, the font's path as resolved
		l               *Lines
	}
	var reg, bold fontRef
	ground, groundAt, groundLines := "", m.Path, lines
	if tt.File != "" {
		fp := m.Resolve(tt.File)
		data, err := os.ReadFile(fp)
		if err != nil {
			return errAt(m.Path, lines, "theme.file", err.Error())
		}
		fl := FindLines(data)
		var f themeFile
		md, err := toml.Decode(string(data), &f)
		if err != nil {
			return DecodeError(fp, fl, err)
		}
		if u := md.Undecoded(); len(u) > 0 {
			name, line := fl.Find(u[0])
			return &Error{Path: fp, Line: line, Key: name, Msg: "unknown key in a theme file"}
		}
		if key, err := f.Text.Check(); err != nil {
			return errAt(fp, fl, "text."+key, err.Error())
		}
		t.Text = t.Text.Merge(f.Text)
		if f.Ground != "" {
			ground, groundAt, groundLines = f.Ground, fp, fl
		}
		rel := &Map{Path: fp}
		if f.Font != "" {
			reg = fontRef{fp, "font", rel.Resolve(f.Font), fl}
		}
		if f.FontBold != "" {
			bold = fontRef{fp, "font_bold", rel.Resolve(f.FontBold), fl}
		}
	}
	if key, err := tt.Text.Check(); err != nil {
		return errAt(m.Path, lines, "theme.text."+key, err.Error())
	}
	t.Text = t.Text.Merge(tt.Text)
	if tt.Ground != "" {
		ground, groundAt, groundLines = tt.Ground, m.Path, lines
	}
	if tt.Font != "" {
		reg = fontRef{m.Path, "theme.font", m.Resolve(tt.Font), lines}
	}
	if tt.FontBold != "" {
		bold = fontRef{m.Path, "theme.font_bold", m.Resolve(tt.FontBold), lines}
	}
	if ground != "" {
		key := "theme.ground"
		if groundAt != m.Path {
			key = "ground"
		}
		if !colorRE.MatchString(ground) {
			return errAt(groundAt, groundLines, key, fmt.Sprintf("%q is not a colour; want #rrggbb", ground))
		}
		t.Ground, _ = render.ParseHex(ground)
	}
	if bold.file != "" && reg.file == "" {
		return errAt(bold.path, bold.l, bold.key, "a bold cut without its regular font; set font too")
	}
	if reg.file != "" {
		read := func(r fontRef) ([]byte, error) {
			b, err := os.ReadFile(r.file)
			if err != nil {
				return nil, errAt(r.path, r.l, r.key, err.Error())
			}
			return b, nil
		}
		rb, err := read(reg)
		if err != nil {
			return err
		}
		var bb []byte
		if bold.file != "" {
			if bb, err = read(bold); err != nil {
				return err
			}
		}
		f, err := render.ParseFont(rb, bb)
		if err != nil {
			at := reg
			if bb != nil && strings.HasPrefix(err.Error(), "bold:") {
				at = bold
			}
			return errAt(at.path, at.l, at.key, fmt.Sprintf("%s: %v", at.file, err))
		}
		t.Font = f
	}
	m.Theme = t
	return nil
}
