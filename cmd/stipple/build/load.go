package build

import (
	"fmt"
	"path/filepath"
	"strings"

	"github.com/stipple-maps/stipple/cmd/stipple/mapfile"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/geojson"
)

// Load reads the map's areas and returns them with their counts per
// category (counts[i][k] for feature i, category k).
func Load(m *mapfile.Map, layer *geo.Layer) (*geo.Layer, [][]float64, error) {
	if layer == nil {
		path := m.Resolve(m.Input.File)
		var err error
		switch strings.ToLower(filepath.Ext(path)) {
		case ".geojson", ".json":
			layer, err = geojson.Read(path, geojson.Options{IDField: m.Input.ID})
		default:
			return nil, nil, fmt.Errorf("%s: key input.file: %s: unknown file type %q; stipple reads .geojson", m.Path, path, filepath.Ext(path))
		}
		if err != nil {
			return nil, nil, err
		}
	}
	counts := make([][]float64, len(layer.Features))
	ids := make(map[string]int, len(layer.Features))
	for i := range layer.Features {
		f := &layer.Features[i]
		if j, dup := ids[f.ID]; dup {
			return nil, nil, &geo.Error{Path: layer.Path, Index: i, ID: f.ID, Field: m.Input.ID,
				Message: fmt.Sprintf("id is also the id of feature %d; ids must be unique (they seed the dots)", j)}
		}
		ids[f.ID] = i
		counts[i] = make([]float64, len(m.Categories))
		for k, c := range m.Categories {
			n, err := geo.Count(layer.Path, f, c.Fields)
			if err != nil {
				return nil, nil, err
			}
			counts[i][k] = n
		}
	}
	return layer, counts, nil
}
