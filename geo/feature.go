package geo

import (
	"fmt"

	"github.com/paulmach/orb"
)

// Feature is one area of the input: a block, tract or district.
type Feature struct {
	// Index is the feature's 0-based position in its source file.
	Index int
	// ID is the value of the map's id field, as text (leading zeros kept).
	ID string
	// Geometry is the area in longitude/latitude degrees (WGS 84). Outer
	// rings come first in each polygon, holes after; winding is not relied on.
	Geometry orb.MultiPolygon
	// Points and Lines hold point and line geometries (place labels, roads,
	// rivers) for reference layers. Only a reader asked for them fills
	// them (geojson.Options.PointsAndLines); areas are always polygons.
	Points orb.MultiPoint
	Lines  orb.MultiLineString
	// Props holds the attribute values by field name. Values are string,
	// float64, int64, bool or nil.
	Props map[string]any
}

// Layer is what a reader returns: the features of one file or table.
type Layer struct {
	// Path is the file the layer was read from; it prefixes error messages.
	Path string
	// Name is the layer or table name inside the file, if the format has one.
	Name string
	// CRS describes the coordinate system found in the file ("" when none
	// was declared and lon/lat was assumed).
	CRS string
	// Features in file order.
	Features []Feature
	// Fields lists attribute names in file order (for inspect and init).
	Fields []string
}

// Error is a problem with one place in the input. Its message names the file,
// the feature (index and id) and the field where they are known.
type Error struct {
	Path    string // file
	Index   int    // feature or row index, -1 when not about one feature
	ID      string // feature id, "" when unknown
	Field   string // attribute or member name, "" when not about one field
	Message string
}

func (e *Error) Error() string {
	s := e.Path
	if e.Index >= 0 {
		s += fmt.Sprintf(": feature %d", e.Index)
		if e.ID != "" {
			s += fmt.Sprintf(" (id %q)", e.ID)
		}
	}
	if e.Field != "" {
		s += fmt.Sprintf(": field %q", e.Field)
	}
	return s + ": " + e.Message
}
