package gpkg

import (
	"bytes"
	"database/sql"
	"errors"
	"fmt"
	"io"
	"math"
	"net/url"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/stipple-maps/stipple/geo"

	_ "modernc.org/sqlite" // pure-Go driver registered as "sqlite"
)

// Default caps used when Options leaves MaxFeatures or MaxVertices at 0.
const (
	DefaultMaxFeatures = 20_000_000
	DefaultMaxVertices = 500_000_000
)

// LayerInfo describes one feature table of a GeoPackage.
type LayerInfo struct {
	// Name is the table_name in gpkg_contents.
	Name string
	// GeometryColumn is the column_name in gpkg_geometry_columns.
	GeometryColumn string
	// GeometryType is geometry_type_name as stored, e.g. "MULTIPOLYGON".
	GeometryType string
	// SRSID is the srs_id of the geometry column.
	SRSID int64
}

// Options controls Read.
type Options struct {
	// Layer is the feature table to read; "" reads the only feature table
	// and is an error when there are several.
	Layer string
	// IDField names the column whose value becomes Feature.ID; "" uses the
	// table's integer primary key (the fid) as text.
	IDField string
	// MaxFeatures caps the number of features read (0 = DefaultMaxFeatures).
	MaxFeatures int
	// MaxVertices caps the vertices summed over all features
	// (0 = DefaultMaxVertices).
	MaxVertices int
}

// sqliteMagic starts every SQLite 3 database file (SQLite file format §1.3).
var sqliteMagic = []byte("SQLite format 3\x00")

// fail wraps a problem with the file as a whole.
func fail(path string, format string, args ...any) error {
	return fmt.Errorf("gpkg: %w", &geo.Error{Path: path, Index: -1, Message: fmt.Sprintf(format, args...)})
}

// open checks the SQLite magic and opens the file read-only.
func open(path string) (*sql.DB, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("gpkg: %w", err)
	}
	head := make([]byte, len(sqliteMagic))
	_, err = io.ReadFull(f, head)
	f.Close()
	if err != nil || !bytes.Equal(head, sqliteMagic) {
		return nil, fail(path, "not a SQLite database (a GeoPackage is a SQLite 3 file)")
	}
	abs, err := filepath.Abs(path)
	if err != nil {
		return nil, fmt.Errorf("gpkg: %w", err)
	}
	// SQLite URI: percent-escape the characters the URI syntax gives
	// meaning to, so any file name works (https://www.sqlite.org/uri.html).
	u := (&url.URL{Path: filepath.ToSlash(abs)}).EscapedPath()
	u = strings.ReplaceAll(u, "?", "%3F")
	dsn := "file:" + u + "?mode=ro&_pragma=query_only(1)"
	db, err := sql.Open("sqlite", dsn)
	if err != nil {
		return nil, fail(path, "open: %v", err)
	}
	db.SetMaxOpenConns(1)
	return db, nil
}

func quoteIdent(s string) string {
	return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
}

// layers lists the feature tables of an open GeoPackage.
func layers(path string, db *sql.DB) ([]LayerInfo, error) {
	var n int
	err := db.QueryRow(`SELECT count(*) FROM sqlite_master WHERE type IN ('table','view') AND name IN ('gpkg_contents','gpkg_geometry_columns')`).Scan(&n)
	if err != nil {
		return nil, fail(path, "not a readable SQLite database: %v", err)
	}
	if n < 2 {
		return nil, fail(path, "not a GeoPackage: tables gpkg_contents and gpkg_geometry_columns are required")
	}
	rows, err := db.Query(`SELECT c.table_name, g.column_name, g.geometry_type_name, g.srs_id
		FROM gpkg_contents c JOIN gpkg_geometry_columns g ON g.table_name = c.table_name
		WHERE c.data_type = 'features' ORDER BY c.table_name`)
	if err != nil {
		return nil, fail(path, "reading gpkg_contents: %v", err)
	}
	defer rows.Close()
	var out []LayerInfo
	for rows.Next() {
		var li LayerInfo
		var srs sql.NullInt64
		if err := rows.Scan(&li.Name, &li.GeometryColumn, &li.GeometryType, &srs); err != nil {
			return nil, fail(path, "reading gpkg_geometry_columns: %v", err)
		}
		li.SRSID = srs.Int64
		out = append(out, li)
	}
	if err := rows.Err(); err != nil {
		return nil, fail(path, "reading gpkg_contents: %v", err)
	}
	return out, nil
}

// Layers lists the feature tables of the GeoPackage at path (gpkg_contents
// rows with data_type 'features'), ordered by name.
func Layers(path string) ([]LayerInfo, error) {
	db, err := open(path)
	if err != nil {
		return nil, err
	}
	defer db.Close()
	return layers(path, db)
}

// crs gives Layer.CRS for an srs_id: "EPSG:<code>" when the organization is
// EPSG, "" for srs_id 0 (undefined geographic, so lon/lat is assumed),
// otherwise the definition text.
func crs(path string, db *sql.DB, srsID int64) (string, error) {
	if srsID == 0 {
		return "", nil
	}
	var org, def sql.NullString
	var code sql.NullInt64
	err := db.QueryRow(`SELECT organization, organization_coordsys_id, definition FROM gpkg_spatial_ref_sys WHERE srs_id = ?`, srsID).Scan(&org, &code, &def)
	if errors.Is(err, sql.ErrNoRows) {
		return "", fail(path, "srs_id %d is not in gpkg_spatial_ref_sys", srsID)
	}
	if err != nil {
		return "", fail(path, "reading gpkg_spatial_ref_sys: %v", err)
	}
	if strings.EqualFold(org.String, "EPSG") && code.Valid {
		return "EPSG:" + strconv.FormatInt(code.Int64, 10), nil
	}
	return def.String, nil
}

// column is one attribute column of a feature table.
type column struct {
	name, decl string
	pk         bool
}

func tableColumns(path string, db *sql.DB, table string) ([]column, error) {
	rows, err := db.Query(`SELECT name, type, pk FROM pragma_table_info(?)`, table)
	if err != nil {
		return nil, fail(path, "reading columns of %q: %v", table, err)
	}
	defer rows.Close()
	var cols []column
	for rows.Next() {
		var c column
		var pk int
		if err := rows.Scan(&c.name, &c.decl, &pk); err != nil {
			return nil, fail(path, "reading columns of %q: %v", table, err)
		}
		c.decl = strings.ToUpper(strings.TrimSpace(c.decl))
		c.pk = pk > 0
		cols = append(cols, c)
	}
	if err := rows.Err(); err != nil {
		return nil, fail(path, "reading columns of %q: %v", table, err)
	}
	if len(cols) == 0 {
		return nil, fail(path, "feature table %q does not exist", table)
	}
	return cols, nil
}

// readableGeometryType reports whether a layer's declared type can hold
// polygons (GeoPackage 1.3 Annex G geometry type names).
func readableGeometryType(t string) bool {
	switch strings.ToUpper(t) {
	case "POLYGON", "MULTIPOLYGON", "GEOMETRY":
		return true
	}
	return false
}

func names(ls []LayerInfo) string {
	s := make([]string, len(ls))
	for i, l := range ls {
		s[i] = strconv.Quote(l.Name)
	}
	return strings.Join(s, ", ")
}

// Read reads the polygons and attributes of one feature table. Geometry is
// returned as stored (no reprojection; Layer.CRS records the srs), with
// outer rings counter-clockwise and holes clockwise.
func Read(path string, opt Options) (*geo.Layer, error) {
	if opt.MaxFeatures <= 0 {
		opt.MaxFeatures = DefaultMaxFeatures
	}
	if opt.MaxVertices <= 0 {
		opt.MaxVertices = DefaultMaxVertices
	}
	db, err := open(path)
	if err != nil {
		return nil, err
	}
	defer db.Close()
	ls, err := layers(path, db)
	if err != nil {
		return nil, err
	}
	var li LayerInfo
	switch {
	case len(ls) == 0:
		return nil, fail(path, "no feature tables in gpkg_contents")
	case opt.Layer == "" && len(ls) > 1:
		return nil, fail(path, "%d feature tables (%s): choose one with the layer option", len(ls), names(ls))
	case opt.Layer == "":
		li = ls[0]
	default:
		found := false
		for _, l := range ls {
			if l.Name == opt.Layer {
				li, found = l, true
			}
		}
		if !found {
			return nil, fail(path, "no feature table %q (tables: %s)", opt.Layer, names(ls))
		}
	}
	if !readableGeometryType(li.GeometryType) {
		return nil, fail(path, "layer %q has geometry type %s; only POLYGON and MULTIPOLYGON areas can be read", li.Name, li.GeometryType)
	}
	layer := &geo.Layer{Path: path, Name: li.Name}
	if layer.CRS, err = crs(path, db, li.SRSID); err != nil {
		return nil, err
	}
	cols, err := tableColumns(path, db, li.Name)
	if err != nil {
		return nil, err
	}

	// Select the primary key, the geometry, then the attributes in column
	// order. DATE, DATETIME and TIMESTAMP columns are cast to TEXT so the
	// driver does not turn them into time values.
	pk := -1
	for i, c := range cols {
		if c.pk && strings.Contains(c.decl, "INT") {
			pk = i
			break
		}
	}
	if pk < 0 {
		return nil, fail(path, "table %q has no INTEGER PRIMARY KEY column (GeoPackage 1.3 §2.1.6)", li.Name)
	}
	sel := []string{quoteIdent(cols[pk].name), quoteIdent(li.GeometryColumn)}
	var attrs []column
	geomFound := false
	for i, c := range cols {
		if i == pk {
			continue
		}
		if c.name == li.GeometryColumn {
			geomFound = true
			continue
		}
		if c.decl == "BLOB" {
			continue // not an attribute value; see doc.go
		}
		attrs = append(attrs, c)
		if c.decl == "DATE" || c.decl == "DATETIME" || c.decl == "TIMESTAMP" {
			sel = append(sel, "CAST("+quoteIdent(c.name)+" AS TEXT)")
		} else {
			sel = append(sel, quoteIdent(c.name))
		}
		layer.Fields = append(layer.Fields, c.name)
	}
	if !geomFound {
		return nil, fail(path, "table %q has no column %q named in gpkg_geometry_columns", li.Name, li.GeometryColumn)
	}
	if opt.IDField != "" && !contains(layer.Fields, opt.IDField) {
		return nil, fail(path, "id field %q is not a column of %q (columns: %s)", opt.IDField, li.Name, strings.Join(layer.Fields, ", "))
	}

	q := "SELECT " + strings.Join(sel, ", ") + " FROM " + quoteIdent(li.Name) + " ORDER BY " + quoteIdent(cols[pk].name)
	rows, err := db.Query(q)
	if err != nil {
		return nil, fail(path, "reading table %q: %v", li.Name, err)
	}
	defer rows.Close()
	vals := make([]any, len(sel))
	ptrs := make([]any, len(sel))
	for i := range vals {
		ptrs[i] = &vals[i]
	}
	budget := opt.MaxVertices
	for rows.Next() {
		idx := len(layer.Features)
		if idx >= opt.MaxFeatures {
			return nil, fail(path, "more than %d features (Options.MaxFeatures)", opt.MaxFeatures)
		}
		if err := rows.Scan(ptrs...); err != nil {
			return nil, fail(path, "reading feature %d: %v", idx, err)
		}
		fid, ok := vals[0].(int64)
		if !ok {
			return nil, fail(path, "feature %d: primary key %q is %T, not an integer", idx, cols[pk].name, vals[0])
		}
		f := geo.Feature{Index: idx, ID: strconv.FormatInt(fid, 10), Props: make(map[string]any, len(attrs))}
		featErr := func(field, format string, args ...any) error {
			return fmt.Errorf("gpkg: %w", &geo.Error{Path: path, Index: idx, ID: f.ID, Field: field, Message: fmt.Sprintf(format, args...)})
		}
		for i, c := range attrs {
			v, err := attrValue(vals[i+2], c.decl)
			if err != nil {
				return nil, featErr(c.name, "%v", err)
			}
			f.Props[c.name] = v
		}
		if opt.IDField != "" {
			id, err := idText(f.Props[opt.IDField])
			if err != nil {
				return nil, featErr(opt.IDField, "id %v", err)
			}
			f.ID = id
		}
		switch g := vals[1].(type) {
		case nil:
			// NULL geometry: the feature keeps an empty Geometry.
		case []byte:
			mp, h, err := decodeBlob(g, budget)
			if err != nil {
				return nil, featErr(li.GeometryColumn, "%v", err)
			}
			if int64(h.srsID) != li.SRSID {
				return nil, featErr(li.GeometryColumn, "geometry srs_id %d differs from the layer's srs_id %d", h.srsID, li.SRSID)
			}
			for _, p := range mp {
				for _, r := range p {
					budget -= len(r)
				}
			}
			f.Geometry = mp
		default:
			return nil, featErr(li.GeometryColumn, "geometry value is %T, not a BLOB", g)
		}
		layer.Features = append(layer.Features, f)
	}
	if err := rows.Err(); err != nil {
		return nil, fail(path, "reading table %q: %v", li.Name, err)
	}
	return layer, nil
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// attrValue converts a value as SQLite stored it into a Props value. A
// BOOLEAN column (GeoPackage 1.3 §1.1.1.1.1, stored as 0 or 1) gives bool;
// otherwise the storage class decides: INTEGER → int64, REAL → float64,
// TEXT → string, NULL → nil.
func attrValue(v any, decl string) (any, error) {
	switch x := v.(type) {
	case nil:
		return nil, nil
	case int64:
		if decl == "BOOLEAN" {
			switch x {
			case 0:
				return false, nil
			case 1:
				return true, nil
			}
			return nil, fmt.Errorf("BOOLEAN column holds %d (0 or 1 expected)", x)
		}
		return x, nil
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, fmt.Errorf("value %v is not a finite number", x)
		}
		return x, nil
	case string:
		return x, nil
	case []byte:
		return nil, fmt.Errorf("column declared %s holds a BLOB value, which is not an attribute value", decl)
	case bool:
		return x, nil
	}
	return nil, fmt.Errorf("unexpected value type %T", v)
}

// idText formats an id value: text as is, integers in decimal, reals
// without a trailing ".0" when whole.
func idText(v any) (string, error) {
	switch x := v.(type) {
	case string:
		return x, nil
	case int64:
		return strconv.FormatInt(x, 10), nil
	case float64:
		return strconv.FormatFloat(x, 'f', -1, 64), nil
	case bool:
		return strconv.FormatBool(x), nil
	case nil:
		return "", fmt.Errorf("is NULL")
	}
	return "", fmt.Errorf("has unexpected type %T", v)
}
