// Package geojson reads RFC 7946 GeoJSON FeatureCollections of Polygon and
// MultiPolygon features into a geo.Layer.
//
// Coordinates are taken as longitude, latitude in degrees (RFC 7946 §4);
// positions beyond the first two values (altitude) are ignored. Ring winding
// is not relied on (RFC 7946 §3.1.6 says parsers should not reject the other
// winding): the first ring of each polygon is its outer ring, the others are
// holes. Rings are kept as written, closed or not; geo/read closes and
// repairs them and reports what it did. Count values may be JSON numbers or numeric strings; they are kept
// as read (float64, int64 or string) and interpreted by geo.Count.
package geojson
