package batch

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// Picked is what an extent selected from the layer.
type Picked struct {
	// Features are indexes into the layer, ascending.
	Features []int
	// Bound is the extent's box: its bbox, or the union of its areas'
	// bounds.
	Bound orb.Bound
	// Rule says in words how the areas were chosen, for the legend's
	// fine print and extent.json.
	Rule string
}

// RepresentativePoint is the point a bbox extent tests against its box: the
// planar area centroid of the feature's polygons in longitude/latitude
// degrees (holes subtracted), the centroid GEOS computes (ST_Centroid). ok is
// false for a feature without area.
func RepresentativePoint(g orb.MultiPolygon) (p orb.Point, ok bool) {
	if len(g) == 0 {
		return orb.Point{}, false
	}
	c, a := planar.CentroidArea(g)
	if !(a > 0) || math.IsNaN(c[0]) || math.IsNaN(c[1]) {
		return orb.Point{}, false
	}
	return c, true
}

// inBox is the half-open test: west and south edges in, east and north out.
// A box whose west exceeds its east crosses the antimeridian (RFC 7946
// §5.2): it holds the longitudes from west to 180° and from −180° to east.
func inBox(b [4]float64, p orb.Point) bool {
	if p[1] < b[1] || p[1] >= b[3] {
		return false
	}
	if b[0] > b[2] {
		return p[0] >= b[0] || p[0] < b[2]
	}
	return p[0] >= b[0] && p[0] < b[2]
}

// Pick selects the extent's areas from layer. An id or value that matches
// no area, a missing field, or a box holding no area's point is an error
// that names the extent.
func Pick(e *Extent, layer *geo.Layer) (*Picked, error) {
	p := &Picked{}
	switch e.Select {
	case ByBox:
		for i := range layer.Features {
			if c, ok := RepresentativePoint(layer.Features[i].Geometry); ok && inBox(e.BBox, c) {
				p.Features = append(p.Features, i)
			}
		}
		if len(p.Features) == 0 {
			return nil, fmt.Errorf("bbox %v: no area's centre lies in the box", e.BBox)
		}
		p.Bound = orb.Bound{Min: orb.Point{e.BBox[0], e.BBox[1]}, Max: orb.Point{e.BBox[2], e.BBox[3]}}
		p.Rule = fmt.Sprintf("the %d areas whose centre lies in the box %g, %g to %g, %g (west, south to east, north)",
			len(p.Features), e.BBox[0], e.BBox[1], e.BBox[2], e.BBox[3])
		return p, nil
	case ByIDs:
		index := make(map[string]int, len(layer.Features))
		for i, f := range layer.Features {
			index[f.ID] = i
		}
		var missing []string
		for _, id := range e.IDs {
			i, ok := index[id]
			if !ok {
				missing = append(missing, fmt.Sprintf("%q", id))
				continue
			}
			p.Features = append(p.Features, i)
		}
		if len(missing) > 0 {
			more := ""
			if len(missing) > 5 {
				more = fmt.Sprintf(" and %d more", len(missing)-5)
				missing = missing[:5]
			}
			return nil, fmt.Errorf("ids: no area in %s has id %s%s", layer.Path, strings.Join(missing, ", "), more)
		}
		p.Rule = fmt.Sprintf("the %d areas listed by id", len(p.Features))
	case ByField:
		known := false
		for _, f := range layer.Fields {
			known = known || f == e.Field
		}
		if !known {
			return nil, fmt.Errorf("field %q: %s has no such field (it has %s)", e.Field, layer.Path, strings.Join(layer.Fields, ", "))
		}
		want := map[string]int{}
		for _, v := range e.Values {
			want[v] = 0
		}
		for i, f := range layer.Features {
			v := geo.Text(f.Props[e.Field])
			if n, ok := want[v]; ok {
				want[v] = n + 1
				p.Features = append(p.Features, i)
			}
		}
		for _, v := range e.Values {
			if want[v] == 0 {
				return nil, fmt.Errorf("field %q: no area has the value %q", e.Field, v)
			}
		}
		vals := make([]string, len(e.Values))
		for i, v := range e.Values {
			vals[i] = fmt.Sprintf("%q", v)
		}
		p.Rule = fmt.Sprintf("the %d areas whose %s is %s", len(p.Features), e.Field, strings.Join(vals, " or "))
	}
	slices.Sort(p.Features)
	// The areas' extent, across the antimeridian where they straddle it.
	var parts []orb.Bound
	for _, i := range p.Features {
		for _, poly := range layer.Features[i].Geometry {
			if len(poly) > 0 && len(poly[0]) > 0 {
				parts = append(parts, poly.Bound())
			}
		}
	}
	b := mapjob.BoundOf(parts)
	if !(b.Min[1] <= b.Max[1]) {
		return nil, fmt.Errorf("%s: none of its %d areas has a geometry to map", e.Select, len(p.Features))
	}
	p.Bound = b
	return p, nil
}

// boundOf turns [west, south, east, north] into a bound.
func boundOf(b [4]float64) orb.Bound {
	return orb.Bound{Min: orb.Point{b[0], b[1]}, Max: orb.Point{b[2], b[3]}}
}
