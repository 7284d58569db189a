package tiles

import (
	"context"
	"encoding/json"
	"fmt"
	"html"
	"strings"

	"github.com/stipple-maps/stipple/tiles/sink"
)

// TileJSONFile is the name of the TileJSON descriptor written beside
// map.json.
const TileJSONFile = "tilejson.json"

// TileJSON is a tile set described by the open TileJSON 3.0.0
// specification, so that any web map library can add a map's tiles as a
// raster layer. Field names are the specification's own (§3).
type TileJSON struct {
	TileJSON    string     `json:"tilejson"` // §3.1, "3.0.0"
	Name        string     `json:"name,omitempty"`
	Description string     `json:"description,omitempty"`
	Version     string     `json:"version"`
	Attribution string     `json:"attribution,omitempty"`
	Scheme      string     `json:"scheme"`
	Tiles       []string   `json:"tiles"`
	MinZoom     int        `json:"minzoom"`
	MaxZoom     int        `json:"maxzoom"`
	Bounds      [4]float64 `json:"bounds"`
	Center      [3]float64 `json:"center"`
}

// TileJSONOf describes m's 1× tiles. base is prefixed to the tile template:
// "" keeps it relative to the descriptor (the render's own copy; a client
// resolves it against the descriptor's address), and stipple publish
// --url gives the absolute address the folder is served from.
//
// Bounds are [west, south, east, north]. TileJSON 3.0.0 §3.5 says bounds
// must not wrap around the antimeridian, so a map whose west edge lies
// east of its east edge (it crosses 180°) is described as spanning every
// longitude. The centre's zoom is a whole number between minzoom and
// maxzoom and its point lies inside the bounds (§3.6).
func TileJSONOf(m *Metadata, base string) *TileJSON {
	t := &TileJSON{
		TileJSON: "3.0.0", Name: m.Title, Version: "1.0.0", Scheme: "xyz",
		Tiles:   []string{base + m.Tiles},
		MinZoom: m.MinZoom, MaxZoom: m.MaxZoom,
		Bounds: m.Bounds, Center: m.Center,
	}
	t.Description = strings.TrimSpace(m.Note + ". " + m.Caution)
	// §3.4: a client may show the attribution as HTML, so it is escaped.
	t.Attribution = html.EscapeString(creditLine(m))
	b := &t.Bounds
	if b[0] > b[2] {
		b[0], b[2] = -180, 180
	}
	for i := range b {
		lim := 180.0
		if i%2 == 1 {
			lim = 90
		}
		b[i] = max(-lim, min(lim, b[i]))
	}
	c := &t.Center
	c[0] = max(b[0], min(b[2], c[0]))
	c[1] = max(b[1], min(b[3], c[1]))
	c[2] = float64(max(m.MinZoom, min(m.MaxZoom, int(c[2]))))
	return t
}

// creditLine is m's credit after its theme's prefix. Metadata read back
// from map.json has no theme; its methods block keeps the line as the
// render wrote it.
func creditLine(m *Metadata) string {
	if m.Theme == nil && m.Methods != nil && m.Methods.Source != "" {
		return m.Methods.Source
	}
	return m.Theme.CreditLine(m.Credit)
}

// PutTileJSON writes m's TileJSON descriptor (tile URLs relative to it) to
// tilejson.json in out.
func PutTileJSON(ctx context.Context, out sink.Sink, m *Metadata) error {
	return PutTileJSONAt(ctx, out, m, "")
}

// PutTileJSONAt writes m's TileJSON descriptor with tile URLs under base
// (see TileJSONOf) to tilejson.json in out.
func PutTileJSONAt(ctx context.Context, out sink.Sink, m *Metadata, base string) error {
	b, err := json.MarshalIndent(TileJSONOf(m, base), "", "  ")
	if err != nil {
		return fmt.Errorf("tiles: %s: %w", TileJSONFile, err)
	}
	return sink.PutFile(ctx, out, TileJSONFile, append(b, '\n'))
}
