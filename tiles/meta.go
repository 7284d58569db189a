package tiles

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"

	"github.com/stipple-maps/stipple/tiles/sink"
)

// MetadataFile is the name of the metadata file beside the pyramid.
const MetadataFile = "map.json"

// Tile path templates relative to map.json, as Metadata.Tiles and
// Metadata.Tiles2x give them for a pyramid written by Write.
const (
	TilesTemplate   = "{z}/{x}/{y}.png"    // the 1× tiles
	Tiles2xTemplate = "{z}/{x}/{y}@2x.png" // the tiles of twice the pixels (Options.HiDPI)
)

// Metadata describes a written map. The viewer reads it; so can any script.
// Field names are stipple's own; coordinates are lon/lat degrees.
type Metadata struct {
	Format  string `json:"format"` // always "stipple-map/1"
	Version string `json:"stipple_version"`
	Title   string `json:"title"`
	Credit  string `json:"credit"`
	// Layer is the map's key when a viewer holds several maps (the URL
	// hash names it, e.g. "2010"); "" for a map on its own.
	Layer string `json:"layer,omitempty"`
	// LayerLabel names the map in the viewer's layer switch; "" uses Layer.
	LayerLabel string `json:"layer_label,omitempty"`
	// Bounds is [west, south, east, north] of the dots (RFC 7946 §5 order).
	Bounds [4]float64 `json:"bounds"`
	// Center is [lon, lat, zoom], the start view.
	Center   [3]float64 `json:"center"`
	MinZoom  int        `json:"min_zoom"`
	MaxZoom  int        `json:"max_zoom"`
	TileSize int        `json:"tile_size"`
	// Tiles is the tile path template relative to this file.
	Tiles string `json:"tiles"`
	// Tiles2x is the template of the high-density tiles (Tiles2xTemplate):
	// the same tiles as Tiles, in the same folder, at twice the pixels for
	// the same area. "" (and absent from map.json) when none were written.
	Tiles2x string `json:"tiles_2x,omitempty"`
	// Outline is the template of the boundary outline tiles relative to
	// this file (OutlineTemplate), "" when none were drawn.
	Outline      string     `json:"outline,omitempty"`
	PeoplePerDot float64    `json:"people_per_dot"`
	Seed         uint64     `json:"seed"`
	Note         string     `json:"note"`
	Caution      string     `json:"caution"`
	Categories   []Category `json:"categories"`
	// NotDrawn totals the people that have no dot, and says why.
	NotDrawn NotDrawn `json:"not_drawn"`
	// Methods is how the map was made, for a note under a story
	// (methods.txt says the same in prose); nil in maps made before it.
	Methods *Methods `json:"methods,omitempty"`
	// Legend names the legend images written beside this file.
	Legend []string `json:"legend"`
	// Measures, when set, are the map's mixing measures.
	Measures *Measures `json:"measures,omitempty"`
	// Stats of the pyramid.
	TileCount int64         `json:"tile_count"`
	TileBytes int64         `json:"tile_bytes"`
	PerZoom   map[int]int64 `json:"tiles_per_zoom"`
}

// Measures are a map's mixing measures (Theil & Finizza 1971; Reardon &
// Firebaugh 2002; see package geo/measure): nil values are undefined (one
// group only, or no people).
type Measures struct {
	// Entropy is the diversity of the whole map's groups, Σ π ln(1/π).
	Entropy *float64 `json:"entropy"`
	// H is Theil's information index: 0 when every area has the map's
	// mix of groups, 1 when every area holds one group only.
	H *float64 `json:"theil_h"`
	// M is the mutual information index, H × Entropy.
	M *float64 `json:"mutual_information_m"`
	// MostDiverse are the areas of highest entropy, most diverse first.
	MostDiverse []AreaDiversity `json:"most_diverse_areas"`
	// AreaTable names the per-area CSV beside map.json.
	AreaTable string `json:"area_table"`
	// Intervals, when the counts are survey estimates with margins of
	// error, are the measures' intervals from seeded draws of the counts.
	Intervals *MeasureIntervals `json:"intervals,omitempty"`
}

// MeasureIntervals are percentile intervals of the measures over Draws
// seeded draws of the counts within their margins of error (package
// geo/measure, Simulate); nil bounds are undefined.
type MeasureIntervals struct {
	Level float64     `json:"level"`
	Draws int         `json:"draws"`
	Seed  uint64      `json:"seed"`
	H     [2]*float64 `json:"theil_h"`
	M     [2]*float64 `json:"mutual_information_m"`
}

// AreaDiversity is one area's composition in brief.
type AreaDiversity struct {
	ID           string  `json:"id"`
	People       float64 `json:"people"`
	Entropy      float64 `json:"entropy"`
	Normalized   float64 `json:"entropy_normalised"`
	Largest      string  `json:"largest_group"`
	LargestShare float64 `json:"largest_share"`
}

// Category is one group as the map shows it.
type Category struct {
	Key    string  `json:"key"`
	Label  string  `json:"label"`
	Color  string  `json:"color"` // #rrggbb
	People float64 `json:"people"`
	// DotsExpected is People / PeoplePerDot; DotsDrawn what was drawn.
	DotsExpected float64 `json:"dots_expected"`
	DotsDrawn    int     `json:"dots_drawn"`
	// DotsBeyond are dots placed beyond Web Mercator's latitude limit
	// (±85.0511°), which tiles cannot show; print pages draw them.
	DotsBeyond int `json:"dots_beyond_tile_limit,omitempty"`
}

// NotDrawn counts people left off the map.
type NotDrawn struct {
	People float64 `json:"people"`
	// BeyondTileLimit is the people whose dots lie beyond Web Mercator's
	// latitude limit (±85.0511°): on print pages, not on the tiles.
	BeyondTileLimit float64  `json:"people_beyond_tile_latitude_limit"`
	Dots            int      `json:"dots"`
	Features        []string `json:"features"` // "id: reason", the first 100
	// RowsWithoutArea is the people in count-table rows that matched no
	// area: in the input, but on no area of the map.
	RowsWithoutArea float64 `json:"people_in_rows_without_area"`
}

// WriteMetadata writes m as indented JSON to dir/map.json. encoding/json
// escapes <, > and & in strings, so labels are safe to embed in HTML too.
func WriteMetadata(dir string, m *Metadata) error {
	return PutMetadata(context.Background(), sink.NewDir(dir), m)
}

// PutMetadata writes m as indented JSON to map.json in out.
func PutMetadata(ctx context.Context, out sink.Sink, m *Metadata) error {
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return fmt.Errorf("tiles: metadata: %w", err)
	}
	return sink.PutFile(ctx, out, MetadataFile, append(b, '\n'))
}

// ReadMetadata reads dir/map.json.
func ReadMetadata(dir string) (*Metadata, error) {
	b, err := os.ReadFile(filepath.Join(dir, MetadataFile))
	if err != nil {
		return nil, fmt.Errorf("tiles: %w", err)
	}
	var m Metadata
	if err := json.Unmarshal(b, &m); err != nil {
		return nil, fmt.Errorf("tiles: %s: %w", filepath.Join(dir, MetadataFile), err)
	}
	return &m, nil
}
