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
// print, e.g. "Albers equal-area conic, standard parallels 34.30°S and
// 34.15°S, WGS 84". It reads the parameters from p's PROJ string.
func Describe(p proj.Projection) string {
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
		return latString(v)
	}
	lon := func(key string) string {
		v, err := strconv.ParseFloat(params[key], 64)
		if err != nil {
			v = 0
		}
		h := "E"
		if v < 0 {
			h, v = "W", -v
		}
		return strconv.FormatFloat(round(v, 2), 'f', -1, 64) + "°" + h
	}
	datum := "WGS 84"
	switch params["proj"] {
	case "aea":
		if params["lat_1"] == params["lat_2"] {
			return fmt.Sprintf("Albers equal-area conic, standard parallel %s, %s", lat("lat_1"), datum)
		}
		return fmt.Sprintf("Albers equal-area conic, standard parallels %s and %s, %s", lat("lat_1"), lat("lat_2"), datum)
	case "laea":
		return fmt.Sprintf("Lambert azimuthal equal-area, centred at %s %s, %s", lat("lat_0"), lon("lon_0"), datum)
	case "eqearth":
		return fmt.Sprintf("Equal Earth, central meridian %s, %s", lon("lon_0"), datum)
	case "webmerc", "merc":
		return "Web Mercator (EPSG:3857), not equal-area: dots thin out towards the poles"
	case "eqc":
		return "Plate carrée (equirectangular), not equal-area"
	}
	return p.String()
}

func latString(v float64) string {
	h := "N"
	if v < 0 {
		h, v = "S", -v
	}
	return strconv.FormatFloat(round(v, 2), 'f', -1, 64) + "°" + h
}
