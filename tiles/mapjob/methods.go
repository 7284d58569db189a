package mapjob

import (
	"context"
	"fmt"
	"image/color"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/theme"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// roundingRule says in a sentence, in the words of tx, what a rounding
// rule does (the rules are sample.Allocate's); "" for an unknown rule.
func roundingRule(tx theme.Text, rule string) string {
	switch rule {
	case "random":
		return tx.MethodsRoundingRandom
	case "exact":
		return tx.MethodsRoundingExact
	}
	return ""
}

// MethodsOf is the methods block of the map m made with summary s: the
// credit, the dot value, the seed and rounding rule, the totals, the
// people not drawn by reason, the repairs made to the areas, and the
// caution, in the words of the map's theme.
func MethodsOf(m *mapfile.Map, s *Summary) *tiles.Methods {
	tx := theme.Or(m.Theme).Text
	rounding := m.Rounding
	if rounding == "" {
		rounding = "random"
	}
	me := &tiles.Methods{
		Source: m.Theme.CreditLine(m.Credit), PeoplePerDot: m.PeoplePerDot, Seed: m.Seed,
		Rounding: rounding, RoundingRule: roundingRule(tx, rounding), Groups: len(m.Categories),
		NotDrawn: []tiles.MethodsNotDrawn{}, GeometryNotes: s.GeometryNotes, Repairs: map[string]int{},
		Caution: tx.Caution,
	}
	for k := range m.Categories {
		if k < len(s.People) {
			me.People += s.People[k]
		}
		if k < len(s.Dots) {
			me.Dots += s.Dots[k]
		}
	}
	for _, l := range s.Lost {
		me.NotDrawn = append(me.NotDrawn, tiles.MethodsNotDrawn{Reason: l.Reason, Areas: l.Areas, People: l.People})
	}
	if s.BeyondPeople > 0 {
		me.NotDrawn = append(me.NotDrawn, tiles.MethodsNotDrawn{People: s.BeyondPeople,
			Reason: tx.MethodsBeyondLimit})
	}
	if s.RowsWithoutArea > 0 {
		me.NotDrawn = append(me.NotDrawn, tiles.MethodsNotDrawn{People: s.RowsWithoutArea,
			Reason: tx.MethodsRowsWithoutArea})
	}
	r := s.Repairs
	for key, n := range map[string]int{
		"closed_rings": r.ClosedRings, "dropped_points": r.DroppedPoints, "dropped_rings": r.DroppedRings,
		"self_intersecting": r.SelfIntersecting, "antimeridian": r.Antimeridian, "polar_rings": r.PolarRings,
		"empty_features": r.EmptyFeatures,
	} {
		if n > 0 {
			me.Repairs[key] = n
		}
	}
	return me
}

// putStill writes still.png: the whole map at 1200 × 675 with its legend,
// composed from the tiles already in out.
func putStill(ctx context.Context, out sink.Sink, md *tiles.Metadata, leg render.Legend) error {
	w, h := tiles.StillSizes["wide"][0], tiles.StillSizes["wide"][1]
	img, _, err := tiles.Still(ctx, out, md, tiles.StillOptions{View: tiles.FitView(md, w, h), Width: w, Height: h, Legend: leg})
	if err != nil {
		return err
	}
	b, err := tiles.StillPNG(img)
	if err != nil {
		return err
	}
	return sink.PutFile(ctx, out, tiles.StillFile, b)
}

// MetadataColors are the colours of md's categories, as the map file gave
// them.
func MetadataColors(md *tiles.Metadata) ([]color.NRGBA, error) {
	cs := make([]color.NRGBA, len(md.Categories))
	for i, c := range md.Categories {
		v, err := render.ParseHex(c.Color)
		if err != nil {
			return nil, fmt.Errorf("category %q: colour %q: %w", c.Key, c.Color, err)
		}
		cs[i] = v
	}
	return cs, nil
}
