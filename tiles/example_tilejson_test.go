package tiles_test

import (
	"fmt"

	"github.com/stipple-maps/stipple/tiles"
)

// A map's TileJSON descriptor names its tiles under the address the
// folder is published at.
func ExampleTileJSONOf() {
	md := &tiles.Metadata{
		Title: "Invented map", Credit: "Invented data", Tiles: tiles.TilesTemplate,
		MinZoom: 9, MaxZoom: 13, Bounds: [4]float64{-128.6, -34.4, -128.2, -34.0},
		Center: [3]float64{-128.4, -34.2, 11},
	}
	tj := tiles.TileJSONOf(md, "https://maps.example.org/invented/")
	fmt.Println(tj.TileJSON, tj.Tiles[0], tj.MinZoom, tj.MaxZoom, tj.Attribution)
	// Output: 3.0.0 https://maps.example.org/invented/{z}/{x}/{y}.png 9 13 Source: Invented data
}

// A still's view and size are read as the still command reads them.
func ExampleParseView() {
	v, _ := tiles.ParseView("11/-34.225/-128.41")
	w, h, _ := tiles.ParseStillSize("portrait")
	fmt.Println(v.Zoom, v.Lat, v.Lon, w, h)
	// Output: 11 -34.225 -128.41 1080 1350
}
