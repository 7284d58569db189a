package geojson

import (
	"encoding/json"
	"fmt"
	"os"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// Write writes the layer as an RFC 7946 FeatureCollection: Polygon for a
// one-part feature, MultiPolygon otherwise (Point, MultiPoint, LineString
// or MultiLineString for a feature with Points or Lines), properties as
// they are.
func Write(path string, l *geo.Layer) error {
	type geom struct {
		Type        string `json:"type"`
		Coordinates any    `json:"coordinates"`
	}
	type feature struct {
		Type       string         `json:"type"`
		ID         string         `json:"id,omitempty"`
		Properties map[string]any `json:"properties"`
		Geometry   geom           `json:"geometry"`
	}
	fc := struct {
		Type     string    `json:"type"`
		Features []feature `json:"features"`
	}{Type: "FeatureCollection"}
	for _, f := range l.Features {
		g := geom{Type: "MultiPolygon", Coordinates: coords(f.Geometry)}
		switch {
		case len(f.Points) == 1:
			g = geom{Type: "Point", Coordinates: [2]float64(f.Points[0])}
		case len(f.Points) > 1:
			g = geom{Type: "MultiPoint", Coordinates: f.Points}
		case len(f.Lines) == 1:
			g = geom{Type: "LineString", Coordinates: f.Lines[0]}
		case len(f.Lines) > 1:
			g = geom{Type: "MultiLineString", Coordinates: f.Lines}
		case len(f.Geometry) == 1:
			g = geom{Type: "Polygon", Coordinates: coords(f.Geometry)[0]}
		}
		fc.Features = append(fc.Features, feature{"Feature", f.ID, f.Props, g})
	}
	b, err := json.Marshal(fc)
	if err != nil {
		return fmt.Errorf("geojson: %s: %w", path, err)
	}
	if err := os.WriteFile(path, append(b, '\n'), 0o644); err != nil {
		return fmt.Errorf("geojson: %w", err)
	}
	return nil
}

func coords(mp orb.MultiPolygon) [][][][2]float64 {
	out := make([][][][2]float64, len(mp))
	for i, p := range mp {
		out[i] = make([][][2]float64, len(p))
		for j, r := range p {
			out[i][j] = make([][2]float64, len(r))
			for k, pt := range r {
				out[i][j][k] = [2]float64(pt)
			}
		}
	}
	return out
}
