package viewertest

import (
	"context"
	"fmt"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/demo"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// demoMap is the invented demo city's map file, with the zooms cut to 9–13
// to keep the tests quick.
func demoMap(t *testing.T, perDot float64, out string) *mapfile.Map {
	t.Helper()
	var b strings.Builder
	fmt.Fprintf(&b, "title = \"Home languages of Quillmere (invented demo)\"\n")
	fmt.Fprintf(&b, "credit = \"Invented data made by stipple's demo generator; not a real place.\"\n")
	fmt.Fprintf(&b, "people_per_dot = %v\nseed = 1\n", perDot)
	b.WriteString("[input]\nfile = \"built-in.geojson\"\nid = \"code\"\n")
	b.WriteString("[tiles]\nmin_zoom = 9\nmax_zoom = 13\nsize = 256\n")
	b.WriteString("[dots]\ndiameter = 2.4\nmin_diameter = 0.7\nopacity = 0.9\n")
	for _, g := range demo.Groups {
		fmt.Fprintf(&b, "\n[[category]]\nkey = %q\nlabel = %q\ncolor = %q\nfields = [%q]\n", g.Field, g.Label, g.Color, g.Field)
	}
	m, err := mapfile.Parse(filepath.Join(out, "demo.toml"), []byte(b.String()))
	if err != nil {
		t.Fatalf("demo map file: %v", err)
	}
	m.Out = out
	return m
}

// layerFixture is one rendered layer.
type layerFixture struct {
	Map  *mapfile.Map
	Meta *tiles.Metadata
	Dir  string // relative to the viewer
}

// viewerFixture is a folder with a viewer over one or more layers.
type viewerFixture struct {
	Dir    string
	Layers []layerFixture
	err    error
	once   sync.Once
}

var demo2, dotMap, denseMap viewerFixture

// demoDense renders the demo city at 10 people per dot with @2x tiles
// (mapjob.Options.HiDPI), viewer and all, as `stipple render --hidpi` does.
func demoDense(t *testing.T) *viewerFixture {
	t.Helper()
	denseMap.once.Do(func() {
		dir := filepath.Join(tmpRoot, "dense")
		m := demoMap(t, 10, dir)
		sum, err := mapjob.Run(context.Background(), m, mapjob.Options{Layer: demo.City(1), HiDPI: true})
		if err != nil {
			denseMap.err = err
			return
		}
		denseMap.Layers = []layerFixture{{Map: m, Meta: sum.Metadata}}
		denseMap.Dir = dir
	})
	if denseMap.err != nil {
		t.Fatalf("dense demo fixture: %v", denseMap.err)
	}
	return &denseMap
}

// demoTwo renders the demo city twice, at 10 and at 25 people per dot, into
// sub-folders "ten" and "quarter" with boundary outlines, and writes one
// viewer over both.
func demoTwo(t *testing.T) *viewerFixture {
	t.Helper()
	demo2.once.Do(func() {
		dir := filepath.Join(tmpRoot, "demo2")
		city := demo.City(1)
		var polys []orb.MultiPolygon
		for _, f := range city.Features {
			polys = append(polys, f.Geometry)
		}
		var vl []tiles.ViewerLayer
		for _, l := range []struct {
			sub, key, label string
			perDot          float64
		}{{"ten", "ten", "1 dot = 10", 10}, {"quarter", "quarter", "1 dot = 25", 25}} {
			m := demoMap(t, l.perDot, filepath.Join(dir, l.sub))
			sum, err := mapjob.Run(context.Background(), m, mapjob.Options{Layer: city})
			if err != nil {
				demo2.err = err
				return
			}
			if _, err := tiles.WriteOutlines(context.Background(), polys, tiles.OutlineOptions{
				Dir: m.Out, MinZoom: 11, MaxZoom: 13, TileSize: 256,
			}); err != nil {
				demo2.err = err
				return
			}
			md := sum.Metadata
			md.Layer, md.LayerLabel, md.Outline = l.key, l.label, tiles.OutlineTemplate
			demo2.Layers = append(demo2.Layers, layerFixture{Map: m, Meta: md, Dir: l.sub})
			vl = append(vl, tiles.ViewerLayer{Dir: l.sub, Meta: md})
		}
		demo2.err = tiles.WriteViewerLayers(dir, vl)
		demo2.Dir = dir
	})
	if demo2.err != nil {
		t.Fatalf("demo fixture: %v", demo2.err)
	}
	return &demo2
}

// Hostile texts: each would run script if it reached the page as markup.
const (
	evilLabel  = `<img src=x onerror=alert(1)>`
	evilTitle  = `</title><script>alert(2)</script> & "quoted" <b>title</b>`
	evilCredit = `<a href="javascript:alert(3)">source</a> ' " </p>`
	evilKey    = `"><svg onload=alert(4)>`
)

// dotAt is where the one big dot of the synthetic map lies: an invented
// spot, nothing real is there.
var dotAt = orb.Point{10.00002, 20.00002}

const dotColor = "#D55E00" // Okabe & Ito vermillion

var dotDense viewerFixture

// oneDotDense renders the one-dot map of oneDot with @2x tiles, as a single
// map with build's own viewer, with a dot 30 px wide at zoom 14 (60 px in the
// @2x tiles: the renderer draws no disc wider than render.MaxStampDiameter).
func oneDotDense(t *testing.T) *viewerFixture {
	t.Helper()
	dotDense.once.Do(func() {
		dir := filepath.Join(tmpRoot, "onedot-dense")
		layer, m, err := oneDotMap(dir, 30)
		if err != nil {
			dotDense.err = err
			return
		}
		sum, err := mapjob.Run(context.Background(), m, mapjob.Options{Layer: layer, HiDPI: true})
		if err != nil {
			dotDense.err = err
			return
		}
		dotDense.Layers = []layerFixture{{Map: m, Meta: sum.Metadata}}
		dotDense.Dir = dir
	})
	if dotDense.err != nil {
		t.Fatalf("dense one-dot fixture: %v", dotDense.err)
	}
	return &dotDense
}

// oneDotMap is the one-dot map's layer and map file, writing into dir, with
// a dot diameter px wide at zoom 14.
func oneDotMap(dir string, diameter float64) (*geo.Layer, *mapfile.Map, error) {
	d := 0.00002
	ring := orb.Ring{{dotAt[0] - d, dotAt[1] - d}, {dotAt[0] + d, dotAt[1] - d}, {dotAt[0] + d, dotAt[1] + d}, {dotAt[0] - d, dotAt[1] + d}, {dotAt[0] - d, dotAt[1] - d}}
	layer := &geo.Layer{Path: "synthetic", Name: "synthetic", Fields: []string{"n"}, Features: []geo.Feature{{
		Index: 0, ID: "only", Geometry: orb.MultiPolygon{{ring}}, Props: map[string]any{"n": int64(1)},
	}}}
	text := fmt.Sprintf("title = %q\ncredit = %q\npeople_per_dot = 1\nseed = 7\n", evilTitle, evilCredit) +
		"[input]\nfile = \"synthetic.geojson\"\n[tiles]\nmin_zoom = 10\nmax_zoom = 14\nsize = 256\n" +
		fmt.Sprintf("[dots]\ndiameter = %v\nmin_diameter = 2\nopacity = 1\n", diameter) +
		fmt.Sprintf("[[category]]\nkey = \"n\"\nlabel = %q\ncolor = %q\nfields = [\"n\"]\n", evilLabel, dotColor)
	m, err := mapfile.Parse(filepath.Join(dir, "map.toml"), []byte(text))
	if err != nil {
		return nil, nil, err
	}
	m.Out = dir
	return layer, m, nil
}

// oneDot renders a synthetic map holding one person in a 4 m square at
// dotAt: one dot, 40 px wide at zoom 14, fully opaque, labelled with hostile
// text. Its viewer shows the map twice (two layers on the same tiles) so
// that layer labels and keys are hostile too.
func oneDot(t *testing.T) *viewerFixture {
	t.Helper()
	dotMap.once.Do(func() {
		dir := filepath.Join(tmpRoot, "onedot")
		layer, m, err := oneDotMap(dir, 40)
		if err != nil {
			dotMap.err = err
			return
		}
		sum, err := mapjob.Run(context.Background(), m, mapjob.Options{Layer: layer})
		if err != nil {
			dotMap.err = err
			return
		}
		a := *sum.Metadata
		a.Layer, a.LayerLabel = "plain", evilLabel
		b := *sum.Metadata
		b.Layer, b.LayerLabel = evilKey, evilKey
		dotMap.Layers = []layerFixture{{Map: m, Meta: &a}, {Map: m, Meta: &b}}
		dotMap.Dir = dir
		dotMap.err = tiles.WriteViewerLayers(dir, []tiles.ViewerLayer{{Meta: &a}, {Meta: &b}})
	})
	if dotMap.err != nil {
		t.Fatalf("one-dot fixture: %v", dotMap.err)
	}
	return &dotMap
}

var blockMap viewerFixture

// Where the block map lies: a square 0.1° wide, centred where the 180°
// meridian crosses the equator, so that tile column 0 meets the last column
// and the equator is a tile row boundary at every zoom. Open sea: nothing
// is there.
const blockHalf = 0.05

// block renders a synthetic map of 100,000 people, one dot each, opaque,
// filling the square above so densely that the ground shows through only
// where a seam lets it; with @2x tiles. Its area is cut at 180° into two
// rings, as RFC 7946 §3.1.9 asks, and its map.json bounds cross 180°
// (RFC 7946 §5.2: west > east).
func block(t *testing.T) *viewerFixture {
	t.Helper()
	blockMap.once.Do(func() {
		dir := filepath.Join(tmpRoot, "block")
		h := blockHalf
		east := orb.Ring{{180 - h, -h}, {180, -h}, {180, h}, {180 - h, h}, {180 - h, -h}}
		west := orb.Ring{{-180, -h}, {-180 + h, -h}, {-180 + h, h}, {-180, h}, {-180, -h}}
		layer := &geo.Layer{Path: "synthetic", Name: "synthetic", Fields: []string{"n"}, Features: []geo.Feature{{
			Index: 0, ID: "block", Geometry: orb.MultiPolygon{{east}, {west}}, Props: map[string]any{"n": int64(100000)},
		}}}
		text := "title = \"A dense square across 180° (synthetic)\"\ncredit = \"Synthetic test data.\"\npeople_per_dot = 1\nseed = 3\n" +
			"[input]\nfile = \"synthetic.geojson\"\n[tiles]\nmin_zoom = 10\nmax_zoom = 14\nsize = 256\n" +
			"[dots]\ndiameter = 4\nmin_diameter = 1\nopacity = 1\n" +
			"[[category]]\nkey = \"n\"\nlabel = \"People\"\ncolor = \"#0072B2\"\nfields = [\"n\"]\n"
		m, err := mapfile.Parse(filepath.Join(dir, "map.toml"), []byte(text))
		if err != nil {
			blockMap.err = err
			return
		}
		m.Out = dir
		sum, err := mapjob.Run(context.Background(), m, mapjob.Options{Layer: layer, HiDPI: true})
		if err != nil {
			blockMap.err = err
			return
		}
		md := sum.Metadata
		md.Bounds = [4]float64{180 - h, -h, -180 + h, h}
		md.Center = [3]float64{180, 0, 12}
		blockMap.Layers = []layerFixture{{Map: m, Meta: md}}
		blockMap.Dir = dir
		blockMap.err = tiles.WriteViewer(dir, md)
	})
	if blockMap.err != nil {
		t.Fatalf("block fixture: %v", blockMap.err)
	}
	return &blockMap
}
