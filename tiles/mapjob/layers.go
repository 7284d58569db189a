package mapjob

import (
	"context"
	"fmt"
	"maps"
	"time"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/crosswalk"
	"github.com/stipple-maps/stipple/geo/read"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// LayerResult is what RunLayers did for one [[layer]].
type LayerResult struct {
	// Key and Label are the layer's; Dir is its subfolder of the output.
	Key, Label, Dir string
	// Map is the map the layer rendered (mapfile.Map.LayerMap, with the
	// carried counts when the layer has its own areas).
	Map *mapfile.Map
	// Input is what was loaded for it, on the map's areas.
	Input   *Input
	Summary *Summary
	// Crosswalk reports how the layer's counts were carried onto the
	// map's areas; nil when they were counted on them.
	Crosswalk *crosswalk.Report
	// AreaWeighted is set when the crosswalk was made from the areas'
	// overlaps (no relationship table given).
	AreaWeighted bool
}

// LayersSummary is what RunLayers did.
type LayersSummary struct {
	Layers    []LayerResult
	OutputDir string
	Elapsed   time.Duration
}

// carriedPrefix names the properties that hold a layer's carried counts.
const carriedPrefix = "stipple:carried:"

// LoadLayer loads layer i of m onto areas, the map's own areas (read from
// m.Input.File by the caller, shared by every layer and left unchanged):
// with the layer's table when it gives one, or, when the layer names
// older areas of its own, their counts carried onto areas by its
// crosswalk or, without one, by area (crosswalk.AreaWeights). It returns
// the map the layer renders and its input; the report is nil when nothing
// was carried.
func LoadLayer(m *mapfile.Map, i int, areas *geo.Layer) (*mapfile.Map, *Input, *crosswalk.Report, bool, error) {
	lm := m.LayerMap(i)
	l := m.Layers[i]
	if l.Input == nil || l.Input.File == "" {
		in, err := Load(lm, copyAreas(areas))
		return lm, in, nil, false, err
	}
	// The older areas and their counts, as a map of their own.
	old := *lm
	old.Input = *l.Input
	old.Input.Mask = nil
	oldIn, err := Load(&old, nil)
	if err != nil {
		return nil, nil, nil, false, err
	}
	var pairs []crosswalk.Pair
	sources := ids(oldIn.Layer, nil)
	targets := ids(areas, nil)
	byArea := l.Crosswalk == nil
	if byArea {
		pairs = crosswalk.AreaWeights(oldIn.Layer, areas)
	} else {
		c := l.Crosswalk
		opt := c.Options()
		pairs, err = crosswalk.Read(m.Resolve(c.File), crosswalk.Options{Source: c.Source, Target: c.Target, Weight: c.Weight, Table: opt})
		if err != nil {
			return nil, nil, nil, false, err
		}
		sources, targets = ids(oldIn.Layer, opt.Normalize), ids(areas, opt.Normalize)
	}
	counts, rep, err := crosswalk.Apply(sources, oldIn.Counts, targets, pairs)
	if err != nil {
		return nil, nil, nil, false, fmt.Errorf("%s: layer %q: %w", m.Path, l.Key, err)
	}
	// The carried counts become the areas' properties, one per category.
	carried := copyAreas(areas)
	cats := make([]mapfile.Category, len(lm.Categories))
	for k, c := range lm.Categories {
		c.Fields = []string{carriedPrefix + c.Key}
		cats[k] = c
	}
	for j := range carried.Features {
		f := &carried.Features[j]
		f.Props = map[string]any{}
		for k, c := range cats {
			f.Props[c.Fields[0]] = counts[j][k]
		}
	}
	lm.Categories = cats
	lm.Input.Table = nil
	in, err := Load(lm, carried)
	if err != nil {
		return nil, nil, nil, false, err
	}
	return lm, in, rep, byArea, nil
}

func ids(l *geo.Layer, norm func(string) string) []string {
	out := make([]string, len(l.Features))
	for i, f := range l.Features {
		out[i] = f.ID
		if norm != nil {
			out[i] = norm(f.ID)
		}
	}
	return out
}

// copyAreas copies a layer deep enough that a table join, which sets
// properties, leaves the original as it was (geometry is shared).
func copyAreas(l *geo.Layer) *geo.Layer {
	c := *l
	c.Features = make([]geo.Feature, len(l.Features))
	for i, f := range l.Features {
		f.Props = maps.Clone(f.Props)
		c.Features[i] = f
	}
	return &c
}

// RunLayers renders a map with [[layer]] entries into one local folder:
// each layer into the subfolder of its key, through Run, and then, in the
// folder itself, one viewer over them all (tiles.PutViewer) with the layer
// switch and the compare divider. Every layer is drawn on the map's areas
// with the map's seed and masks, so dots stay in step between layers (see
// README, "Comparing two counts"). opt.Layer, when set, is the map's
// areas; opt.Input is not used (each layer loads its own).
func RunLayers(ctx context.Context, m *mapfile.Map, opt Options) (*LayersSummary, error) {
	start := time.Now()
	if len(m.Layers) == 0 {
		return nil, fmt.Errorf("%s: no [[layer]] entries", m.Path)
	}
	if sink.IsBucketURL(m.Out) {
		return nil, fmt.Errorf("%s: key out: a map with [[layer]] entries renders into a local folder; %q is a bucket (render there, then copy the folder)", m.Path, m.Out)
	}
	logf := func(format string, a ...any) {
		if opt.Log != nil {
			fmt.Fprintf(opt.Log, format+"\n", a...)
		}
	}
	release, err := Claim(m.Out, opt.Force)
	if err != nil {
		return nil, err
	}
	defer release()
	out := sink.NewDir(m.Out)
	// The folder offers no viewer while its layers are being replaced.
	if err := Unpublish(ctx, out); err != nil {
		return nil, err
	}
	areas := opt.Layer
	if areas == nil {
		res, err := read.File(m.Resolve(m.Input.File), read.Options{IDField: m.Input.ID, Layer: m.Input.Layer})
		if err != nil {
			return nil, err
		}
		areas = res.Layer
	}
	sum := &LayersSummary{OutputDir: m.Out}
	var vl []tiles.ViewerLayer
	for i, l := range m.Layers {
		lm, in, rep, byArea, err := LoadLayer(m, i, areas)
		if err != nil {
			return nil, err
		}
		label := m.LayerLabel(i)
		logf("layer %s (%s):", l.Key, label)
		if rep != nil {
			how := "area weights (no crosswalk given)"
			if !byArea {
				how = "the crosswalk " + l.Crosswalk.File
			}
			logf("carried from %s by %s", l.Input.File, how)
			logf("%s", trimNL(rep.String()))
		}
		lopt := opt
		lopt.Layer, lopt.Input = nil, in
		s, err := Run(ctx, lm, lopt)
		if err != nil {
			return nil, fmt.Errorf("layer %q: %w", l.Key, err)
		}
		md := *s.Metadata
		md.Layer, md.LayerLabel = l.Key, label
		vl = append(vl, tiles.ViewerLayer{Dir: l.Key, Meta: &md})
		sum.Layers = append(sum.Layers, LayerResult{Key: l.Key, Label: label, Dir: lm.Out, Map: lm, Input: in, Summary: s, Crosswalk: rep, AreaWeighted: byArea})
	}
	if err := tiles.PutViewer(ctx, out, vl); err != nil {
		return nil, err
	}
	sum.Elapsed = time.Since(start)
	logf("wrote the viewer over %d layers in %s", len(vl), m.Out)
	return sum, nil
}

func trimNL(s string) string {
	for len(s) > 0 && s[len(s)-1] == '\n' {
		s = s[:len(s)-1]
	}
	return s
}
