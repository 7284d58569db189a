package shapefile

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/stipple-maps/stipple/geo"
)

// Default limits applied when the Options fields are zero or negative.
const (
	DefaultMaxVertices = 50_000_000
	DefaultMaxFeatures = 10_000_000
)

// Size caps for the small side files.
const (
	maxPRJBytes = 1 << 20
	maxCPGBytes = 4 << 10
)

// Options controls Read and ReadAll. The zero value is ready to use.
type Options struct {
	// IDField names the attribute whose text becomes Feature.ID (an exact
	// match first, else a case-insensitive one). "" uses the shapefile's
	// 1-based record number ("1", "2", ...). Numeric id fields give their
	// text as stored, so leading zeros survive.
	IDField string
	// MaxVertices caps the vertices of the whole file (default
	// DefaultMaxVertices).
	MaxVertices int
	// MaxFeatures caps the number of records (default DefaultMaxFeatures).
	MaxFeatures int
}

func (o Options) limits() (maxVertices, maxFeatures int) {
	maxVertices, maxFeatures = o.MaxVertices, o.MaxFeatures
	if maxVertices <= 0 {
		maxVertices = DefaultMaxVertices
	}
	if maxFeatures <= 0 {
		maxFeatures = DefaultMaxFeatures
	}
	return maxVertices, maxFeatures
}

// Warning is a problem the reader worked around without losing a feature:
// a ring dropped or re-labelled, a deleted record skipped, a code page
// guessed. The caller decides whether to show or refuse it.
type Warning struct {
	Path    string // file the warning is about
	Index   int    // 0-based record index, -1 when about the whole file
	ID      string // feature id, "" when unknown
	Field   string // attribute, "" when not about one field
	Message string
}

// String formats the warning like a geo.Error, prefixed "shapefile: ".
func (w Warning) String() string {
	e := geo.Error{Path: w.Path, Index: w.Index, ID: w.ID, Field: w.Field, Message: w.Message}
	return "shapefile: " + e.Error()
}

// Read reads the polygon shapefile at path (the .shp) with its .shx, .dbf
// and optional .prj and .cpg, and discards the warnings; see ReadAll.
func Read(path string, opt Options) (*geo.Layer, error) {
	l, _, err := ReadAll(path, opt)
	return l, err
}

// ReadAll reads the polygon shapefile at path (the .shp) with the .shx and
// .dbf beside it (both required) and the optional .prj and .cpg. Side files
// share the .shp's base name; their extensions match in any letter case.
// It returns the layer and the problems it worked around; see the package
// documentation for the rules.
func ReadAll(path string, opt Options) (*geo.Layer, []Warning, error) {
	if !strings.EqualFold(filepath.Ext(path), ".shp") {
		return nil, nil, fmt.Errorf("shapefile: %s: path does not end in .shp", path)
	}
	side, err := siblings(path)
	if err != nil {
		return nil, nil, err
	}
	var s source
	for _, ext := range []string{".shx", ".dbf"} {
		if side[ext] == "" {
			return nil, nil, fmt.Errorf("shapefile: %s: no %s file beside it (the index and the attribute table are mandatory)", path, ext)
		}
	}
	var closers []io.Closer
	defer func() {
		for _, c := range closers {
			c.Close()
		}
	}()
	open := func(name string) (part, error) {
		f, err := os.Open(name)
		if err != nil {
			return part{}, fmt.Errorf("shapefile: %v", err)
		}
		closers = append(closers, f)
		st, err := f.Stat()
		if err != nil {
			return part{}, fmt.Errorf("shapefile: %v", err)
		}
		return part{name: name, r: f, size: st.Size()}, nil
	}
	if s.shp, err = open(path); err != nil {
		return nil, nil, err
	}
	if s.shx, err = open(side[".shx"]); err != nil {
		return nil, nil, err
	}
	if s.dbf, err = open(side[".dbf"]); err != nil {
		return nil, nil, err
	}
	if s.prj, err = readSmall(side[".prj"], maxPRJBytes); err != nil {
		return nil, nil, err
	}
	if s.cpg, err = readSmall(side[".cpg"], maxCPGBytes); err != nil {
		return nil, nil, err
	}
	s.cpgName = side[".cpg"]
	base := filepath.Base(path)
	s.layerName = base[:len(base)-len(filepath.Ext(base))]
	return decode(s, opt)
}

// siblings finds the side files of a .shp: same base name, extension in any
// case; an exact-case match wins over others.
func siblings(path string) (map[string]string, error) {
	dir, base := filepath.Split(path)
	stem := base[:len(base)-len(filepath.Ext(base))]
	if dir == "" {
		dir = "."
	}
	ents, err := os.ReadDir(dir)
	if err != nil {
		return nil, fmt.Errorf("shapefile: %v", err)
	}
	sort.Slice(ents, func(i, j int) bool { return ents[i].Name() < ents[j].Name() })
	shpLower := filepath.Ext(base) == strings.ToLower(filepath.Ext(base))
	out := map[string]string{}
	rank := map[string]int{}
	for _, e := range ents {
		n := e.Name()
		ext := filepath.Ext(n)
		key := strings.ToLower(ext)
		switch key {
		case ".shx", ".dbf", ".prj", ".cpg":
		default:
			continue
		}
		if e.IsDir() || n[:len(n)-len(ext)] != stem {
			continue
		}
		r := 1
		if (ext == key) == shpLower {
			r = 2 // same letter case as the .shp's extension
		}
		if r > rank[key] {
			out[key], rank[key] = filepath.Join(filepath.Dir(path), n), r
		}
	}
	return out, nil
}

// readSmall reads a side file of at most max bytes; "" → nil, no error.
func readSmall(name string, max int64) ([]byte, error) {
	if name == "" {
		return nil, nil
	}
	f, err := os.Open(name)
	if err != nil {
		return nil, fmt.Errorf("shapefile: %v", err)
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, max+1))
	if err != nil {
		return nil, fmt.Errorf("shapefile: %s: %v", name, err)
	}
	if int64(len(b)) > max {
		return nil, fmt.Errorf("shapefile: %s: larger than %d bytes", name, max)
	}
	return b, nil
}

// source is a file set, on disk or in memory.
type source struct {
	shp, shx, dbf part
	prj, cpg      []byte // nil when absent
	cpgName       string
	layerName     string
}

// decode reads a whole file set; ReadAll opens the files, tests and fuzzing
// pass memory.
func decode(s source, opt Options) (*geo.Layer, []Warning, error) {
	maxVertices, maxFeatures := opt.limits()
	var warns []Warning
	fileWarn := func(path, msg string) {
		warns = append(warns, Warning{Path: path, Index: -1, Message: msg})
	}

	sc, err := newSHPScanner(s.shp)
	if err != nil {
		return nil, nil, err
	}
	if sc.hdr.length < s.shp.size {
		fileWarn(s.shp.name, fmt.Sprintf("%d bytes after the declared file length %d are ignored", s.shp.size-sc.hdr.length, sc.hdr.length))
	}
	ix, err := newSHXScanner(s.shx)
	if err != nil {
		return nil, nil, err
	}
	if ix.hdr.shapeType != sc.hdr.shapeType {
		return nil, nil, fmt.Errorf("shapefile: %s: shape type %d (%s) differs from %s's %d (%s)", s.shx.name,
			ix.hdr.shapeType, shapeTypeName(ix.hdr.shapeType), s.shp.name, sc.hdr.shapeType, shapeTypeName(sc.hdr.shapeType))
	}
	if ix.hdr.length < s.shx.size {
		fileWarn(s.shx.name, fmt.Sprintf("%d bytes after the declared file length %d are ignored", s.shx.size-ix.hdr.length, ix.hdr.length))
	}
	if ix.count > maxFeatures {
		return nil, nil, fmt.Errorf("shapefile: %s: %d records, more than the limit of %d (Options.MaxFeatures)", s.shx.name, ix.count, maxFeatures)
	}

	var cpgDec *textDecoder
	if s.cpg != nil {
		d, ok, err := decoderForCPG(string(s.cpg), s.cpgName)
		if err != nil {
			return nil, nil, err
		}
		if ok {
			cpgDec = d
		}
	}
	tab, err := openDBF(s.dbf, maxFeatures, cpgDec)
	if err != nil {
		return nil, nil, err
	}
	warns = append(warns, tab.warnings...)

	countErr := func(nshp int, known bool) error {
		shpCount := strconv.Itoa(nshp)
		if !known {
			shpCount = "at least " + shpCount
		}
		return fmt.Errorf("shapefile: record counts disagree: %s has %s, %s has %d, %s has %d",
			s.shp.name, shpCount, s.shx.name, ix.count, s.dbf.name, tab.numRecords)
	}
	if ix.count != tab.numRecords {
		n, err := sc.skipRest()
		return nil, nil, countErr(n, err == nil)
	}

	idCol := -1
	if opt.IDField != "" {
		for i, f := range tab.fields {
			if f.name == opt.IDField {
				idCol = i
				break
			}
		}
		if idCol < 0 {
			for i, f := range tab.fields {
				if strings.EqualFold(f.name, opt.IDField) {
					idCol = i
					break
				}
			}
		}
		if idCol < 0 {
			names := make([]string, len(tab.fields))
			for i, f := range tab.fields {
				names[i] = f.name
			}
			return nil, nil, fmt.Errorf("shapefile: %s: id field %q not found (fields: %s)", s.dbf.name, opt.IDField, strings.Join(names, ", "))
		}
	}

	layer := &geo.Layer{
		Path:     s.shp.name,
		Name:     s.layerName,
		CRS:      strings.TrimSpace(strings.TrimPrefix(string(s.prj), "\uFEFF")),
		Features: make([]geo.Feature, 0, tab.numRecords),
		Fields:   make([]string, len(tab.fields)),
	}
	for i, f := range tab.fields {
		layer.Fields[i] = f.name
	}

	raw := make([]string, len(tab.fields))
	repaired := make([]bool, len(tab.fields))
	firstRepair := make([]int, len(tab.fields))
	budget := maxVertices
	i := 0
	for ; ; i++ {
		content, err := sc.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, nil, recordError(s.shp.name, i, "", err)
		}
		if i >= ix.count {
			n, err := sc.skipRest()
			return nil, nil, countErr(i+1+n, err == nil)
		}
		off, clen, err := ix.next()
		if err != nil {
			return nil, nil, fmt.Errorf("shapefile: %s: record %d: reading index entry: %v", s.shx.name, i+1, err)
		}
		if off != sc.recOff || clen != sc.recLen {
			return nil, nil, fmt.Errorf("shapefile: %s: record %d: index gives offset %d and content length %d bytes but %s has the record at %d with %d bytes",
				s.shx.name, i+1, off, clen, s.shp.name, sc.recOff, sc.recLen)
		}

		rec, deleted, err := tab.next()
		if err != nil {
			return nil, nil, fmt.Errorf("shapefile: %s: record %d: %v", s.dbf.name, i+1, err)
		}
		if deleted {
			warns = append(warns, Warning{Path: s.dbf.name, Index: i, Message: fmt.Sprintf("record %d is marked deleted: skipped with its shape", i+1)})
			continue
		}
		props := make(map[string]any, len(tab.fields))
		for k := range repaired {
			repaired[k] = false
		}
		if err := tab.decodeRecord(rec, props, raw, repaired); err != nil {
			var fe *fieldError
			if errors.As(err, &fe) {
				var fid string
				if idCol >= 0 {
					fid = tab.fieldText(rec, idCol)
				}
				return nil, nil, fmt.Errorf("shapefile: %w", &geo.Error{Path: s.dbf.name, Index: i, ID: fid, Field: fe.field, Message: fmt.Sprintf("record %d: %s", i+1, fe.msg)})
			}
			return nil, nil, recordError(s.dbf.name, i, "", err)
		}
		for k, r := range repaired {
			if r && firstRepair[k] == 0 {
				firstRepair[k] = i + 1
			}
		}
		// Messages name the id only when it comes from the table: the
		// default id repeats the record number they already give.
		id, msgID := strconv.Itoa(i+1), ""
		if idCol >= 0 {
			id, msgID = raw[idCol], raw[idCol]
		}

		rings, err := decodeShape(content, sc.hdr.shapeType, budget)
		if err != nil {
			return nil, nil, recordError(s.shp.name, i, msgID, err)
		}
		for _, r := range rings {
			budget -= len(r)
		}
		mp, msgs := assemble(rings)
		for _, m := range msgs {
			warns = append(warns, Warning{Path: s.shp.name, Index: i, ID: msgID, Message: fmt.Sprintf("record %d: %s", i+1, m)})
		}
		if len(rings) > 0 && len(mp) == 0 {
			warns = append(warns, Warning{Path: s.shp.name, Index: i, ID: msgID, Message: fmt.Sprintf("record %d: no usable ring left: the feature has empty geometry", i+1)})
		}
		layer.Features = append(layer.Features, geo.Feature{Index: i, ID: id, Geometry: mp, Props: props})
	}
	if i != ix.count {
		return nil, nil, countErr(i, true)
	}
	for k, first := range firstRepair {
		if first == 0 {
			continue
		}
		msg := fmt.Sprintf("text that is not valid UTF-8 (first in record %d): invalid bytes replaced by U+FFFD", first)
		if tab.dec.guess {
			msg = fmt.Sprintf("no code page declared and text that is not UTF-8 (first in record %d): read as Windows-1252", first)
		}
		warns = append(warns, Warning{Path: s.dbf.name, Index: -1, Field: tab.fields[k].name, Message: msg})
	}
	return layer, warns, nil
}

// recordError wraps a problem with record i in a geo.Error.
func recordError(path string, i int, id string, err error) error {
	return fmt.Errorf("shapefile: %w", &geo.Error{Path: path, Index: i, ID: id, Message: fmt.Sprintf("record %d: %v", i+1, err)})
}
