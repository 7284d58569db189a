package mapjob

import (
	"bytes"
	"context"
	"fmt"
	"image/color"
	"image/png"
	"math"
	"sort"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/theme"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// Metadata describes the finished map. It names the @2x tile template
// when s counts @2x tiles, so a one-machine render, the final step of a
// sharded one and a batch extent all say the same.
func Metadata(m *mapfile.Map, s *Summary) *tiles.Metadata {
	b := s.Bounds
	md := &tiles.Metadata{
		Format: "stipple-map/1", Version: Version, Title: m.Title, Credit: m.Credit,
		Bounds:  [4]float64{b.Min[0], b.Min[1], b.Max[0], b.Max[1]},
		MinZoom: m.Tiles.MinZoom, MaxZoom: m.Tiles.MaxZoom, TileSize: m.Tiles.Size,
		Tiles: tiles.TilesTemplate, PeoplePerDot: m.PeoplePerDot, Seed: m.Seed,
		Note: m.Theme.DotNote(m.PeoplePerDot), Caution: cautionOf(theme.Or(m.Theme).Text, s), Theme: m.Theme,
		TileCount: s.Tiles.Tiles, TileBytes: s.Tiles.Bytes, PerZoom: s.Tiles.PerZoom,
	}
	if s.Tiles.Tiles2x > 0 {
		md.Tiles2x = tiles.Tiles2xTemplate
	}
	c := ExtentOfBound(b).Centre()
	md.Center = [3]float64{c[0], c[1], float64(FitZoom(b, 900, 600, m.Tiles.MinZoom, m.Tiles.MaxZoom))}
	for k, c := range m.Categories {
		md.Categories = append(md.Categories, tiles.Category{
			Key: c.Key, Label: c.Label, Color: strings.ToUpper(c.Color), People: s.People[k],
			DotsExpected: s.People[k] / m.PeoplePerDot, DotsDrawn: s.Dots[k], DotsBeyond: s.Beyond[k],
		})
	}
	md.NotDrawn.People = s.NotDrawn
	md.NotDrawn.RowsWithoutArea = s.RowsWithoutArea
	md.NotDrawn.BeyondTileLimit = s.BeyondPeople
	md.NotDrawn.Dots = int(math.Round(s.NotDrawn / m.PeoplePerDot))
	md.NotDrawn.Features = s.Problems
	if len(md.NotDrawn.Features) > 100 {
		md.NotDrawn.Features = md.NotDrawn.Features[:100]
	}
	if md.NotDrawn.Features == nil {
		md.NotDrawn.Features = []string{}
	}
	sort.Strings(md.NotDrawn.Features)
	md.Methods = MethodsOf(m, s)
	return md
}

// FitZoom is the deepest zoom at which bound b fits a w × h pixel view;
// b's west may exceed its east (across the antimeridian).
func FitZoom(b orb.Bound, w, h, minZ, maxZ int) int {
	for z := maxZ; z > minZ; z-- {
		nw := dotstoreWorld(b.Min[0], b.Max[1], z)
		se := dotstoreWorld(b.Max[0], b.Min[1], z)
		dx := se[0] - nw[0]
		if b.Min[0] > b.Max[0] {
			dx += 256 * math.Exp2(float64(z)) // across the antimeridian
		}
		if dx <= float64(w) && se[1]-nw[1] <= float64(h) {
			return z
		}
	}
	return minZ
}

func dotstoreWorld(lon, lat float64, z int) [2]float64 {
	x, y := dotstore.World(lon, lat)
	s := 256 * math.Exp2(float64(z)) / dotstore.WorldSize
	return [2]float64{float64(x) * s, float64(y) * s}
}

// LegendOf is the legend for the metadata.
func LegendOf(md *tiles.Metadata, colors []color.NRGBA) render.Legend {
	th := theme.Or(md.Theme)
	l := render.Legend{Title: md.Title, Note: md.Note, Caution: md.Caution, Credit: md.Credit, NotDrawn: tiles.NotDrawnText(md),
		CreditPrefix: th.Text.CreditPrefix, Font: th.Font}
	for k, c := range md.Categories {
		l.Entries = append(l.Entries, render.LegendEntry{Label: c.Label, Color: colors[k], People: c.People, Dots: c.DotsDrawn})
	}
	return l
}

// PutFurniture writes a map's furniture into out, after its tiles: the
// legend as legend.png (300 px wide), legend@2x.png (the same at twice the
// pixels) and legend.svg (text kept as text, for print and CMS work), the
// TileJSON 3.0.0 descriptor (tilejson.json), the methods note
// (methods.txt), a still of the whole map (still.png, the no-script
// fallback of embed.html), the viewer's scripts, alt.txt and the tile index
// listed from out; then the entry points: map.json, and last the pages
// (embed.html, index.html). md.Legend is set to the legends' names. Every command that makes a map writes its furniture here, so a
// folder, a bucket, a shard's final step and a batch extent get the same
// files.
func PutFurniture(ctx context.Context, out sink.Sink, md *tiles.Metadata, colors []color.NRGBA) error {
	leg := LegendOf(md, colors)
	md.Legend = md.Legend[:0]
	for _, s := range []struct {
		name  string
		scale float64
	}{{"legend.png", 1}, {"legend@2x.png", 2}} {
		var buf bytes.Buffer
		if err := png.Encode(&buf, render.DrawLegend(leg, 300, s.scale)); err != nil {
			return fmt.Errorf("output: %s: %w", s.name, err)
		}
		if err := sink.PutFile(ctx, out, s.name, buf.Bytes()); err != nil {
			return err
		}
		md.Legend = append(md.Legend, s.name)
	}
	if err := sink.PutFile(ctx, out, "legend.svg", render.LegendSVG(leg, 300)); err != nil {
		return err
	}
	md.Legend = append(md.Legend, "legend.svg")
	if err := tiles.PutTileJSON(ctx, out, md); err != nil {
		return err
	}
	if err := sink.PutFile(ctx, out, tiles.MethodsFile, []byte(tiles.MethodsText(md))); err != nil {
		return err
	}
	if err := putStill(ctx, out, md, leg); err != nil {
		return err
	}
	// map.json is an entry point: it is written after the tile index and
	// before the pages, so the folder never offers it over an index of
	// another map's tiles.
	return tiles.PutViewerThen(ctx, out, []tiles.ViewerLayer{{Meta: md}}, func(ctx context.Context) error {
		return tiles.PutMetadata(ctx, out, md)
	})
}

// EstimatesCaution is what the default theme adds to the caution of a map
// whose counts are survey estimates with published margins of error: a
// space and theme.Text.CautionEstimates.
const EstimatesCaution = " These counts are survey estimates with margins of error: small differences between areas may not be real."

// cautionOf is the map's caution: the theme's, and its word on estimates
// when the counts carry margins of error.
func cautionOf(tx theme.Text, s *Summary) string {
	if s.Estimates {
		return tx.Caution + " " + tx.CautionEstimates
	}
	return tx.Caution
}
