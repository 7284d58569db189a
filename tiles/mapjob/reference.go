package mapjob

import (
	"context"
	"fmt"
	"math"
	"strings"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/read"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// LoadReferences reads the map's [[reference]] files into layers ready to
// draw, in map-file order. A label needs a name (empty names are skipped)
// and a whole-number rank from 1 up; a labels file holds points, a lines
// file lines, an areas file polygons. Every error names the file, the
// feature and the field.
func LoadReferences(m *mapfile.Map) ([]tiles.Reference, error) {
	var out []tiles.Reference
	for _, r := range m.References {
		res, err := read.File(m.Resolve(r.File), read.Options{Layer: r.Layer, PointsAndLines: true})
		if err != nil {
			return nil, fmt.Errorf("%s: [[reference]] %s: %w", m.Path, r.File, err)
		}
		l := res.Layer
		ref := tiles.Reference{Kind: r.Kind, Above: r.RefAbove(), Color: r.RefColor(), Width: r.RefWidth()}
		for _, f := range l.Features {
			bad := func(field, msg string) error {
				return &geo.Error{Path: l.Path, Index: f.Index, ID: f.ID, Field: field, Message: msg}
			}
			switch r.Kind {
			case mapfile.RefLabels:
				if len(f.Points) == 0 {
					if len(f.Lines) > 0 || len(f.Geometry) > 0 {
						return nil, bad("geometry", "is a line or polygon; a labels reference wants Point or MultiPoint features")
					}
					continue
				}
				v, ok := f.Props[r.Name]
				if !ok {
					return nil, bad(r.Name, "name field is missing")
				}
				name := ""
				if v != nil {
					name = geo.Text(v)
				}
				if name == "" {
					continue
				}
				rank, err := labelRank(f.Props[r.Rank], f.Props, r.Rank)
				if err != nil {
					return nil, bad(r.Rank, err.Error())
				}
				for _, p := range f.Points {
					ref.Labels = append(ref.Labels, tiles.Label{Name: name, Rank: rank, At: p})
				}
			case mapfile.RefLines:
				if len(f.Geometry) > 0 || len(f.Points) > 0 {
					return nil, bad("geometry", "is a point or polygon; a lines reference wants LineString or MultiLineString features (use kind = \"areas\" for polygons)")
				}
				for _, ln := range f.Lines {
					ref.Lines = append(ref.Lines, ln)
				}
			case mapfile.RefAreas:
				if len(f.Points) > 0 || len(f.Lines) > 0 {
					return nil, bad("geometry", "is a point or line; an areas reference wants Polygon or MultiPolygon features")
				}
				for _, poly := range f.Geometry {
					ref.Areas = append(ref.Areas, poly)
				}
			}
		}
		out = append(out, ref)
	}
	return out, nil
}

// labelRank reads a rank value: a whole number from 1 up.
func labelRank(v any, props map[string]any, field string) (int, error) {
	if _, ok := props[field]; !ok {
		return 0, fmt.Errorf("rank field is missing")
	}
	var x float64
	switch t := v.(type) {
	case int64:
		x = float64(t)
	case float64:
		x = t
	case string:
		n, err := geo.ParseDecimal(strings.TrimSpace(t))
		if err != nil {
			return 0, fmt.Errorf("rank %q is not a number; want a whole number from 1 (most important) up", t)
		}
		x = n
	default:
		return 0, fmt.Errorf("rank %v is not a number; want a whole number from 1 (most important) up", v)
	}
	if x < 1 || x != math.Trunc(x) || x > 1e6 {
		return 0, fmt.Errorf("rank %v; want a whole number from 1 (most important) up", x)
	}
	return int(x), nil
}

// PutReferences writes the map's reference layers for the viewer
// (tiles.ReferenceScript): the diversity shading of in's areas first
// (DiversityShade, when the map asks for it), then the [[reference]]
// layers; or it removes an old file when the map has neither. Call it
// before PutFurniture, whose viewer links to the file.
func PutReferences(ctx context.Context, out sink.Sink, in *Input, m *mapfile.Map) error {
	refs, err := allReferences(in, m, nil)
	if err != nil {
		return err
	}
	return tiles.PutReference(ctx, out, refs)
}

// allReferences is the diversity shading of the areas idx (all when nil)
// followed by the map's [[reference]] layers.
func allReferences(in *Input, m *mapfile.Map, idx []int) ([]tiles.Reference, error) {
	shade, err := DiversityShade(in, m, idx)
	if err != nil {
		return nil, err
	}
	refs, err := LoadReferences(m)
	if err != nil {
		return nil, err
	}
	return append(shade, refs...), nil
}

// cssPxMM is one CSS pixel on paper: 1/96 inch (CSS Values and Units
// Level 3, section 5.2).
const cssPxMM = 25.4 / 96

// printReferences reads the map's reference layers for a print page, the
// diversity shading of the areas idx (all when nil) first: widths from CSS
// pixels to millimetres, labels in placement order.
func printReferences(in *Input, m *mapfile.Map, idx []int) ([]page.Reference, error) {
	refs, err := allReferences(in, m, idx)
	if err != nil {
		return nil, err
	}
	var out []page.Reference
	for _, r := range refs {
		c, err := render.ParseHex(r.Color)
		if err != nil {
			return nil, fmt.Errorf("%s: [[reference]] color %q: %w", m.Path, r.Color, err)
		}
		pr := page.Reference{Kind: r.Kind, Above: r.Above, Color: c, WidthMM: r.Width * cssPxMM, Lines: r.Lines, Areas: r.Areas,
			Key: r.Key, KeyTitle: r.KeyTitle}
		tiles.SortLabels(r.Labels)
		for _, l := range r.Labels {
			pr.Labels = append(pr.Labels, page.Label{Name: l.Name, Rank: l.Rank, At: l.At})
		}
		out = append(out, pr)
	}
	return out, nil
}
