package geojson

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"maps"
	"math"
	"os"
	"slices"
	"strconv"
	"unicode/utf8"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// Options control how a file is read.
type Options struct {
	// IDField names the property that becomes Feature.ID. When empty, the
	// feature's "id" member is used, and failing that its 0-based index.
	IDField string
	// MaxBytes caps the file size; 0 means 4 GiB.
	MaxBytes int64
	// PointsAndLines also accepts Point, MultiPoint, LineString and
	// MultiLineString geometries (RFC 7946, sections 3.1.2–3.1.5), read
	// into Feature.Points and Feature.Lines; without it they are errors.
	PointsAndLines bool
}

// Read reads the FeatureCollection in the file at path.
func Read(path string, opt Options) (*geo.Layer, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("geojson: %w", err)
	}
	max := opt.MaxBytes
	if max == 0 {
		max = 4 << 30
	}
	if st.Size() > max {
		return nil, fmt.Errorf("geojson: %s: file is %d bytes, over the %d byte limit", path, st.Size(), max)
	}
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("geojson: %w", err)
	}
	return Decode(path, data, opt)
}

type rawCollection struct {
	Type     string            `json:"type"`
	Features []json.RawMessage `json:"features"`
}

type rawFeature struct {
	Type       string                     `json:"type"`
	ID         json.RawMessage            `json:"id"`
	Geometry   *rawGeometry               `json:"geometry"`
	Properties map[string]json.RawMessage `json:"properties"`
}

type rawGeometry struct {
	Type        string          `json:"type"`
	Coordinates json.RawMessage `json:"coordinates"`
}

// Decode parses GeoJSON bytes; path is used only in error messages.
// The text must be UTF-8; a UTF-8 byte order mark at the start is skipped.
func Decode(path string, data []byte, opt Options) (*geo.Layer, error) {
	data, err := utf8Text(path, data)
	if err != nil {
		return nil, err
	}
	var fc rawCollection
	if err := json.Unmarshal(data, &fc); err != nil {
		return nil, fmt.Errorf("geojson: %s: %s", path, describeJSONError(data, err))
	}
	if fc.Type != "FeatureCollection" {
		if fc.Type == "" {
			return nil, fmt.Errorf("geojson: %s: member \"type\" is missing; want \"FeatureCollection\"", path)
		}
		return nil, fmt.Errorf("geojson: %s: type is %q; want \"FeatureCollection\"", path, fc.Type)
	}
	layer := &geo.Layer{Path: path, Features: make([]geo.Feature, 0, len(fc.Features))}
	seenField := map[string]bool{}
	for i, raw := range fc.Features {
		var rf rawFeature
		if err := json.Unmarshal(raw, &rf); err != nil {
			return nil, &geo.Error{Path: path, Index: i, Message: err.Error()}
		}
		f := geo.Feature{Index: i, Props: make(map[string]any, len(rf.Properties))}
		var badField string
		var badErr error
		for _, k := range slices.Sorted(maps.Keys(rf.Properties)) {
			val, err := decodeValue(rf.Properties[k])
			if err != nil && badErr == nil {
				badField, badErr = k, err
			}
			f.Props[k] = val
			if !seenField[k] {
				seenField[k] = true
				layer.Fields = append(layer.Fields, k)
			}
		}
		f.ID = featureID(&rf, f.Props, opt.IDField, i)
		if badErr != nil {
			return nil, &geo.Error{Path: path, Index: i, ID: f.ID, Field: badField, Message: badErr.Error()}
		}
		if opt.IDField != "" {
			if _, ok := f.Props[opt.IDField]; !ok {
				return nil, &geo.Error{Path: path, Index: i, Field: opt.IDField, Message: "id field is missing"}
			}
		}
		if rf.Type != "Feature" {
			return nil, &geo.Error{Path: path, Index: i, ID: f.ID, Field: "type", Message: fmt.Sprintf("type is %q; want \"Feature\"", rf.Type)}
		}
		if rf.Geometry != nil && opt.PointsAndLines && pointOrLine(rf.Geometry.Type) {
			if err := decodePointsLines(rf.Geometry, &f); err != nil {
				return nil, &geo.Error{Path: path, Index: i, ID: f.ID, Field: "geometry", Message: err.Error()}
			}
		} else if rf.Geometry != nil {
			g, err := decodeGeometry(rf.Geometry)
			if err != nil {
				return nil, &geo.Error{Path: path, Index: i, ID: f.ID, Field: "geometry", Message: err.Error()}
			}
			f.Geometry = g
		}
		layer.Features = append(layer.Features, f)
	}
	slices.Sort(layer.Fields) // JSON objects have no field order to keep
	return layer, nil
}

func featureID(rf *rawFeature, props map[string]any, field string, index int) string {
	if field != "" {
		if v, ok := props[field]; ok && v != nil {
			return geo.Text(v)
		}
		return ""
	}
	if len(rf.ID) > 0 && string(rf.ID) != "null" {
		var s string
		if json.Unmarshal(rf.ID, &s) == nil {
			return s
		}
		return string(bytes.TrimSpace(rf.ID))
	}
	return strconv.Itoa(index)
}

func decodeValue(raw json.RawMessage) (any, error) {
	d := json.NewDecoder(bytes.NewReader(raw))
	d.UseNumber()
	var v any
	if err := d.Decode(&v); err != nil {
		return nil, err
	}
	if n, ok := v.(json.Number); ok {
		if i, err := n.Int64(); err == nil {
			return i, nil
		}
		f, err := n.Float64()
		if err != nil {
			return nil, fmt.Errorf("number %s is out of range", n)
		}
		return f, nil
	}
	switch v.(type) {
	case string, bool, nil:
		return v, nil
	}
	// Arrays and objects are kept as their JSON text: they are never counts.
	return string(raw), nil
}

func decodeGeometry(g *rawGeometry) (orb.MultiPolygon, error) {
	switch g.Type {
	case "Polygon":
		var c [][][]float64
		if err := json.Unmarshal(g.Coordinates, &c); err != nil {
			return nil, fmt.Errorf("Polygon coordinates: %v", err)
		}
		p, err := polygon(c)
		if err != nil {
			return nil, err
		}
		return orb.MultiPolygon{p}, nil
	case "MultiPolygon":
		var c [][][][]float64
		if err := json.Unmarshal(g.Coordinates, &c); err != nil {
			return nil, fmt.Errorf("MultiPolygon coordinates: %v", err)
		}
		mp := make(orb.MultiPolygon, 0, len(c))
		for i, pc := range c {
			p, err := polygon(pc)
			if err != nil {
				return nil, fmt.Errorf("part %d: %v", i, err)
			}
			mp = append(mp, p)
		}
		return mp, nil
	case "":
		return nil, errors.New("geometry has no type")
	default:
		return nil, fmt.Errorf("geometry type %s is not Polygon or MultiPolygon", g.Type)
	}
}

func pointOrLine(t string) bool {
	return t == "Point" || t == "MultiPoint" || t == "LineString" || t == "MultiLineString"
}

// decodePointsLines reads a point or line geometry into f.Points or f.Lines.
func decodePointsLines(g *rawGeometry, f *geo.Feature) error {
	switch g.Type {
	case "Point":
		var c []float64
		if err := json.Unmarshal(g.Coordinates, &c); err != nil {
			return fmt.Errorf("Point coordinates: %v", err)
		}
		p, err := position(c, "position")
		if err != nil {
			return err
		}
		f.Points = orb.MultiPoint{p}
	case "MultiPoint", "LineString":
		var c [][]float64
		if err := json.Unmarshal(g.Coordinates, &c); err != nil {
			return fmt.Errorf("%s coordinates: %v", g.Type, err)
		}
		pts := make([]orb.Point, 0, len(c))
		for i, pc := range c {
			p, err := position(pc, fmt.Sprintf("position %d", i))
			if err != nil {
				return err
			}
			pts = append(pts, p)
		}
		if g.Type == "MultiPoint" {
			f.Points = pts
			return nil
		}
		if len(pts) < 2 {
			return fmt.Errorf("LineString has %d positions; want at least 2 (RFC 7946, section 3.1.4)", len(pts))
		}
		f.Lines = orb.MultiLineString{pts}
	case "MultiLineString":
		var c [][][]float64
		if err := json.Unmarshal(g.Coordinates, &c); err != nil {
			return fmt.Errorf("MultiLineString coordinates: %v", err)
		}
		for li, lc := range c {
			line := make(orb.LineString, 0, len(lc))
			for i, pc := range lc {
				p, err := position(pc, fmt.Sprintf("line %d position %d", li, i))
				if err != nil {
					return err
				}
				line = append(line, p)
			}
			if len(line) < 2 {
				return fmt.Errorf("line %d has %d positions; want at least 2 (RFC 7946, section 3.1.4)", li, len(line))
			}
			f.Lines = append(f.Lines, line)
		}
	}
	return nil
}

func position(c []float64, what string) (orb.Point, error) {
	if len(c) < 2 {
		return orb.Point{}, fmt.Errorf("%s has %d values; want at least 2", what, len(c))
	}
	if math.IsNaN(c[0]) || math.IsNaN(c[1]) || math.IsInf(c[0], 0) || math.IsInf(c[1], 0) {
		return orb.Point{}, fmt.Errorf("%s is not finite", what)
	}
	return orb.Point{c[0], c[1]}, nil
}

func polygon(c [][][]float64) (orb.Polygon, error) {
	p := make(orb.Polygon, 0, len(c))
	for ri, rc := range c {
		r := make(orb.Ring, 0, len(rc)+1)
		for pi, pos := range rc {
			if len(pos) < 2 {
				return nil, fmt.Errorf("ring %d position %d has %d values; want at least 2", ri, pi, len(pos))
			}
			x, y := pos[0], pos[1]
			if math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) || math.IsInf(y, 0) {
				return nil, fmt.Errorf("ring %d position %d is not finite", ri, pi)
			}
			r = append(r, orb.Point{x, y})
		}
		p = append(p, r)
	}
	return p, nil
}

// utf8Text returns data without a UTF-8 byte order mark, or a one-line
// error naming the file and the byte offset when data is UTF-16 or holds
// bytes that are not UTF-8. GeoJSON is JSON, which "MUST be encoded using
// UTF-8" between systems (RFC 8259, section 8.1, referenced by RFC 7946,
// section 1); the same section lets a parser ignore a byte order mark.
// encoding/json would fail on a BOM with "invalid character 'ï'" and turn
// every stray byte into U+FFFD, so that two ids differing in one accented
// letter would become equal.
func utf8Text(path string, data []byte) ([]byte, error) {
	if rest, ok := bytes.CutPrefix(data, []byte{0xEF, 0xBB, 0xBF}); ok {
		return rest, nil
	}
	utf16 := func(order, how string) error {
		return fmt.Errorf("geojson: %s: byte 0: the file is UTF-16 (%s, %s); GeoJSON must be UTF-8: re-save it as UTF-8", path, order, how)
	}
	switch {
	case bytes.HasPrefix(data, []byte{0xFF, 0xFE}):
		return nil, utf16("little-endian", "byte order mark FF FE")
	case bytes.HasPrefix(data, []byte{0xFE, 0xFF}):
		return nil, utf16("big-endian", "byte order mark FE FF")
	case len(data) >= 2 && data[0] != 0 && data[1] == 0:
		// Without a mark, a JSON text's first character is ASCII, so its
		// UTF-16 form has a zero byte beside it (RFC 4627, section 3).
		return nil, utf16("little-endian", "no byte order mark")
	case len(data) >= 2 && data[0] == 0 && data[1] != 0:
		return nil, utf16("big-endian", "no byte order mark")
	}
	if utf8.Valid(data) {
		return data, nil
	}
	off := 0
	for off < len(data) {
		r, n := utf8.DecodeRune(data[off:])
		if r == utf8.RuneError && n <= 1 {
			break
		}
		off += n
	}
	return nil, fmt.Errorf("geojson: %s: byte %d (%s): byte 0x%02X is not UTF-8; the file is probably in a legacy encoding such as Latin-1 or Windows-1252: re-save it as UTF-8",
		path, off, where(data, int64(off)), data[off])
}

// describeJSONError turns a decoding error into "line L, column C: message".
func describeJSONError(data []byte, err error) string {
	var off int64 = -1
	var se *json.SyntaxError
	var te *json.UnmarshalTypeError
	switch {
	case errors.As(err, &se):
		off = se.Offset
	case errors.As(err, &te):
		off = te.Offset
		return fmt.Sprintf("%s: %s is %s; want %s", where(data, off), te.Field, te.Value, te.Type)
	}
	if off < 0 {
		return "malformed JSON: " + err.Error()
	}
	return fmt.Sprintf("%s: malformed JSON: %v", where(data, off), err)
}

func where(data []byte, off int64) string {
	if off > int64(len(data)) {
		off = int64(len(data))
	}
	line := 1 + bytes.Count(data[:off], []byte{'\n'})
	col := off - int64(bytes.LastIndexByte(data[:off], '\n'))
	return fmt.Sprintf("line %d, column %d", line, col)
}
