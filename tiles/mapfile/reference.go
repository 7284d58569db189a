package mapfile

import (
	"fmt"
	"path/filepath"
	"strings"
)

// Reference is one [[reference]] table: a layer from the map maker's own
// file that helps a reader find their way (place names, roads, rivers,
// water, parks), drawn with the dots in the viewer and on print pages.
// Nothing is fetched from elsewhere: the file is read once at render time.
type Reference struct {
	// File is a .geojson (points, lines or polygons), .shp or .gpkg
	// (polygons) file in longitude/latitude or with a declared CRS.
	File string `toml:"file"`
	// Kind is "labels" (points with a name and a rank), "lines" (roads,
	// rivers) or "areas" (polygons: water, parks).
	Kind string `toml:"kind"`
	// Layer picks the layer of a GeoPackage with several.
	Layer string `toml:"layer"`
	// Name is the field holding a label's text (labels only).
	Name string `toml:"name"`
	// Rank is the field holding a label's rank, a whole number: 1 is the
	// most important; labels are placed rank 1 first and a label that
	// would overlap one already placed is hidden (labels only).
	Rank string `toml:"rank"`
	// Above draws the layer over the dots (true) or under them (false).
	// Unset: labels above, lines and areas under.
	Above *bool `toml:"above"`
	// Color is the text, line or fill colour, "#RRGGBB"; "" gives the
	// kind's default (RefDefaults).
	Color string `toml:"color"`
	// Width is the line width in CSS pixels (lines; areas' outline, 0 for
	// none); 0 for lines gives the default.
	Width float64 `toml:"width"`
}

// Reference kinds.
const (
	RefLabels = "labels"
	RefLines  = "lines"
	RefAreas  = "areas"
)

// RefDefaults are each kind's colour, line width and place (above the
// dots or not) when the map file leaves them out: dark grey text, mid
// grey lines and pale blue-grey areas, all quieter than the dots (common
// practice for a reference layer under a thematic one).
var RefDefaults = map[string]Reference{
	RefLabels: {Color: "#2b2f36"},
	RefLines:  {Color: "#9aa0a8", Width: 1.5},
	RefAreas:  {Color: "#cfdbe6"},
}

// MaxRefWidth is the widest reference line, in CSS pixels.
const MaxRefWidth = 20

// RefAbove reports whether reference r is drawn over the dots.
func (r *Reference) RefAbove() bool {
	if r.Above != nil {
		return *r.Above
	}
	return r.Kind == RefLabels
}

// RefColor is r's colour, the kind's default when unset.
func (r *Reference) RefColor() string {
	if r.Color != "" {
		return r.Color
	}
	return RefDefaults[r.Kind].Color
}

// RefWidth is r's line width, the kind's default when unset.
func (r *Reference) RefWidth() float64 {
	if r.Width != 0 {
		return r.Width
	}
	return RefDefaults[r.Kind].Width
}

// checkReferences checks the [[reference]] tables.
func (m *Map) checkReferences(lines *Lines) error {
	for i, r := range m.References {
		at := func(field, msg string) error {
			name := fmt.Sprintf("reference[%d]", i+1)
			if field != "" {
				name += "." + field
			}
			return &Error{Path: m.Path, Line: lines.Near(name), Key: name, Msg: msg}
		}
		if r.File == "" {
			return at("file", "missing: name the file of places, lines or areas, e.g. file = \"places.geojson\"")
		}
		if ext := strings.ToLower(filepath.Ext(r.File)); ext != ".geojson" && ext != ".json" && ext != ".shp" && ext != ".gpkg" {
			return at("file", fmt.Sprintf("%q: unknown file type; want .geojson, .json, .shp or .gpkg", r.File))
		}
		switch r.Kind {
		case RefLabels:
			if r.Name == "" {
				return at("name", "missing: labels need the field that holds each place's name, e.g. name = \"name\"")
			}
			if r.Rank == "" {
				return at("rank", "missing: labels need the field that holds each place's rank (1 = most important), e.g. rank = \"rank\"")
			}
		case RefLines, RefAreas:
			if r.Name != "" || r.Rank != "" {
				f := "name"
				if r.Name == "" {
					f = "rank"
				}
				return at(f, fmt.Sprintf("is for labels; a reference of kind %q draws no text", r.Kind))
			}
		case "":
			return at("kind", "missing: want \"labels\", \"lines\" or \"areas\"")
		default:
			return at("kind", fmt.Sprintf("%q; want \"labels\", \"lines\" or \"areas\"", r.Kind))
		}
		if r.Color != "" && !colorRE.MatchString(r.Color) {
			return at("color", fmt.Sprintf("%q; want #RRGGBB", r.Color))
		}
		if r.Width != 0 && r.Kind == RefLabels {
			return at("width", "is for lines and areas; labels have no line width")
		}
		if r.Width < 0 || r.Width > MaxRefWidth {
			return at("width", fmt.Sprintf("is %v; want a width in pixels from 0 to %d", r.Width, MaxRefWidth))
		}
	}
	return nil
}
