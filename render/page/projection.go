package page

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/proj"
)

// ProjectionNames are the names Projection accepts.
var ProjectionNames = []string{"auto", "albers", "laea", "equalearth", "mercator", "platecarree"}

// Projection returns the projection called name for a page showing extent
// (longitude/latitude degrees):
//
//   - "auto" or "": proj.ForExtent's choice (Equal Earth for world and
//     hemisphere-wide extents, Albers with standard parallels by the
//     one-sixth rule, or Lambert Azimuthal for extents near a pole, wider
//     than 90° or straddling the equator);
//   - "albers": Albers Equal-Area Conic on WGS 84, standard parallels by
//     the one-sixth rule (common practice), origin at the extent's centre;
//   - "laea": Lambert Azimuthal Equal-Area on WGS 84 centred on the extent;
//   - "equalearth": Equal Earth (Šavrič, Patterson & Jenny 2018) on WGS 84,
//     centred on the extent's central meridian, for world maps;
//   - "mercator": Web Mercator (EPSG:3857) centred on the extent, the
//     tiles' projection; not equal-area: dots thin out on paper towards
//     the poles;
//   - "platecarree": the equirectangular plate carrée; not equal-area.
func Projection(name string, extent orb.Bound) (proj.Projection, error) {
	west, south, east, north := extent.Min[0], extent.Min[1], extent.Max[0], extent.Max[1]
	for _, v := range []float64{west, south, east, north} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("page: extent %v is not finite", extent)
		}
	}
	span := east - west
	if span < 0 {
		span += 360
	}
	lon0 := west + span/2
	if lon0 > 180 {
		lon0 -= 360
	}
	lat0 := (south + north) / 2
	switch strings.ToLower(name) {
	case "", "auto":
		return proj.ForExtent(extent), nil
	case "albers", "aea":
		r := north - south
		lat1, lat2 := south+r/6, north-r/6
		if r == 0 {
			lat1, lat2 = south, south
		}
		p, err := proj.NewAlbers(proj.WGS84, lat0, lon0, lat1, lat2, 0, 0)
		if err != nil {
			return nil, fmt.Errorf("page: albers for latitudes %.4g to %.4g: %w (try --projection laea)", south, north, err)
		}
		return p, nil
	case "laea":
		return proj.NewLAEA(proj.WGS84, lat0, lon0, 0, 0)
	case "equalearth", "eqearth":
		return proj.NewEqualEarth(proj.WGS84, lon0, 0, 0)
	case "mercator", "webmercator":
		return proj.WebMercator{Lon0: lon0}, nil
	case "platecarree", "plate-carree", "eqc":
		return proj.PlateCarree{}, nil
	}
	return nil, fmt.Errorf("page: unknown projection %q; want one of %s", name, strings.Join(ProjectionNames, ", "))
}

// Describe returns a short human description of p for the page's fine
// print in DefaultWords, e.g. "Albers equal-area conic, standard
// parallels 34.3°S and 34.15°S, WGS 84". It reads the parameters from
// p's PROJ string.
func Describe(p proj.Projection) string { return Words{}.Describe(p) }

// Describe is Describe in w's words (DefaultWords where w is empty).
func (w Words) Describe(p proj.Projection) string {
	w = w.or()
	params := map[string]string{}
	for _, f := range strings.Fields(p.String()) {
		k, v, _ := strings.Cut(strings.TrimPrefix(f, "+"), "=")
		params[k] = v
	}
	lat := func(key string) string {
		v, err := strconv.ParseFloat(params[key], 64)
		if err != nil {
			return "?"
		}
		return w.latitude(v)
	}
	lon := func(key string) string {
		v, err := strconv.ParseFloat(params[key], 64)
		if err != nil {
			v = 0
		}
		return w.longitude(v)
	}
	switch params["proj"] {
	case "aea":
		if params["lat_1"] == params["lat_2"] {
			return fill(w.AlbersOne, "{parallel}", lat("lat_1"))
		}
		return fill(w.Albers, "{parallel1}", lat("lat_1"), "{parallel2}", lat("lat_2"))
	case "laea":
		return fill(w.LAEA, "{latitude}", lat("lat_0"), "{longitude}", lon("lon_0"))
	case "eqearth":
		return fill(w.EqualEarth, "{longitude}", lon("lon_0"))
	case "webmerc", "merc":
		return w.Mercator
	case "eqc":
		return w.PlateCarree
	}
	return p.String()
}

// fill replaces each placeholder of s, given as placeholder, value pairs.
func fill(s string, pairs ...string) string { return strings.NewReplacer(pairs...).Replace(s) }

// latitude writes v degrees of latitude to two decimals: "34.15°S".
func (w Words) latitude(v float64) string {
	h := w.North
	if v < 0 {
		h, v = w.South, -v
	}
	return fill(h, "{degrees}", strconv.FormatFloat(round(v, 2), 'f', -1, 64))
}

// longitude writes v degrees of longitude to two decimals: "128.5°W".
func (w Words) longitude(v float64) string {
	h := w.East
	if v < 0 {
		h, v = w.West, -v
	}
	return fill(h, "{degrees}", strconv.FormatFloat(round(v, 2), 'f', -1, 64))
}
