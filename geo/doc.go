// Package geo holds the input side of stipple: areas (features) with their
// polygons and attribute values, and the rules for turning attribute values
// into people counts.
//
// Coordinate space: every geometry held in a Feature is longitude/latitude in
// degrees on WGS 84 (x = longitude east, y = latitude north), whatever the
// file it came from. Readers in the subpackages (geojson, shapefile, gpkg)
// convert or reject other coordinate systems before a Feature is built;
// geo/proj holds the projections.
//
// Errors name the file, the feature (its 0-based index and its id) and the
// field, in one line, so a user can find the bad value in their own data.
package geo
