package batch

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"

	"github.com/BurntSushi/toml"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// DefaultMargin is the share of an extent's width and height added on every
// side when choosing its tiles.
const DefaultMargin = 0.1

// MaxExtents caps the extents of one batch file.
const MaxExtents = 10000

// File is a batch file: a base map and the extents drawn from its dots.
type File struct {
	// Path is the batch file; relative paths in it are relative to its
	// folder.
	Path string
	// Map is the base map, read from the file that Map names (or the batch
	// file itself when it is a map file with [[extent]] tables).
	Map *mapfile.Map
	// MapPath is the base map file's path.
	MapPath string
	// Out is the batch folder: OUT/SLUG/ per extent, OUT/index.html and
	// the summary tables.
	Out string
	// Margin is the default margin (share of width and height, each side).
	Margin float64
	// HiDPI also writes @2x tiles.
	HiDPI bool
	// Sample is "all" (every area's dots, so low-zoom tiles show the whole
	// map round an extent) or "near" (only the areas whose bounds meet an
	// extent's box plus margin: much less to place for a few small extents
	// of a big input, but low-zoom tiles then show those areas alone).
	Sample string
	// Print holds the page defaults for extents that ask for a page.
	Print Print
	// Extents are in file order.
	Extents []*Extent
}

// Selection says how an extent picks its areas.
type Selection int

// The three ways an extent picks its areas.
const (
	ByBox   Selection = iota // areas whose representative point is in BBox
	ByIDs                    // areas whose id is in IDs
	ByField                  // areas whose Field holds one of Values
)

func (s Selection) String() string {
	return [...]string{"bbox", "ids", "field"}[s]
}

// Extent is one map of the batch.
type Extent struct {
	// Slug names the extent's folder: lower-case letters, digits, - and _.
	Slug  string `json:"slug"`
	Title string `json:"title"`
	// Line is where the extent's [[extent]] table starts in the batch file.
	Line int `json:"-"`
	// N is the extent's number in the file, from 1.
	N int `json:"-"`

	Select Selection  `json:"select"`
	BBox   [4]float64 `json:"bbox,omitempty"` // west, south, east, north
	IDs    []string   `json:"ids,omitempty"`
	Field  string     `json:"field,omitempty"`
	Values []string   `json:"values,omitempty"`

	// MinZoom and MaxZoom default to the base map's.
	MinZoom int `json:"min_zoom"`
	MaxZoom int `json:"max_zoom"`
	// PeoplePerDot defaults to the base map's; another value means another
	// sampling, shared by the extents that ask for it.
	PeoplePerDot float64 `json:"people_per_dot"`
	Margin       float64 `json:"margin"`
	// Print is nil when the extent has no print page.
	Print *Print `json:"print,omitempty"`
}

// Print sets an extent's print page (see render/page).
type Print struct {
	Page        string   `toml:"page" json:"page"`
	Orientation string   `toml:"orientation" json:"orientation"`
	DPI         float64  `toml:"dpi" json:"dpi"`
	Margin      string   `toml:"margin" json:"margin"`
	DotMM       float64  `toml:"dot_mm" json:"dot_mm"`
	Projection  string   `toml:"projection" json:"projection"`
	Outlines    bool     `toml:"outlines" json:"outlines"`
	Formats     []string `toml:"format" json:"format"`
}

// DefaultPrint is the page an extent gets with print = true and no [print]
// table.
var DefaultPrint = Print{Page: "A4", DPI: 300, Margin: "12mm", DotMM: 0.35, Projection: "auto", Formats: []string{"png", "pdf"}}

// rawFile is the TOML form of a batch file.
type rawFile struct {
	Map     string      `toml:"map"`
	Out     string      `toml:"out"`
	Margin  *float64    `toml:"margin"`
	HiDPI   bool        `toml:"hidpi"`
	Sample  string      `toml:"sample"`
	Print   *Print      `toml:"print"`
	Extents []rawExtent `toml:"extent"`
}

type rawExtent struct {
	Slug         string         `toml:"slug"`
	Title        string         `toml:"title"`
	BBox         []float64      `toml:"bbox"`
	IDs          []string       `toml:"ids"`
	Field        string         `toml:"field"`
	Values       []string       `toml:"values"`
	MinZoom      *int           `toml:"min_zoom"`
	MaxZoom      *int           `toml:"max_zoom"`
	PeoplePerDot *float64       `toml:"people_per_dot"`
	Margin       *float64       `toml:"margin"`
	Print        toml.Primitive `toml:"print"`
}

// Read reads and checks the batch file at path and the base map it names.
func Read(path string) (*File, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("batch: %w", err)
	}
	return Parse(path, data)
}

// Parse reads a batch file's text; path names it in errors and anchors
// relative paths. A file with an [input] table is a map file whose
// [[extent]] tables make the batch: the map is its own base, the batch goes
// to OUT/extents (OUT being the map's out folder, where "stipple render"
// writes the whole map).
func Parse(path string, data []byte) (*File, error) {
	var raw rawFile
	lines := mapfile.FindLines(data)
	md, err := toml.Decode(string(data), &raw)
	if err != nil {
		return nil, mapfile.DecodeError(path, lines, err)
	}
	f := &File{Path: path, Margin: DefaultMargin, HiDPI: raw.HiDPI, Sample: "all"}
	if md.IsDefined("input") {
		// A map file with extents: mapfile reads the same text, leaves the
		// [[extent]] tables to this package and reports any other key it
		// does not know.
		m, err := mapfile.Parse(path, data)
		if err != nil {
			return nil, err
		}
		f.Map, f.MapPath = m, path
		// Beside, not over, what "stipple render" writes for the map.
		f.Out = filepath.Join(m.Resolve(m.Out), "extents")
	} else {
		if raw.Map == "" {
			return nil, &mapfile.Error{Path: path, Key: "map", Msg: "missing: name the base map file, e.g. map = \"city.toml\""}
		}
		f.MapPath = resolve(path, raw.Map)
		m, err := mapfile.Read(f.MapPath)
		if err != nil {
			var me *mapfile.Error
			if errors.As(err, &me) {
				return nil, err
			}
			return nil, &mapfile.Error{Path: path, Line: lines.Line("map"), Key: "map", Msg: err.Error()}
		}
		m.Out = m.Resolve(m.Out)
		f.Map = m
		f.Out = resolve(path, "out")
		if raw.Out != "" {
			f.Out = resolve(path, raw.Out)
		}
		switch raw.Sample {
		case "", "all":
		case "near":
			f.Sample = "near"
		default:
			return nil, &mapfile.Error{Path: path, Line: lines.Line("sample"), Key: "sample",
				Msg: fmt.Sprintf("%q; want \"all\" (every area's dots) or \"near\" (only areas near an extent)", raw.Sample)}
		}
		if raw.Margin != nil {
			f.Margin = *raw.Margin
			if !(f.Margin >= 0 && f.Margin <= 10) {
				return nil, &mapfile.Error{Path: path, Line: lines.Line("margin"), Key: "margin",
					Msg: fmt.Sprintf("is %v; want a share of the extent's size from 0 to 10 (0.1 = 10 %% on each side)", f.Margin)}
			}
		}
	}
	f.Print = DefaultPrint
	if raw.Print != nil {
		f.Print = mergePrint(DefaultPrint, *raw.Print, md, "print")
		if err := checkPrint(f.Print); err != nil {
			return nil, &mapfile.Error{Path: path, Line: lines.Line("print"), Key: "print", Msg: err.Error()}
		}
	}
	if len(raw.Extents) == 0 {
		return nil, &mapfile.Error{Path: path, Key: "extent", Msg: "missing: add at least one [[extent]] with slug, title and one of bbox, ids or field"}
	}
	if len(raw.Extents) > MaxExtents {
		return nil, &mapfile.Error{Path: path, Key: "extent", Msg: fmt.Sprintf("%d extents; at most %d", len(raw.Extents), MaxExtents)}
	}
	slugs := map[string]int{}
	for i, r := range raw.Extents {
		e, err := f.extent(i, r, md, lines)
		if err != nil {
			return nil, err
		}
		if j, dup := slugs[e.Slug]; dup {
			return nil, &mapfile.Error{Path: path, Line: lines.Near(fmt.Sprintf("extent[%d].slug", i+1)), Key: fmt.Sprintf("extent[%d].slug", i+1),
				Msg: fmt.Sprintf("%q is also the slug of extent %d", e.Slug, j+1)}
		}
		slugs[e.Slug] = i
		f.Extents = append(f.Extents, e)
	}
	for _, k := range md.Undecoded() {
		if f.MapPath != path || (len(k) > 0 && k[0] == "extent") {
			name, line := lines.Find(k)
			return nil, &mapfile.Error{Path: path, Line: line, Key: name, Msg: "unknown key"}
		}
	}
	return f, nil
}

var slugRE = regexp.MustCompile(`^[a-z0-9][a-z0-9_-]{0,63}$`)

func (f *File) extent(i int, r rawExtent, md toml.MetaData, lines *mapfile.Lines) (*Extent, error) {
	key := func(field string) string { return fmt.Sprintf("extent[%d].%s", i+1, field) }
	at := func(field, msg string) error {
		return &mapfile.Error{Path: f.Path, Line: lines.Near(key(field)), Key: key(field), Msg: msg}
	}
	has := func(field string) bool { return lines.Has(key(field)) }
	m := f.Map
	e := &Extent{Slug: r.Slug, Title: r.Title, N: i + 1, Line: lines.Line(fmt.Sprintf("extent[%d]", i+1)),
		MinZoom: m.Tiles.MinZoom, MaxZoom: m.Tiles.MaxZoom, PeoplePerDot: m.PeoplePerDot, Margin: f.Margin}
	switch {
	case r.Slug == "" && !has("slug"):
		return nil, at("slug", "missing: name the extent's folder, e.g. slug = \"north-bell\"")
	case !slugRE.MatchString(r.Slug):
		return nil, at("slug", fmt.Sprintf("%q: want 1 to 64 lower-case letters, digits, - or _, starting with a letter or digit", r.Slug))
	case r.Title == "" && !has("title"):
		return nil, at("title", "missing: give the extent's map a title")
	case strings.TrimSpace(r.Title) == "":
		return nil, at("title", "is empty")
	}
	n := 0
	if r.BBox != nil {
		n++
	}
	if r.IDs != nil {
		n++
	}
	if r.Field != "" || r.Values != nil {
		n++
	}
	if n != 1 {
		field := "bbox"
		if n > 1 {
			for _, k := range []string{"ids", "field", "values"} {
				if has(k) {
					field = k
				}
			}
			return nil, at(field, "give one of bbox, ids or field (with values), not several")
		}
		return nil, &mapfile.Error{Path: f.Path, Line: e.Line, Key: fmt.Sprintf("extent[%d]", i+1),
			Msg: "missing: give bbox = [west, south, east, north], ids = [...] or field = \"...\" with values = [...]"}
	}
	switch {
	case r.BBox != nil:
		e.Select = ByBox
		if err := checkBox(r.BBox); err != nil {
			return nil, at("bbox", err.Error())
		}
		copy(e.BBox[:], r.BBox)
	case r.IDs != nil:
		e.Select = ByIDs
		if len(r.IDs) == 0 {
			return nil, at("ids", "is empty; list the ids of the extent's areas")
		}
		seen := map[string]bool{}
		for _, id := range r.IDs {
			if seen[id] {
				return nil, at("ids", fmt.Sprintf("id %q is listed twice", id))
			}
			seen[id] = true
		}
		e.IDs = r.IDs
	default:
		e.Select = ByField
		if r.Field == "" {
			return nil, at("field", "missing: with values, name the field they are matched against")
		}
		if len(r.Values) == 0 {
			return nil, at("values", "missing or empty: list the field values whose areas make the extent")
		}
		e.Field, e.Values = r.Field, r.Values
	}
	if r.MinZoom != nil {
		e.MinZoom = *r.MinZoom
	}
	if r.MaxZoom != nil {
		e.MaxZoom = *r.MaxZoom
	}
	if e.MinZoom < 0 || e.MaxZoom > 22 || e.MinZoom > e.MaxZoom {
		key := "min_zoom"
		if r.MaxZoom != nil {
			key = "max_zoom"
		}
		return nil, at(key, fmt.Sprintf("zoom range %d–%d; want 0 ≤ min_zoom ≤ max_zoom ≤ 22", e.MinZoom, e.MaxZoom))
	}
	if r.PeoplePerDot != nil {
		e.PeoplePerDot = *r.PeoplePerDot
		pm := mapfile.Map{PeoplePerDot: e.PeoplePerDot}
		if err := pm.CheckPerDot(); err != nil {
			return nil, at("people_per_dot", err.Error())
		}
	}
	if r.Margin != nil {
		e.Margin = *r.Margin
		if !(e.Margin >= 0 && e.Margin <= 10) {
			return nil, at("margin", fmt.Sprintf("is %v; want a share of the extent's size from 0 to 10", e.Margin))
		}
	}
	if has("print") {
		switch primitiveKind(md, r.Print) {
		case "bool":
			var on bool
			if err := md.PrimitiveDecode(r.Print, &on); err != nil {
				return nil, at("print", err.Error())
			}
			if on {
				p := f.Print
				e.Print = &p
			}
		case "table":
			var p Print
			if err := md.PrimitiveDecode(r.Print, &p); err != nil {
				return nil, at("print", err.Error())
			}
			var keys map[string]any
			md.PrimitiveDecode(r.Print, &keys)
			for k := range keys {
				if !printKeys[k] {
					return nil, &mapfile.Error{Path: f.Path, Line: lines.Near(key("print." + k)), Key: key("print." + k), Msg: "unknown key"}
				}
			}
			merged := mergePrintTable(f.Print, p, r.Print, md)
			if err := checkPrint(merged); err != nil {
				return nil, &mapfile.Error{Path: f.Path, Line: lines.Line(key("print")), Key: key("print"), Msg: err.Error()}
			}
			e.Print = &merged
		default:
			return nil, at("print", "want true, false or a table of page settings ([extent.print])")
		}
	}
	return e, nil
}

var printKeys = map[string]bool{"page": true, "orientation": true, "dpi": true, "margin": true,
	"dot_mm": true, "projection": true, "outlines": true, "format": true}

// primitiveKind says whether an extent's print value is a bool or a table.
func primitiveKind(md toml.MetaData, p toml.Primitive) string {
	var a any
	if err := md.PrimitiveDecode(p, &a); err != nil {
		return "other"
	}
	switch a.(type) {
	case bool:
		return "bool"
	case map[string]any:
		return "table"
	}
	return "other"
}

// mergePrint takes the keys the [print] table sets over the defaults.
func mergePrint(base, set Print, md toml.MetaData, table string) Print {
	out := base
	def := func(k string) bool { return md.IsDefined(table, k) }
	apply(&out, set, def)
	return out
}

// mergePrintTable is mergePrint for an [extent.print] table, whose keys are
// known from the decoded map.
func mergePrintTable(base, set Print, p toml.Primitive, md toml.MetaData) Print {
	var m map[string]any
	md.PrimitiveDecode(p, &m)
	out := base
	apply(&out, set, func(k string) bool { _, ok := m[k]; return ok })
	return out
}

func apply(out *Print, set Print, def func(string) bool) {
	if def("page") {
		out.Page = set.Page
	}
	if def("orientation") {
		out.Orientation = set.Orientation
	}
	if def("dpi") {
		out.DPI = set.DPI
	}
	if def("margin") {
		out.Margin = set.Margin
	}
	if def("dot_mm") {
		out.DotMM = set.DotMM
	}
	if def("projection") {
		out.Projection = set.Projection
	}
	if def("outlines") {
		out.Outlines = set.Outlines
	}
	if def("format") {
		out.Formats = set.Formats
	}
}

func checkPrint(p Print) error {
	if _, err := page.ParseSize(p.Page); err != nil {
		return err
	}
	switch strings.ToLower(p.Orientation) {
	case "", "portrait", "landscape":
	default:
		return fmt.Errorf("orientation %q: want portrait or landscape", p.Orientation)
	}
	if !(p.DPI >= page.MinDPI && p.DPI <= page.MaxDPI) {
		return fmt.Errorf("dpi %v: want %d to %d", p.DPI, page.MinDPI, page.MaxDPI)
	}
	if _, err := page.ParseLength(p.Margin); err != nil {
		return fmt.Errorf("margin: %v", err)
	}
	if !(p.DotMM > 0 && p.DotMM <= 10) {
		return fmt.Errorf("dot_mm %v: want above 0 and at most 10", p.DotMM)
	}
	ok := false
	for _, n := range page.ProjectionNames {
		ok = ok || n == p.Projection
	}
	if !ok {
		return fmt.Errorf("projection %q: want one of %s", p.Projection, strings.Join(page.ProjectionNames, ", "))
	}
	if len(p.Formats) == 0 {
		return fmt.Errorf("format is empty: want [\"png\"], [\"pdf\"] or both")
	}
	for _, f := range p.Formats {
		if f != "png" && f != "pdf" {
			return fmt.Errorf("format %q: want png or pdf", f)
		}
	}
	return nil
}

func checkBox(b []float64) error {
	if len(b) != 4 {
		return fmt.Errorf("has %d numbers; want [west, south, east, north] in degrees", len(b))
	}
	w, s, e, n := b[0], b[1], b[2], b[3]
	for _, v := range b {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%v is not a number of degrees", v)
		}
	}
	switch {
	case w < -180 || w > 180 || e < -180 || e > 180:
		return fmt.Errorf("longitudes must be within -180 to 180")
	case s < -90 || n > 90:
		return fmt.Errorf("latitudes must be within -90 to 90")
	case s >= n:
		return fmt.Errorf("south %v must be below north %v", s, n)
	case w == e:
		return fmt.Errorf("west and east are both %v; the box has no width", w)
	}
	// West above east crosses the antimeridian (RFC 7946 §5.2).
	return nil
}

func resolve(file, p string) string {
	if filepath.IsAbs(p) {
		return p
	}
	return filepath.Join(filepath.Dir(file), p)
}
