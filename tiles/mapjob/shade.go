package mapjob

import (
	"fmt"

	"github.com/stipple-maps/stipple/geo/measure"
	"github.com/stipple-maps/stipple/render/theme"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// ShadeBreaks are the class breaks of the diversity shading, in
// normalised entropy: class c holds scores from ShadeBreaks[c] up to (not
// including) ShadeBreaks[c+1]; the last class includes 1.
var ShadeBreaks = [6]float64{0, 0.2, 0.4, 0.6, 0.8, 1}

// ShadeRamp is the diversity shading's colours, one per class, light
// (least mixed) to dark (most mixed): a sand-to-clay ramp at CIELAB L* 95,
// 87, 78, 68 and 57 with chroma rising from 7 to 32, a hue apart from the
// default dot palette and light enough for dots to read on.
var ShadeRamp = [5]string{"#f8f0e3", "#e9d7c0", "#dabc9a", "#c89e77", "#b27d59"}

// ShadeKeyTitle is the default theme's heading of the shading's key in
// the viewer and on print pages (theme.Text.ShadeKeyTitle).
const ShadeKeyTitle = "Diversity of each area (0 = one group, 1 = all groups equal)"

// ShadeClass is the class (0 to 4) of a normalised entropy score v.
func ShadeClass(v float64) int {
	for c := len(ShadeRamp) - 1; c > 0; c-- {
		if v >= ShadeBreaks[c] {
			return c
		}
	}
	return 0
}

// shadeLabel is class c's key label, "0.2–0.4".
func shadeLabel(c int) string {
	return fmt.Sprintf("%.1f–%.1f", ShadeBreaks[c], ShadeBreaks[c+1])
}

// DiversityShade is the diversity shading of the areas idx (all when nil)
// as reference layers under the dots, one per class in class order, each
// with its key label: every area with people is one polygon (each part
// of a multipart area one) of its class's colour. Areas without people
// are not shaded. The key's heading is the map theme's. It returns nil when the map does not ask for shading
// (shade_diversity).
func DiversityShade(in *Input, m *mapfile.Map, idx []int) ([]tiles.Reference, error) {
	if !m.ShadeDiversity {
		return nil, nil
	}
	counts, rows := countsOf(in, idx)
	areas, err := measure.Areas(counts)
	if err != nil {
		return nil, err
	}
	out := make([]tiles.Reference, len(ShadeRamp))
	for c := range out {
		out[c] = tiles.Reference{Kind: mapfile.RefAreas, Color: ShadeRamp[c], Key: shadeLabel(c), KeyTitle: theme.Or(m.Theme).Text.ShadeKeyTitle}
	}
	for r, a := range areas {
		if !(a.People > 0) {
			continue
		}
		c := ShadeClass(a.Normalized)
		out[c].Areas = append(out[c].Areas, in.Layer.Features[rows[r]].Geometry...)
	}
	return out, nil
}
