// Package gpkg reads polygon feature tables from OGC GeoPackage files
// (GeoPackage Encoding Standard 1.2/1.3) into a geo.Layer.
//
// The file is opened read-only through the pure-Go SQLite driver
// modernc.org/sqlite (no cgo). Layers lists the tables of gpkg_contents
// whose data_type is 'features', with the geometry column, its declared type
// and srs_id from gpkg_geometry_columns. Read reads one such table.
//
// Geometry: each blob is a GeoPackageBinaryHeader (GeoPackage 1.3
// §2.1.3.1.1: magic "GP", version 0, flags with envelope indicator 0-4, byte
// order and empty flag; the extended type X is refused) followed by WKB
// (OGC Simple Features 1.2.1 §8.2), decoded here: Polygon and MultiPolygon,
// including the ISO Z/M/ZM codes (1003, 2003, 3003, 1006, ...) and the
// EWKB flag bits; z and m values are dropped. Other types (CurvePolygon,
// MultiSurface, Point, ...) are an error naming the type; so is a layer
// whose declared geometry type is not POLYGON, MULTIPOLYGON or GEOMETRY.
// Every count in the WKB is checked against the bytes left before anything
// is allocated, and rings must be closed with at least 4 points and finite
// coordinates. Rings keep their stored vertex order except that outer rings
// are made counter-clockwise and holes clockwise (RFC 7946 §3.1.6). A NULL
// geometry, or one with the empty flag, gives a Feature whose Geometry is
// empty; the caller decides what that means.
//
// Coordinate space: coordinates are returned as stored, in the layer's
// coordinate system, without reprojection. Layer.CRS records it:
// "EPSG:<organization_coordsys_id>" when gpkg_spatial_ref_sys names EPSG as
// the organization, "" for srs_id 0 (undefined geographic: lon/lat assumed),
// and the definition text (WKT, or "undefined" for srs_id -1) otherwise.
// Another package interprets that string. The srs_id in each geometry header
// must equal the layer's.
//
// Attributes: every column except the primary key, the geometry column and
// BLOB columns becomes a Props entry, in column order in Layer.Fields. Values
// follow SQLite's storage class: INTEGER → int64, REAL → float64, TEXT →
// string, NULL → nil; a column declared BOOLEAN gives bool. DATE, DATETIME
// and TIMESTAMP columns are read as their stored text ("2026-03-01").
// Feature.ID is the integer primary key (the fid) as decimal text unless
// Options.IDField names a column.
//
// Errors are one line, prefixed "gpkg: ", and wrap a *geo.Error naming the
// file, the feature (0-based index in primary-key order, and its id) and the
// field, so errors.As finds it.
package gpkg
