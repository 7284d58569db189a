// Package shapefile reads polygon ESRI shapefiles into a geo.Layer.
//
// It is written from the published layout, the ESRI Shapefile Technical
// Description (ESRI white paper, July 1998), and the dBASE table format as
// GDAL writes it. Pure Go; no third-party shapefile code.
//
// # Files
//
// Read and ReadAll take the path of the .shp. The .shx (index) and .dbf
// (attributes) beside it are required, the .prj and .cpg optional. Side files
// share the .shp's base name; their extensions match in any letter case.
//
// # Coordinate space
//
// Coordinates are passed through as stored: x, y in the units of the
// shapefile's coordinate system. The text of the .prj (WKT) goes into
// Layer.CRS unchanged apart from surrounding white space and a byte-order
// mark; with no .prj, Layer.CRS is "". Interpreting or reprojecting it is the
// job of the caller (geo/proj), not of this package.
//
// # Geometry
//
// Shape types 5 (Polygon), 15 (PolygonZ) and 25 (PolygonM) are read; Z and M
// values are ignored. Any other file shape type is an error naming it. A Null
// shape (type 0), or a polygon with no parts, gives a Feature with empty
// Geometry; reporting it is the caller's job.
//
// Rings are assigned by the rule of the Technical Description: a clockwise
// ring (interior on the right) is an outer ring, a counter-clockwise ring a
// hole. Each hole belongs to the smallest outer ring (by area) that contains
// it, tested with a vertex of the hole that is not on the outer ring's
// boundary. A hole that no outer ring contains becomes an outer ring of its
// own, with a Warning. Output follows RFC 7946 §3.1.6 instead of the
// shapefile: every orb.Polygon has its outer ring first, counter-clockwise,
// then its holes, clockwise — the stored rings reversed (a promoted hole is
// already counter-clockwise and kept as stored). Polygons keep the file order
// of their outer rings, holes the file order within their polygon. Every ring
// is closed (first point = last point).
//
// Degenerate rings: a ring that is not closed is closed, with a Warning. A
// ring with fewer than 4 points once closed (for example a ring of two
// points) or with zero area (or an area too small to tell its orientation
// from rounding) is dropped with a Warning; the feature is kept,
// with empty Geometry if nothing is left (and a Warning saying so), so no
// feature vanishes silently.
//
// # Attributes
//
// Layer.Fields lists the DBF field names in order; Feature.Props holds one
// value per field: C → string with trailing blanks removed (a blank C field
// is "", the format cannot store null text); N and F → int64 when the field
// has no decimals and the text is an integer that fits, else float64; D
// (YYYYMMDD) → string "YYYY-MM-DD"; L → true (T, Y), false (F, N) or nil (?).
// Blank or all-'*' numbers, blank or 00000000 dates and blank logicals are
// nil. Other field types (memo, binary, …) are nil with a Warning. Malformed
// values are errors naming file, record and field.
//
// Text is decoded to UTF-8 using the code page named in the .cpg (UTF-8,
// ISO-8859-1 and its spellings latin1/88591, Windows-1252/1252/CP1252 and a
// few other single-byte pages; an unknown name is an error), else the
// language driver id in byte 29 of the DBF header (0x57 → ISO-8859-1 as GDAL
// reads it, 0x03 → Windows-1252, …). With neither, valid UTF-8 is kept and
// other text is read as Windows-1252 with a Warning. Invalid UTF-8 in a UTF-8
// table is replaced by U+FFFD with a Warning.
//
// Feature.Index is the 0-based record index. Records marked deleted in the
// DBF ('*') are skipped together with the shape of the same number, with a
// Warning, so indices can have gaps. Feature.ID is the text of
// Options.IDField (numeric fields as stored, leading zeros kept), or the
// 1-based shapefile record number as text when IDField is "".
//
// # Checks
//
// Before anything is trusted: file code 9994 and version 1000 in both
// headers; a declared file length beyond the file's size is an error (bytes
// after it are ignored with a Warning); index entries must be whole and give
// each record's offset and content length exactly; the record counts of the
// .shp, .shx and .dbf must agree; every record's content must fit in the
// file; NumParts and NumPoints must fit in the record's bytes before any
// allocation, and the running vertex total within Options.MaxVertices; part
// indices start at 0, increase and stay below NumPoints; NaN or infinite
// coordinates are errors. The record numbers in the record headers are not
// checked: the index gives each record's place. The DBF header length must match its field
// descriptors, fields must fit in the record, and the declared records must
// fit in the file. Errors are one line, prefixed "shapefile: ", and where
// they concern one record they wrap a *geo.Error (feature index, id, field).
//
// Read discards the warnings; callers that report them use ReadAll.
package shapefile
