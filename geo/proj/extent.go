package proj

import (
	"math"

	"github.com/paulmach/orb"
)

// ForExtent returns the default print projection for an extent given in
// longitude/latitude degrees (Min = south-west corner, Max = north-east).
// A bound whose Min.X is greater than its Max.X is taken to cross the
// antimeridian.
//
// The default is Albers Equal-Area Conic on WGS 84 with standard parallels
// by the one-sixth rule (common practice): lat1 = south + range/6,
// lat2 = north − range/6, with the latitude of origin at the middle
// latitude and the central meridian at the centre longitude. An equal-area
// map keeps dot density honest: one dot per N people covers the same
// paper area everywhere.
//
// World and hemisphere-wide extents (near both poles, or WorldSpan or more
// of longitude without reaching a pole) get the Equal Earth projection
// (Šavrič, Patterson & Jenny 2018) on WGS 84, centred on the extent's
// central meridian: an azimuthal map of the whole world squeezes the far
// side into a thin, sheared ring.
//
// Lambert Azimuthal Equal-Area on WGS 84, centred on the extent, is chosen
// instead when a cone fits the extent badly:
//   - the extent reaches within 10° of a pole (north > 80 or south < −80):
//     a cone's scale grows without bound towards the pole beyond its
//     standard parallels, while the azimuthal map stays close to true
//     around its centre. An extent that reaches a pole, or that spans 180°
//     of longitude or more up there, gets the polar aspect centred on that
//     pole; one that comes near both poles (a world map) is centred on its
//     middle, so that neither pole is the singular antipode;
//   - the extent spans more than 90° of longitude: a cone's distortion
//     grows quickly away from its central meridian at such widths;
//   - the one-sixth rule puts the two standard parallels on opposite sides
//     of (or on) the equator, i.e. the extent straddles the equator
//     widely: the cone then opens towards a cylinder and degenerates
//     entirely when the parallels are symmetric (lat1 = −lat2), while an
//     azimuthal map centred on the extent treats both hemispheres alike.
//
// Latitudes are clamped to [-90, 90]; a bound with NaN or infinite
// coordinates gives the equatorial Lambert Azimuthal centred at 0°, 0°.
func ForExtent(b orb.Bound) Projection {
	west, south, east, north := b.Min[0], b.Min[1], b.Max[0], b.Max[1]
	for _, v := range []float64{west, south, east, north} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return mustLAEA(0, 0)
		}
	}
	south = math.Max(-90, math.Min(90, south))
	north = math.Max(-90, math.Min(90, north))
	if south > north {
		south, north = north, south
	}
	span := east - west
	if span < 0 {
		span += 360 // crosses the antimeridian
	}
	if span > 360 {
		span = 360
	}
	lon0 := wrapDeg(west + span/2)
	mid := (south + north) / 2

	nearN, nearS := north > 80, south < -80
	switch {
	case nearN && nearS, span >= WorldSpan && !nearN && !nearS:
		// A world map, or one a hemisphere wide: Equal Earth, centred on
		// the extent's own central meridian.
		return mustEqualEarth(lon0)
	case nearN && (north >= 90 || span >= 180):
		return mustLAEA(90, lon0)
	case nearS && (south <= -90 || span >= 180):
		return mustLAEA(-90, lon0)
	case nearN || nearS:
		return mustLAEA(mid, lon0)
	}
	if span > 90 {
		return mustLAEA(mid, lon0)
	}
	r := north - south
	lat1, lat2 := south+r/6, north-r/6
	if lat1 <= 0 && lat2 >= 0 {
		return mustLAEA(mid, lon0)
	}
	p, err := NewAlbers(WGS84, mid, lon0, lat1, lat2, 0, 0)
	if err != nil {
		// Not reached for the parameters above (all finite, in range,
		// same hemisphere); fall back rather than fail a print page.
		return mustLAEA(mid, lon0)
	}
	return p
}

// WorldSpan is the span of longitude (degrees) from which an extent is
// printed as a world map (common practice: about a hemisphere and more).
const WorldSpan = 150

// mustEqualEarth builds Equal Earth on WGS 84 centred on lon0.
func mustEqualEarth(lon0 float64) Projection {
	p, err := NewEqualEarth(WGS84, lon0, 0, 0)
	if err != nil {
		return PlateCarree{} // not reached; a map beats a panic
	}
	return p
}

// mustLAEA builds a LAEA on WGS 84 from parameters known to be valid
// (lat0 in [-90, 90], lon0 in [-180, 180]).
func mustLAEA(lat0, lon0 float64) Projection {
	p, err := NewLAEA(WGS84, lat0, lon0, 0, 0)
	if err != nil {
		return PlateCarree{} // not reached; a map beats a panic
	}
	return p
}
