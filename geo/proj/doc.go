// Package proj holds the map projections stipple needs for print pages and
// for reading projected input files, and the recognition of coordinate
// reference systems (CRS) from WKT strings and EPSG codes.
//
// Contract:
//
//   - Geographic coordinates are longitude, latitude in degrees, in that
//     order (x = longitude east, y = latitude north), on WGS 84 unless a
//     projection is built on another ellipsoid on purpose (as in the
//     handbook tests). Latitudes outside [-90, 90] give NaN.
//   - Projected coordinates are easting, northing in metres (x east, y
//     north), false easting and northing included.
//   - Forward of a point the projection cannot show (the antipode of an
//     azimuthal centre, a far pole of a cone) returns NaN, NaN; Inverse of
//     a point outside the projected area returns NaN, NaN. Nothing panics.
//   - Inverse iterates where the formula has no closed form, with a
//     bounded iteration count, and gives Forward's input back to better
//     than 1e-9 degrees. Two places are ill-conditioned for any
//     implementation, because the map squeezes them (h → 0): the poles of
//     a cone whose pole is an arc, and the rim of an azimuthal map (within
//     1° of the centre's antipode). There Inverse is exact to about 1 µm
//     in map metres instead. The pole lines of Equal Earth are a third:
//     within 5° of a pole its Inverse gives latitude to 2e-6 degrees.
//   - Longitudes are taken relative to the central meridian and wrapped
//     into [-180, 180] before projecting, as PROJ does.
//
// A CRS read from a file (ParseWKT, FromEPSG) may use another linear unit
// (for example the US survey foot); CRS.ToLonLat and CRS.FromLonLat work
// in the file's units and the Projection inside it stays in metres.
//
// EqualEarth, for world pages, follows Šavrič, Patterson and Jenny (2019).
// The other formulas follow J. P. Snyder, Map Projections — A Working Manual
// (USGS Professional Paper 1395, 1987) and IOGP Guidance Note 7-2; the
// tests check them against the worked examples of both and against PROJ's
// cs2cs.
package proj
