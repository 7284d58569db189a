package tiles

import (
	"bytes"
	"context"
	"embed"
	"encoding/json"
	"fmt"
	"html/template"
	"net/url"
	"os"
	"path"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/theme"
	"github.com/stipple-maps/stipple/tiles/sink"
)

//go:embed viewer/page.html viewer/viewer.js viewer/viewer.css viewer/reference.js
var viewerFiles embed.FS

// Files the viewer writes beside the tiles.
const (
	ViewerPage = "index.html"  // the full-page viewer
	EmbedPage  = "embed.html"  // the same map for an iframe, no page chrome
	AltFile    = "alt.txt"     // plain-text description (AltText)
	DataScript = "map-data.js" // viewer data, as a script (works from file://)
	IndexDir   = "tile-index"  // which tiles exist, one script per tile set and zoom
	viewerJS   = "viewer.js"   //
	viewerCSS  = "viewer.css"  //
	dataFormat = "stipple-viewer/1"
)

// ViewerLayer is one map a viewer shows.
type ViewerLayer struct {
	// Dir is the folder that holds the layer's map.json and tiles, relative
	// to the viewer's folder, with forward slashes; "" is the viewer's own
	// folder.
	Dir string
	// Meta is the layer's metadata; its Tiles and Outline templates are
	// relative to Dir.
	Meta *Metadata
}

// WriteViewer writes the viewer for a single map whose tiles are in dir
// itself. It is WriteViewerLayers(dir, []ViewerLayer{{Meta: m}}).
func WriteViewer(dir string, m *Metadata) error {
	return WriteViewerLayers(dir, []ViewerLayer{{Meta: m}})
}

// WriteViewerLayers is PutViewer into the local folder dir.
func WriteViewerLayers(dir string, layers []ViewerLayer) error {
	return PutViewer(context.Background(), sink.NewDir(dir), layers)
}

// PutViewer writes, into out, a viewer over one or more maps:
// index.html (full page), embed.html (for an iframe), viewer.js, viewer.css,
// map-data.js, alt.txt and tile-index/ (which tiles exist, so the viewer
// never asks for a tile that was not written). The layers' tiles must be
// written first: out is listed to build the index, so a folder and a
// bucket get the same viewer.
//
// A layer whose Metadata.Tiles2x names high-density tiles has them asked
// for on screens of more than one device pixel per CSS pixel, drawn at the
// same size, with the 1× tile as the fallback; the index lists the 1×
// tiles, so Tiles2x must name files in the same folders.
//
// With two or more layers the viewer shows a layer switch and a compare
// mode (two layers side by side with a draggable divider). Layer keys
// (Metadata.Layer, or "1", "2", … when empty) must be unique.
//
// Every text from the map file is escaped where it lands: html/template for
// the pages (the legend is written into the HTML, not built by script),
// encoding/json for map-data.js, which carries no map-file text but keys.
func PutViewer(ctx context.Context, out sink.Sink, layers []ViewerLayer) error {
	return PutViewerThen(ctx, out, layers, nil)
}

// PutViewerThen is PutViewer that calls beforePages, when not nil, after
// every file of the viewer but its pages is written and before the pages
// (embed.html, then index.html) are. A map writes its map.json there, so
// that map.json never describes tiles the tile index does not yet list,
// and the pages never appear without map.json.
func PutViewerThen(ctx context.Context, out sink.Sink, layers []ViewerLayer, beforePages func(context.Context) error) error {
	if len(layers) == 0 {
		return fmt.Errorf("tiles: viewer: no layers")
	}
	for i, l := range layers {
		if l.Meta == nil {
			return fmt.Errorf("tiles: viewer: layer %d has no metadata", i+1)
		}
	}
	data := viewerData{Format: dataFormat}
	th := theme.Or(layers[0].Meta.Theme)
	title := layers[0].Meta.Title
	pages := pageData{Title: title, Multi: len(layers) > 1, CautionShort: th.Text.CautionShort, T: th.Text,
		MapLabel: theme.Fill(th.Text.ViewerMapLabel, "title", title), StillAlt: theme.Fill(th.Text.ViewerStillAlt, "title", title)}
	keys := map[string]bool{}
	var sets []tileSet
	for i, l := range layers {
		m := l.Meta
		prefix, err := layerPrefix(l.Dir)
		if err != nil {
			return fmt.Errorf("tiles: viewer: layer %d: %w", i+1, err)
		}
		key := m.Layer
		if key == "" {
			key = strconv.Itoa(i + 1)
		}
		if keys[key] {
			return fmt.Errorf("tiles: viewer: layer %d: key %q is also another layer's", i+1, key)
		}
		keys[key] = true
		label := m.LayerLabel
		if label == "" {
			label = key
		}
		vl := viewerLayerData{
			Key: key, Bounds: m.Bounds, Center: m.Center, MinZoom: m.MinZoom, MaxZoom: m.MaxZoom, Outline: -1,
		}
		dots, err := indexSet(ctx, out, l.Dir, prefix, m.Tiles, len(sets), m.MinZoom, m.MaxZoom)
		if err != nil {
			return fmt.Errorf("tiles: viewer: layer %d: %w", i+1, err)
		}
		if m.Tiles2x != "" {
			if dots.tiles2x, err = denseURL(prefix, m.Tiles, m.Tiles2x); err != nil {
				return fmt.Errorf("tiles: viewer: layer %d: %w", i+1, err)
			}
		}
		vl.Dots = len(sets)
		sets = append(sets, dots)
		if m.Outline != "" {
			ol, err := indexSet(ctx, out, l.Dir, prefix, m.Outline, len(sets), 0, 24)
			if err != nil {
				return fmt.Errorf("tiles: viewer: layer %d outline: %w", i+1, err)
			}
			if len(ol.zooms) > 0 {
				vl.Outline = len(sets)
				sets = append(sets, ol)
				pages.Outlines = true
			}
		}
		data.Layers = append(data.Layers, vl)
		pages.Layers = append(pages.Layers, pageLayer(i, key, label, m, th.Text))
	}
	for _, s := range sets {
		data.Sets = append(data.Sets, s.public())
		for z, idx := range s.index {
			b, err := json.Marshal(idx)
			if err != nil {
				return fmt.Errorf("tiles: viewer: %w", err)
			}
			js := fmt.Sprintf("stippleTileIndex(%d,%d,%s);\n", s.id, z, b)
			if err := sink.PutFile(ctx, out, fmt.Sprintf("%s/%d-%d.js", IndexDir, s.id, z), []byte(js)); err != nil {
				return err
			}
		}
	}

	// Index scripts of zooms this viewer no longer lists (a rerun with
	// fewer zooms) are removed, so the folder describes only its tiles.
	want := map[string]bool{}
	for _, s := range sets {
		for z := range s.index {
			want[fmt.Sprintf("%s/%d-%d.js", IndexDir, s.id, z)] = true
		}
	}
	var stale []string
	if err := out.List(ctx, IndexDir+"/", func(p string, _ int64) error {
		if !want[p] {
			stale = append(stale, p)
		}
		return nil
	}); err != nil {
		return fmt.Errorf("tiles: viewer: %w", err)
	}
	for _, p := range stale {
		if err := out.Delete(ctx, p); err != nil {
			return fmt.Errorf("tiles: viewer: %w", err)
		}
	}
	// The scripts, styles and data first; the pages, which are the entry
	// points a reader opens, last, so a folder being published never
	// offers a page whose files are not there yet.
	if ok, err := hasReference(ctx, out); err != nil {
		return fmt.Errorf("tiles: viewer: %w", err)
	} else if ok {
		data.Reference = ReferenceScript
	}
	for _, name := range []string{viewerJS, viewerCSS, refJS} {
		b, err := viewerFiles.ReadFile("viewer/" + name)
		if err != nil {
			return fmt.Errorf("tiles: %w", err)
		}
		if err := sink.PutFile(ctx, out, name, b); err != nil {
			return err
		}
	}
	js, err := json.Marshal(data)
	if err != nil {
		return fmt.Errorf("tiles: %w", err)
	}
	if err := sink.PutFile(ctx, out, DataScript, []byte("window.stippleMap = "+string(js)+";\n")); err != nil {
		return err
	}
	metas := make([]*Metadata, len(layers))
	for i, l := range layers {
		metas[i] = l.Meta
	}
	if err := sink.PutFile(ctx, out, AltFile, []byte(AltText(metas...))); err != nil {
		return err
	}
	if err := putTheme(ctx, out, th); err != nil {
		return err
	}
	tmpl, err := template.ParseFS(viewerFiles, "viewer/page.html")
	if err != nil {
		return fmt.Errorf("tiles: viewer template: %w", err)
	}
	if beforePages != nil {
		if err := beforePages(ctx); err != nil {
			return err
		}
	}
	for _, p := range []struct {
		name  string
		embed bool
	}{{EmbedPage, true}, {ViewerPage, false}} {
		pages.Embed = p.embed
		var buf bytes.Buffer
		if err := tmpl.Execute(&buf, pages); err != nil {
			return fmt.Errorf("tiles: viewer: %w", err)
		}
		if err := sink.PutFile(ctx, out, p.name, buf.Bytes()); err != nil {
			return err
		}
	}
	return nil
}

// viewerData is map-data.js: numbers, keys and paths only. Everything the
// viewer shows as text is in the HTML.
type viewerData struct {
	Format string            `json:"format"`
	Layers []viewerLayerData `json:"layers"`
	Sets   []tileSetData     `json:"sets"`
	// Reference is ReferenceScript when the folder has reference layers.
	Reference string `json:"reference,omitempty"`
}

type viewerLayerData struct {
	Key     string     `json:"key"`
	Bounds  [4]float64 `json:"bounds"`
	Center  [3]float64 `json:"center"`
	MinZoom int        `json:"min_zoom"`
	MaxZoom int        `json:"max_zoom"`
	Dots    int        `json:"dots"`    // number of the dot tile set
	Outline int        `json:"outline"` // number of the outline tile set, -1 for none
}

type tileSetData struct {
	// Tiles is the URL template relative to the viewer, e.g. "2010/{z}/{x}/{y}.png".
	Tiles string `json:"tiles"`
	// Tiles2x is the URL template of the same tiles at twice the pixels,
	// which the viewer asks for on high-density screens; "" for none.
	Tiles2x string `json:"tiles_2x,omitempty"`
	// Index is the URL template of the index scripts, with {z}.
	Index string `json:"index"`
	Zooms []int  `json:"zooms"` // zooms that have tiles, ascending
}

// tileIndex lists the tiles of one zoom that exist: rows y0, y0+1, … each
// as alternating run lengths of absent and present columns from x0.
type tileIndex struct {
	X0   int     `json:"x0"`
	Y0   int     `json:"y0"`
	Rows [][]int `json:"rows"`
}

type tileSet struct {
	id      int
	tiles   string
	tiles2x string
	zooms   []int
	index   map[int]tileIndex
}

func (s tileSet) public() tileSetData {
	return tileSetData{Tiles: s.tiles, Tiles2x: s.tiles2x, Index: IndexDir + "/" + strconv.Itoa(s.id) + "-{z}.js", Zooms: s.zooms}
}

// layerPrefix checks a layer folder and returns it as an escaped URL path
// prefix ("" or "a%20b/").
func layerPrefix(dir string) (string, error) {
	if dir == "" || dir == "." {
		return "", nil
	}
	if strings.Contains(dir, `\`) || path.IsAbs(dir) || filepath.IsAbs(dir) {
		return "", fmt.Errorf("folder %q: want a relative path with forward slashes", dir)
	}
	clean := path.Clean(dir)
	if clean == ".." || strings.HasPrefix(clean, "../") {
		return "", fmt.Errorf("folder %q is outside the viewer's folder", dir)
	}
	var parts []string
	for _, p := range strings.Split(clean, "/") {
		parts = append(parts, url.PathEscape(p))
	}
	return strings.Join(parts, "/") + "/", nil
}

// splitTemplate splits "P{z}/{x}/{y}.EXT" into P and .EXT.
func splitTemplate(t string) (prefix, ext string, err error) {
	i := strings.Index(t, "{z}/{x}/{y}")
	if i < 0 || strings.Count(t, "{z}") != 1 || strings.Contains(t[i+11:], "/") || strings.Contains(t[i+11:], "{") {
		return "", "", fmt.Errorf("tile template %q: want PREFIX{z}/{x}/{y}.png", t)
	}
	prefix = t[:i]
	if strings.Contains(prefix, "..") || strings.HasPrefix(prefix, "/") || strings.Contains(prefix, "{") {
		return "", "", fmt.Errorf("tile template %q: want a path relative to map.json", t)
	}
	return prefix, t[i+11:], nil
}

// tileURL turns template t (relative to a layer folder whose URL prefix is
// urlPrefix) into a URL template relative to the viewer, escaped.
func tileURL(urlPrefix, t string) (string, error) {
	prefix, ext, err := splitTemplate(t)
	if err != nil {
		return "", err
	}
	var parts []string
	for _, p := range strings.Split(strings.TrimSuffix(prefix, "/"), "/") {
		if p != "" {
			parts = append(parts, url.PathEscape(p))
		}
	}
	u := urlPrefix + strings.Join(parts, "/")
	if len(parts) > 0 {
		u += "/"
	}
	return u + "{z}/{x}/{y}" + url.PathEscape(ext), nil
}

// denseURL is the viewer's URL template for high-density template t2x. The
// viewer asks for a dense tile only where the index of template t lists
// one, so both must name the same folder and a different file.
func denseURL(urlPrefix, t, t2x string) (string, error) {
	p1, ext1, err := splitTemplate(t)
	if err != nil {
		return "", err
	}
	p2, ext2, err := splitTemplate(t2x)
	if err != nil {
		return "", fmt.Errorf("tiles_2x: %w", err)
	}
	if p2 != p1 || ext2 == ext1 {
		return "", fmt.Errorf("tiles_2x template %q: want the folder of tiles %q and another file suffix", t2x, t)
	}
	return tileURL(urlPrefix, t2x)
}

// indexSet lists which tiles of template t (relative to layer folder
// layerDir of out) exist, for zooms minZ..maxZ.
func indexSet(ctx context.Context, out sink.Sink, layerDir, urlPrefix, t string, id, minZ, maxZ int) (tileSet, error) {
	prefix, ext, err := splitTemplate(t)
	if err != nil {
		return tileSet{}, err
	}
	urlT, err := tileURL(urlPrefix, t)
	if err != nil {
		return tileSet{}, err
	}
	set := tileSet{id: id, tiles: urlT, index: map[int]tileIndex{}}
	root := path.Join(layerDir, prefix)
	if root == "." || root == "" {
		root = ""
	} else {
		root += "/"
	}
	for z := minZ; z <= maxZ; z++ {
		idx, ok, err := scanZoom(ctx, out, root+strconv.Itoa(z)+"/", z, ext)
		if err != nil {
			return tileSet{}, err
		}
		if ok {
			set.zooms = append(set.zooms, z)
			set.index[z] = idx
		}
	}
	if set.zooms == nil {
		set.zooms = []int{}
	}
	return set, nil
}

// scanZoom lists zdir{x}/{y}EXT in out; ok is false when there are none.
func scanZoom(ctx context.Context, out sink.Sink, zdir string, z int, ext string) (tileIndex, bool, error) {
	n := 1 << z
	rows := map[int][]int{}
	add := func(xs, name string) {
		name, found := strings.CutSuffix(name, ext)
		if !found {
			return
		}
		x, err1 := strconv.Atoi(xs)
		y, err2 := strconv.Atoi(name)
		if err1 != nil || err2 != nil || x < 0 || x >= n || y < 0 || y >= n {
			return
		}
		rows[y] = append(rows[y], x)
	}
	var err error
	if d, ok := out.(*sink.Dir); ok {
		err = scanDir(ctx, filepath.Join(d.Root(), filepath.FromSlash(zdir)), add)
	} else {
		err = out.List(ctx, zdir, func(p string, _ int64) error {
			xs, name, found := strings.Cut(strings.TrimPrefix(p, zdir), "/")
			if found && !strings.Contains(name, "/") {
				add(xs, name)
			}
			return nil
		})
	}
	if err != nil {
		return tileIndex{}, false, fmt.Errorf("tiles: index: %w", err)
	}
	if len(rows) == 0 {
		return tileIndex{}, false, nil
	}
	return encodeIndex(rows), true, nil
}

// scanDir calls add with the column folder and file name of every regular
// file in zdir/{x}/: the names alone, read from the folders (no stat of
// each file, which on a deep pyramid of millions of tiles took half a
// minute). Temporary files of unfinished writes (sink.IsTemp) are skipped.
func scanDir(ctx context.Context, zdir string, add func(xs, name string)) error {
	cols, err := os.ReadDir(zdir)
	if os.IsNotExist(err) {
		return nil
	}
	if err != nil {
		return err
	}
	for _, c := range cols {
		if !c.IsDir() {
			continue
		}
		if err := ctx.Err(); err != nil {
			return err
		}
		files, err := os.ReadDir(filepath.Join(zdir, c.Name()))
		if err != nil {
			return err
		}
		for _, f := range files {
			if f.Type().IsRegular() && !sink.IsTemp(f.Name()) {
				add(c.Name(), f.Name())
			}
		}
	}
	return nil
}

// encodeIndex turns the present columns of each row into run lengths.
func encodeIndex(rows map[int][]int) tileIndex {
	y0, y1, x0 := int(^uint(0)>>1), -1, int(^uint(0)>>1)
	for y, xs := range rows {
		y0, y1 = min(y0, y), max(y1, y)
		x0 = min(x0, slices.Min(xs))
	}
	idx := tileIndex{X0: x0, Y0: y0, Rows: make([][]int, y1-y0+1)}
	for y := y0; y <= y1; y++ {
		xs := slices.Clone(rows[y])
		slices.Sort(xs)
		xs = slices.Compact(xs)
		runs := []int{}
		at := x0 // next column not yet described
		for i := 0; i < len(xs); {
			j := i
			for j+1 < len(xs) && xs[j+1] == xs[j]+1 {
				j++
			}
			runs = append(runs, xs[i]-at, j-i+1)
			at = xs[j] + 1
			i = j + 1
		}
		idx.Rows[y-y0] = runs
	}
	return idx
}

// pageData feeds viewer/page.html. Every word of the page comes from the
// first layer's theme: T holds the viewer's interface words (the fold
// button's and the compare keys' second words ride on data-* attributes
// for viewer.js), MapLabel and StillAlt are T's sentences with the title
// filled in.
type pageData struct {
	Title        string
	Embed        bool
	Multi        bool
	Outlines     bool
	CautionShort string
	T            theme.Text
	MapLabel     string
	StillAlt     string
	Layers       []legendData
}

type legendData struct {
	N                                int
	Key, Label, Title, Note, Caution string
	Credit, NotDrawn, Total          string
	Rows                             []legendRow
}

type legendRow struct {
	Label, Color, People, Share string
}

// pageLayer is layer i's legend; tx gives the count's tooltip.
func pageLayer(i int, key, label string, m *Metadata, tx theme.Text) legendData {
	d := legendData{N: i, Key: key, Label: label, Title: m.Title, Note: m.Note, Caution: m.Caution, Credit: m.Theme.CreditLine(m.Credit)}
	total := 0.0
	for _, c := range m.Categories {
		total += c.People
	}
	for _, c := range m.Categories {
		share := ""
		if total > 0 {
			share = theme.Fill(tx.ViewerShare, "share", fmt.Sprintf("%.1f%%", 100*c.People/total))
		}
		d.Rows = append(d.Rows, legendRow{Label: c.Label, Color: safeColor(c.Color), People: render.FormatCount(c.People), Share: share})
	}
	d.Total = render.FormatCount(total)
	d.NotDrawn = NotDrawnText(m)
	return d
}

// safeColor passes a #rrggbb colour and turns anything else into grey, so a
// hand-edited map.json cannot put markup or CSS into a swatch.
func safeColor(c string) string {
	if _, err := render.ParseHex(c); err != nil {
		return "#808080"
	}
	return strings.ToLower(c)
}

// NotDrawnText says, in one sentence for a legend, how many people have no
// dot on the map; "" when everyone is drawn.
// The sentences are the map theme's (theme.Text).
func NotDrawnText(m *Metadata) string {
	tx := theme.Or(m.Theme).Text
	var parts []string
	if m.NotDrawn.People > 0 {
		parts = append(parts, theme.Fill(tx.NotDrawn, "people", render.FormatCount(m.NotDrawn.People), "dots", strconv.Itoa(m.NotDrawn.Dots)))
	}
	if m.NotDrawn.BeyondTileLimit > 0 {
		parts = append(parts, theme.Fill(tx.BeyondLimit, "people", render.FormatCount(m.NotDrawn.BeyondTileLimit)))
	}
	if m.NotDrawn.RowsWithoutArea > 0 {
		parts = append(parts, theme.Fill(tx.RowsWithoutArea, "people", render.FormatCount(m.NotDrawn.RowsWithoutArea)))
	}
	return strings.Join(parts, " ")
}
