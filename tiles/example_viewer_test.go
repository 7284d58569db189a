package tiles_test

import (
	"fmt"
	"os"
	"path/filepath"
	"sort"

	"github.com/stipple-maps/stipple/tiles"
)

// Two maps of an invented town, each in its own folder, under one viewer
// with a layer switch and a compare mode.
func ExampleWriteViewerLayers() {
	dir, _ := os.MkdirTemp("", "stipple-example-")
	defer os.RemoveAll(dir)
	var layers []tiles.ViewerLayer
	for _, key := range []string{"2031", "2041"} {
		// Stand-ins for the tiles a render writes first.
		os.MkdirAll(filepath.Join(dir, key, "12", "2100"), 0o755)
		os.WriteFile(filepath.Join(dir, key, "12", "2100", "1400.png"), nil, 0o644)
		layers = append(layers, tiles.ViewerLayer{Dir: key, Meta: &tiles.Metadata{
			Title: "An invented town", Layer: key, LayerLabel: "Count of " + key,
			Bounds: [4]float64{4.5, 51.5, 4.6, 51.6}, Center: [3]float64{4.55, 51.55, 12},
			MinZoom: 12, MaxZoom: 12, TileSize: 256, Tiles: "{z}/{x}/{y}.png", PeoplePerDot: 5,
			Categories: []tiles.Category{{Key: "a", Label: "Group A", Color: "#0072B2", People: 500}},
		}})
	}
	if err := tiles.WriteViewerLayers(dir, layers); err != nil {
		fmt.Println(err)
		return
	}
	var files []string
	filepath.Walk(dir, func(p string, info os.FileInfo, err error) error {
		if err == nil && !info.IsDir() && filepath.Ext(p) != ".png" {
			r, _ := filepath.Rel(dir, p)
			files = append(files, filepath.ToSlash(r))
		}
		return nil
	})
	sort.Strings(files)
	for _, f := range files {
		fmt.Println(f)
	}
	// Output:
	// alt.txt
	// embed.html
	// index.html
	// map-data.js
	// reference.js
	// theme.css
	// tile-index/0-12.js
	// tile-index/1-12.js
	// viewer.css
	// viewer.js
}
