package mapfile

import (
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"unicode"

	"github.com/BurntSushi/toml"
	"github.com/stipple-maps/stipple/geo/table"
	"github.com/stipple-maps/stipple/render/theme"
)

// Map is one map file.
type Map struct {
	// Path is the file the map was read from; relative paths inside it are
	// relative to its folder.
	Path string `toml:"-"`

	// Title heads the viewer, the legend and map.json.
	Title string `toml:"title"`
	// Credit names the source of the counts; shown in the viewer, legend
	// and print pages.
	Credit string `toml:"credit"`
	// PeoplePerDot is how many people one dot stands for, at least 0.01.
	PeoplePerDot float64 `toml:"people_per_dot"`
	// Seed picks the random placement, a whole number from 0 up; another
	// seed gives another, equally valid, placement.
	Seed uint64 `toml:"seed"`
	// Out is the output folder, relative to the map file, or a bucket URL.
	Out string `toml:"out"`
	// Rounding is "random" (default: each area's dots are count/N rounded
	// up or down at random, unbiased) or "exact" (each category gets exactly
	// round(total/N) dots, shared out by largest remainders).
	Rounding string `toml:"rounding"`
	// MaxDots stops a map that would place more dots than this before any
	// work starts (a mistyped people_per_dot or a sentinel count); raise
	// it for a bigger map.
	MaxDots int64 `toml:"max_dots"`
	// AllowOutliers lets a count cell far above the rest of its column
	// through (see mapjob's outlier check); without it such a cell stops
	// the run with its row named.
	AllowOutliers bool `toml:"allow_outliers"`
	// ShadeDiversity fills each area with people, under the dots, by its
	// entropy diversity (normalised: 0 = one group, 1 = all groups
	// equal) in five classes 0–0.2–0.4–0.6–0.8–1, light to dark, with a
	// key in the viewer and on print pages. Off by default.
	ShadeDiversity bool `toml:"shade_diversity"`

	// Input names the areas and their counts.
	Input Input `toml:"input"`
	// Tiles sets the zooms and size of the tile pyramid.
	Tiles Tiles `toml:"tiles"`
	// Dots sets the dots' size and opacity.
	Dots Dots `toml:"dots"`
	// Categories are the groups of people, one colour each (1 to 63).
	Categories []Category `toml:"category"`
	// Layers, when set, are two or more maps rendered into one folder with
	// a layer switch and a compare divider (see Layer).
	Layers []Layer `toml:"layer"`
	// References are reference layers (place names, roads, water) from
	// the map maker's own files, drawn with the dots (see Reference).
	References []Reference `toml:"reference"`
	// ThemeTable is the [theme] table as written.
	ThemeTable ThemeTable `toml:"theme"`

	// Theme is the house style resolved from ThemeTable (its theme file,
	// fonts and text over the defaults). Read sets it; a Map made in code
	// may leave it nil, which means theme.Default.
	Theme *theme.Theme `toml:"-"`
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
	// Table is a CSV file holding the counts, joined on ID; optional.
	Table *Table `toml:"table"`
	// Mask lists polygon files of places where nobody lives (water,
	// parks, airports); dots are kept out of them.
	Mask []string `toml:"mask"`
}

// Table is a CSV count table joined onto the areas.
type Table struct {
	// File is the CSV file, relative to the map file.
	File string `toml:"file"`
	// Key is the table's column holding the area key.
	Key string `toml:"key"`
	// SkipRows skips description rows under the header.
	SkipRows int `toml:"skip_rows"`
	// Key normalisation, applied to both sides, in this order: Trim drops
	// white space around keys.
	Trim bool `toml:"trim"`
	// StripPrefix removes this prefix from keys that start with it.
	StripPrefix string `toml:"strip_prefix"`
	// KeepLast keeps the last N characters of longer keys (0: all).
	KeepLast int `toml:"keep_last"`
	// NullAsZero reads "-", "(X)", "N", "null", empty … as 0 and reports
	// how many cells it zeroed; without it they are errors.
	NullAsZero bool `toml:"null_as_zero"`
	// Delimiter separates the fields: "," (default), ";", "tab" or "\t",
	// or another single character.
	Delimiter string `toml:"delimiter"`
	// PadZeros left-pads keys made of digits to PadZeros digits, on both
	// sides, for a table that lost its leading zeros.
	PadZeros int `toml:"pad_zeros"`
}

// Options returns the table reader's options for t.
func (t *Table) Options() table.Options {
	return table.Options{
		Key: t.Key, SkipRows: t.SkipRows, Trim: t.Trim, StripPrefix: t.StripPrefix,
		KeepLast: t.KeepLast, NullAsZero: t.NullAsZero, Delimiter: t.delimiter(), PadZeros: t.PadZeros,
	}
}

// delimiter reads Delimiter as a rune: 0 for the default comma, -1 when it
// is not one character.
func (t *Table) delimiter() rune {
	switch t.Delimiter {
	case "":
		return 0
	case "tab", "\t", `\t`:
		return '\t'
	}
	r := []rune(t.Delimiter)
	if len(r) != 1 {
		return -1
	}
	return r[0]
}

// Tiles sets the pyramid.
type Tiles struct {
	// MinZoom is the lowest zoom written, 0 to 22.
	MinZoom int `toml:"min_zoom"`
	// MaxZoom is the deepest zoom written, MinZoom to 22.
	MaxZoom int `toml:"max_zoom"`
	// Size is the tile size in pixels, 256 or 512.
	Size int `toml:"size"`
	// HiDPI also writes {z}/{x}/{y}@2x.png tiles of twice the pixels for
	// high-density screens.
	HiDPI bool `toml:"hidpi"`
}

// Dots sets the look of dots.
type Dots struct {
	// Diameter is the dot's diameter in CSS pixels at the deepest zoom; each zoom out halves the
	// dot's area (a factor √2 in diameter), down to MinDiameter; below it
	// dots keep their size and fade instead, so the ink still halves per
	// zoom out.
	Diameter float64 `toml:"diameter"`
	// MinDiameter is the smallest drawn diameter, above 0 and at most
	// Diameter.
	MinDiameter float64 `toml:"min_diameter"`
	// Opacity is a dot's opacity, above 0 and at most 1.
	Opacity float64 `toml:"opacity"`
}

// Category is one group of people with its own colour.
type Category struct {
	// Key identifies the category; it seeds its dots, so renaming it moves them.
	Key string `toml:"key"`
	// Label names the category in the legend and viewer.
	Label string `toml:"label"`
	// Color is the dots' colour, #rrggbb.
	Color string `toml:"color"`
	// Fields are the count fields (or table columns) summed for it.
	Fields []string `toml:"fields"`
	// FieldsMOE, for survey tables, names the fields holding each count
	// field's published 90% margin of error, one for each of Fields in the
	// same order; the measures then get intervals and the map says its
	// counts are estimates.
	FieldsMOE []string `toml:"fields_moe"`
}

// Defaults fill keys a map file may leave out.
var Defaults = Map{
	PeoplePerDot: 1,
	MaxDots:      DefaultMaxDots,
	Seed:         1,
	Out:          "out",
	Tiles:        Tiles{MinZoom: 0, MaxZoom: 12, Size: 256},
	Dots:         Dots{Diameter: 3, MinDiameter: 0.6, Opacity: 0.9},
}

// DefaultMaxDots is max_dots when a map file does not set it: two billion
// dots, six times a whole nation of 300 million people at one person per
// dot, about 32 GB of sorting on disk.
const DefaultMaxDots = 2_000_000_000

// MinPeoplePerDot is the smallest people_per_dot: a dot for less than a
// hundredth of a person would be written "1 dot = 0 people".
const MinPeoplePerDot = 0.01

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
// relative paths. [[extent]] tables are left to package batch: "stipple
// render" ignores them.
func Parse(path string, data []byte) (*Map, error) {
	m := Defaults
	m.Path = path
	lines := FindLines(data)
	md, err := toml.Decode(string(data), &m)
	if err != nil {
		return nil, DecodeError(path, lines, err)
	}
	for _, k := range md.Undecoded() {
		if len(k) > 0 && k[0] == "extent" {
			continue
		}
		name, line := lines.Find(k)
		return nil, &Error{Path: path, Line: line, Key: name, Msg: "unknown key"}
	}
	if err := m.check(md, lines, data); err != nil {
		return nil, err
	}
	if err := m.resolveTheme(lines); err != nil {
		return nil, err
	}
	return &m, nil
}

var colorRE = regexp.MustCompile(`^#[0-9A-Fa-f]{6}$`)

func (m *Map) check(md toml.MetaData, lines *Lines, data []byte) error {
	errAt := func(msg string, key ...string) error {
		name := strings.Join(key, ".")
		return &Error{Path: m.Path, Line: lines.Near(name), Key: name, Msg: msg}
	}
	if !md.IsDefined("input", "file") {
		return errAt("missing: name the polygon file, e.g. [input] file = \"areas.geojson\"", "input", "file")
	}
	// The decoder stores a negative seed in the uint64 wrapped round
	// (-3 as 18446744073709551613); read it again as written.
	var seed struct {
		Seed any `toml:"seed"`
	}
	if _, err := toml.Decode(string(data), &seed); err == nil {
		if n, ok := seed.Seed.(int64); ok && n < 0 {
			return errAt(fmt.Sprintf("is %d; want a whole number from 0 up", n), "seed")
		}
	}
	for _, f := range []struct {
		key []string
		v   float64
	}{
		{[]string{"people_per_dot"}, m.PeoplePerDot},
		{[]string{"dots", "diameter"}, m.Dots.Diameter},
		{[]string{"dots", "min_diameter"}, m.Dots.MinDiameter},
		{[]string{"dots", "opacity"}, m.Dots.Opacity},
	} {
		if math.IsNaN(f.v) || math.IsInf(f.v, 0) {
			return errAt(fmt.Sprintf("is %v; want a finite number", f.v), f.key...)
		}
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
		for _, n := range []struct {
			key string
			v   int
		}{{"skip_rows", t.SkipRows}, {"keep_last", t.KeepLast}, {"pad_zeros", t.PadZeros}} {
			if n.v < 0 {
				return errAt(fmt.Sprintf("is %d; want a whole number from 0 up", n.v), "input", "table", n.key)
			}
		}
		if t.PadZeros > 64 {
			return errAt(fmt.Sprintf("is %d; want at most 64 digits", t.PadZeros), "input", "table", "pad_zeros")
		}
		switch d := t.delimiter(); {
		case d == -1:
			return errAt(fmt.Sprintf("%q; want one character such as \",\" or \";\", or \"tab\"", t.Delimiter), "input", "table", "delimiter")
		case d == '"' || d == '\n' || d == '\r' || d == unicode.ReplacementChar:
			return errAt(fmt.Sprintf("%q cannot separate fields; want one character such as \",\" or \";\", or \"tab\"", t.Delimiter), "input", "table", "delimiter")
		}
	}
	switch m.Rounding {
	case "":
		m.Rounding = "random"
	case "random", "exact":
	default:
		return errAt(fmt.Sprintf("%q; want \"random\" or \"exact\"", m.Rounding), "rounding")
	}
	if err := m.CheckPerDot(); err != nil {
		return errAt(err.Error(), "people_per_dot")
	}
	if m.MaxDots < 1 {
		return errAt(fmt.Sprintf("is %d; want a whole number of dots from 1 up", m.MaxDots), "max_dots")
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
	if err := m.checkCategories(lines, ""); err != nil {
		return err
	}
	if err := m.checkReferences(lines); err != nil {
		return err
	}
	if m.Layers != nil {
		return m.checkLayers(lines)
	}
	return nil
}

// checkCategories checks the categories; prefix is "" for the map's own
// and "layer[N]." for a layer's.
func (m *Map) checkCategories(lines *Lines, prefix string) error {
	if len(m.Categories) == 0 {
		return &Error{Path: m.Path, Key: prefix + "category", Msg: "missing: add at least one [[category]] with key, label, color and fields"}
	}
	if len(m.Categories) > 63 {
		return &Error{Path: m.Path, Key: prefix + "category", Msg: fmt.Sprintf("%d categories; at most 63", len(m.Categories))}
	}
	seen := map[string]int{}
	fieldOf := map[string]int{} // field → category that sums it
	for i, c := range m.Categories {
		at := func(field, msg string) error {
			name := fmt.Sprintf("%scategory[%d].%s", prefix, i+1, field)
			return &Error{Path: m.Path, Line: lines.Near(name), Key: name, Msg: msg}
		}
		for _, f := range []struct {
			name  string
			unset bool
		}{{"key", c.Key == ""}, {"label", c.Label == ""}, {"color", c.Color == ""}, {"fields", c.Fields == nil}} {
			if f.unset && !lines.Has(fmt.Sprintf("%scategory[%d].%s", prefix, i+1, f.name)) {
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
		for _, f := range c.Fields {
			if j, dup := fieldOf[f]; dup {
				if j == i {
					return at("fields", fmt.Sprintf("lists %q twice; its people would be drawn twice", f))
				}
				return at("fields", fmt.Sprintf("%q is also a field of category %d; its people would be drawn twice", f, j+1))
			}
			fieldOf[f] = i
		}
		if c.FieldsMOE != nil && len(c.FieldsMOE) != len(c.Fields) {
			return at("fields_moe", fmt.Sprintf("lists %d fields; want one margin field for each of the %d fields, in the same order", len(c.FieldsMOE), len(c.Fields)))
		}
	}
	return nil
}

// CheckPerDot checks people_per_dot (also after a flag overrides it).
func (m *Map) CheckPerDot() error {
	if !(m.PeoplePerDot >= MinPeoplePerDot) || math.IsInf(m.PeoplePerDot, 0) {
		return fmt.Errorf("is %v; want a number of people per dot of at least %v", m.PeoplePerDot, MinPeoplePerDot)
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
