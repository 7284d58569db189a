// Package read opens any polygon file stipple understands — GeoJSON,
// ESRI Shapefile, GeoPackage — by its extension, brings its coordinates to
// longitude/latitude on WGS 84, and repairs or reports what is wrong with its
// geometry, so everything downstream sees clean geo.Features.
//
// CRS rules: a file with a coordinate system (.prj, GeoPackage srs) is
// recognised by geo/proj; geographic systems on WGS 84, NAD83, ETRS89, GDA94
// and GDA2020 are taken as WGS 84 (the datum shift, a metre or two, is
// ignored); projected ones that geo/proj implements (Web Mercator, Albers,
// Lambert azimuthal) are converted back to lon/lat; anything else stops with a
// message naming the system and how to convert the file. A file without a
// coordinate system must hold lon/lat: coordinates outside ±180/±90 are an
// error ("coordinates look projected").
//
// Repairs (each one reported): rings are closed, repeated points dropped;
// rings with fewer than four points or no area are dropped; self-intersecting
// rings are kept (the sampler fills them by the even-odd rule) and reported;
// rings that jump more than 180° of longitude between two points (a polygon
// drawn across the antimeridian without being cut) are reported, and the
// sampler unwraps them.
package read
