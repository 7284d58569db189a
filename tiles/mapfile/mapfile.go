package mapfile

import (
	"errors"
	"fmt"
	"image/color"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"
)

// Map is one map file.
type Map struct {
	// Path is the file the map was read from; relative paths inside it are
	// relative to its folder.
	Path string `toml:"-"`

	Title        string  `toml:"title"`
	Credit       string  `toml:"credit"`
	PeoplePerDot float64 `toml:"people_per_dot"`
	Seed         uint64  `toml:"seed"`
	Out          string  `toml:"out"`
	// Rounding is "random" (default: each area's dots are count/N rounded
	// up or down at random, unbiased) or "exact" (each category gets exactly
	// round(total/N) dots, shared out by largest remainders).
	Rounding string `toml:"rounding"`

	Input      Input      `toml:"input"`
	Tiles      Tiles      `toml:"tiles"`
	Dots       Dots       `toml:"dots"`
	Categories []Category `toml:"category"`
	// Extents are read by "stipple batch"; "stipple render" ignores them.
	Extents []toml.Primitive `toml:"extent"`
}

// Input names the polygons and where their counts come from.
type Input struct {
	// File is a .geojson, .shp or .gpkg file of polygons.
	File string `toml:"file"`
	// ID is the field that identifies an area; "" uses the feature's own id.
	// With a table, it is also the field matched against the table's key.
	ID string `toml:"id"`
	// Layer picks the layer of a GeoPackage with several.
	Layer string `toml:"layer"`
	// Table, when set, is a CSV file holding the counts, joined on ID.
	Table *Table `toml:"table"`
	// Mask lists polygon files of places where nobody lives (water,
	// parks, airports); dots are kept out of them.
	Mask []string `toml:"mask"`
}

// Table is a CSV count table joined onto the areas.
type Table struct {
	File string `toml:"file"`
	// Key is the table's column holding the area key.
	Key string `toml:"key"`
	// SkipRows skips description rows under the header.
	SkipRows int `toml:"skip_rows"`
	// Key normalisation, applied to both sides: trim white space, strip a
	// fixed prefix, keep the last N characters.
	Trim        bool   `toml:"trim"`
	StripPrefix string `toml:"strip_prefix"`
	KeepLast    int    `toml:"keep_last"`
	// NullAsZero reads "-", "(X)", "N", "null", empty … as 0 and reports
	// how many cells it zeroed; without it they are errors.
	NullAsZero bool `toml:"null_as_zero"`
}

// Tiles sets the pyramid.
type Tiles struct {
	MinZoom int `toml:"min_zoom"`
	MaxZoom int `toml:"max_zoom"`
	Size    int `toml:"size"`
	// HiDPI also writes {z}/{x}/{y}@2x.png tiles of twice the pixels for
	// high-density screens.
	HiDPI bool `toml:"hidpi"`
}

// Dots sets the look of dots.
type Dots struct {
	// Diameter in CSS pixels at the deepest zoom; each zoom out halves the
	// dot's area (a factor √2 in diameter), down to MinDiameter; below it
	// dots keep their size and fade instead, so the ink still halves per
	// zoom out.
	Diameter    float64 `toml:"diameter"`
	MinDiameter float64 `toml:"min_diameter"`
	Opacity     float64 `toml:"opacity"`
}

// Category is one group of people with its own colour.
type Category struct {
	Key    string   `toml:"key"`
	Label  string   `toml:"label"`
	Color  string   `toml:"color"`
	Fields []string `toml:"fields"`
}

// Defaults fill keys a map file may leave out.
var Defaults = Map{
	PeoplePerDot: 1,
	Seed:         1,
	Out:          "out",
	Tiles:        Tiles{MinZoom: 0, MaxZoom: 12, Size: 256},
	Dots:         Dots{Diameter: 3, MinDiameter: 0.6, Opacity: 0.9},
}

// MaxHiDPIDiameter is the widest dot a map with @2x tiles may ask for:
// @2x tiles draw it at twice the pixels, and the renderer's stamps are at
// most 64 pixels wide.
const MaxHiDPIDiameter = 32

// Error is a problem at one place in a map file.
type Error struct {
	Path string
	Line int // 0 when not known
	Key  string
	Msg  string
}

func (e *Error) Error() string {
	s := e.Path
	if e.Line > 0 {
		s += ":" + strconv.Itoa(e.Line)
	}
	if e.Key != "" {
		s += ": key " + e.Key
	}
	return s + ": " + e.Msg
}

// Read reads and checks the map file at path.
func Read(path string) (*Map, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("mapfile: %w", err)
	}
	return Parse(path, data)
}

// Parse reads a map file's text; path names it in errors and anchors
// relative paths.
func Parse(path string, data []byte) (*Map, error) {
	m := Defaults
	m.Path = path
	md, err := toml.Decode(string(data), &m)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, &Error{Path: path, Line: pe.Position.Line, Key: pe.LastKey, Msg: pe.Message}
		}
		if g := typeErrRE.FindStringSubmatch(err.Error()); g != nil {
			line, _ := strconv.Atoi(g[1])
			return nil, &Error{Path: path, Line: line, Key: g[2], Msg: g[3]}
		}
		return nil, &Error{Path: path, Msg: err.Error()}
	}
	lines := strings.Split(string(data), "\n")
	for _, k := range md.Undecoded() {
		if len(k) > 0 && k[0] == "extent" {
			continue // batch extents are checked by package batch
		}
		return nil, &Error{Path: path, Line: lineOf(lines, k), Key: k.String(), Msg: "unknown key"}
	}
	if err := m.check(md, lines); err != nil {
		return nil, err
	}
	return &m, nil
}

// typeErrRE matches the decoder's type errors, which carry no typed position.
var typeErrRE = regexp.MustCompile(`^toml: line (\d+) \(last key "(.*?)"\): (.*)$`)

var colorRE = regexp.MustCompile(`^#[0-9A-Fa-f]{6}$`)

func (m *Map) check(md toml.MetaData, lines []string) error {
	errAt := func(msg string, key ...string) error {
		return &Error{Path: m.Path, Line: lineOf(lines, toml.Key(key)), Key: strings.Join(key, "."), Msg: msg}
	}
	if !md.IsDefined("input", "file") {
		return &Error{Path: m.Path, Key: "input.file", Msg: "missing: name the polygon file, e.g. [input] file = \"areas.geojson\""}
	}
	if t := m.Input.Table; t != nil {
		if t.File == "" {
			return errAt("missing: name the CSV file of counts", "input", "table", "file")
		}
		if t.Key == "" {
			return errAt("missing: name the table's key column", "input", "table", "key")
		}
		if m.Input.ID == "" {
			return errAt("missing: with a table, input.id names the areas' field matched to the table key", "input", "id")
		}
		if t.SkipRows < 0 || t.KeepLast < 0 {
			return errAt("skip_rows and keep_last cannot be negative", "input", "table")
		}
	}
	switch m.Rounding {
	case "":
		m.Rounding = "random"
	case "random", "exact":
	default:
		return errAt(fmt.Sprintf("%q; want \"random\" or \"exact\"", m.Rounding), "rounding")
	}
	if !(m.PeoplePerDot > 0) {
		return errAt(fmt.Sprintf("is %v; want a positive number of people per dot", m.PeoplePerDot), "people_per_dot")
	}
	if err := m.CheckZooms(); err != nil {
		return errAt(err.Error(), "tiles")
	}
	if !(m.Dots.Diameter > 0 && m.Dots.Diameter <= 64) {
		return errAt("wants a diameter in pixels above 0 and at most 64", "dots", "diameter")
	}
	if m.Tiles.HiDPI && m.Dots.Diameter > MaxHiDPIDiameter {
		return errAt(fmt.Sprintf("is %v with tiles.hidpi; @2x tiles draw dots at twice the pixels, at most 64, so want at most %v", m.Dots.Diameter, MaxHiDPIDiameter), "dots", "diameter")
	}
	if !(m.Dots.MinDiameter > 0 && m.Dots.MinDiameter <= m.Dots.Diameter) {
		return errAt("wants a size above 0 and at most dots.diameter", "dots", "min_diameter")
	}
	if !(m.Dots.Opacity > 0 && m.Dots.Opacity <= 1) {
		return errAt("wants an opacity above 0 and at most 1", "dots", "opacity")
	}
	if len(m.Categories) == 0 {
		return &Error{Path: m.Path, Key: "category", Msg: "missing: add at least one [[category]] with key, label, color and fields"}
	}
	if len(m.Categories) > 63 {
		return &Error{Path: m.Path, Key: "category", Msg: fmt.Sprintf("%d categories; at most 63", len(m.Categories))}
	}
	seen := map[string]int{}
	for i, c := range m.Categories {
		at := func(field, msg string) error {
			return &Error{Path: m.Path, Line: categoryLine(lines, i, field), Key: fmt.Sprintf("category[%d].%s", i+1, field), Msg: msg}
		}
		for _, f := range []struct {
			name  string
			unset bool
		}{{"key", c.Key == ""}, {"label", c.Label == ""}, {"color", c.Color == ""}, {"fields", c.Fields == nil}} {
			if f.unset && !categoryHas(lines, i, f.name) {
				return at(f.name, "missing")
			}
		}
		if c.Key == "" {
			return at("key", "is empty")
		}
		if c.Label == "" {
			return at("label", "is empty")
		}
		if j, dup := seen[c.Key]; dup {
			return at("key", fmt.Sprintf("%q is also the key of category %d", c.Key, j+1))
		}
		seen[c.Key] = i
		if !colorRE.MatchString(c.Color) {
			return at("color", fmt.Sprintf("%q is not a colour; want #rrggbb", c.Color))
		}
		if len(c.Fields) == 0 {
			return at("fields", "is empty; list the count fields summed for this category")
		}
	}
	return nil
}

// CheckZooms checks the tile settings (also after flags override them).
func (m *Map) CheckZooms() error {
	t := m.Tiles
	if t.MinZoom < 0 || t.MaxZoom > 22 || t.MinZoom > t.MaxZoom {
		return fmt.Errorf("zoom range %d–%d; want 0 ≤ min_zoom ≤ max_zoom ≤ 22", t.MinZoom, t.MaxZoom)
	}
	if t.Size != 256 && t.Size != 512 {
		return fmt.Errorf("size %d; want 256 or 512", t.Size)
	}
	return nil
}

// Resolve returns p relative to the map file's folder unless it is absolute.
func (m *Map) Resolve(p string) string {
	if p == "" || filepath.IsAbs(p) {
		return p
	}
	return filepath.Join(filepath.Dir(m.Path), p)
}

// RGBA returns the category colours.
func (m *Map) RGBA() []color.NRGBA {
	out := make([]color.NRGBA, len(m.Categories))
	for i, c := range m.Categories {
		v, _ := strconv.ParseUint(c.Color[1:], 16, 32)
		out[i] = color.NRGBA{uint8(v >> 16), uint8(v >> 8), uint8(v), 255}
	}
	return out
}

// lineOf finds the line that sets key: the key's last part on a line of its
// own table. It returns 0 when it cannot tell.
func lineOf(lines []string, key toml.Key) int {
	if len(key) == 0 {
		return 0
	}
	table := ""
	want := strings.Join(key[:len(key)-1], ".")
	last := key[len(key)-1]
	for i, l := range lines {
		t := strings.TrimSpace(l)
		if strings.HasPrefix(t, "[") {
			table = strings.Trim(t, "[] ")
			if j := strings.IndexByte(table, '#'); j >= 0 {
				table = strings.TrimSpace(table[:j])
			}
			if table == strings.Join(key, ".") {
				return i + 1
			}
			continue
		}
		if table == want && keyOnLine(t, last) {
			return i + 1
		}
	}
	return 0
}

func keyOnLine(t, key string) bool {
	if !strings.HasPrefix(t, key) {
		return false
	}
	rest := strings.TrimSpace(t[len(key):])
	return strings.HasPrefix(rest, "=")
}

// categoryLine finds a field of the i-th [[category]] table, or the table's
// header line when the field is absent.
func categoryLine(lines []string, i int, field string) int {
	n, header := -1, 0
	for j, l := range lines {
		t := strings.TrimSpace(l)
		if strings.HasPrefix(t, "[") {
			if strings.HasPrefix(t, "[[category]]") {
				n++
				if n == i {
					header = j + 1
				}
			} else if n == i {
				break
			}
			continue
		}
		if n == i && keyOnLine(t, field) {
			return j + 1
		}
	}
	return header
}

func categoryHas(lines []string, i int, field string) bool {
	h := categoryLine(lines, i, "\x00")
	return categoryLine(lines, i, field) != h
}
