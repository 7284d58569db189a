package mapfile

import (
	"fmt"
	"path/filepath"
	"regexp"
	"strings"

	"github.com/stipple-maps/stipple/geo/table"
)

// Layer is one [[layer]] of a map file: one map among several that render
// into one folder, each into its own subfolder named by Key, with a viewer
// over all of them (a layer switch and a compare divider). Every layer is
// drawn on the map's own areas (input.file) with the map's seed and masks,
// so an area's k-th dot of a category sits in the same place in every
// layer: what differs between two layers is only the dots added or
// removed. A layer leaves out what it shares with the map.
type Layer struct {
	// Key names the layer's subfolder and its place in the viewer:
	// letters, digits, '-' and '_'.
	Key string `toml:"key"`
	// Label is the layer's name in the viewer ("" = Key).
	Label string `toml:"label"`
	// PeoplePerDot is the layer's dot value; 0 keeps the map's.
	PeoplePerDot float64 `toml:"people_per_dot"`
	// Input, when set, is where the layer's counts come from: Input.Table
	// alone gives another table for the map's areas; Input.File names
	// other (older) areas whose counts are carried onto the map's areas
	// through Crosswalk, or by area when Crosswalk is not set. Masks are
	// the map's for every layer.
	Input *Input `toml:"input"`
	// Crosswalk is the relationship table from Input.File's areas to the
	// map's areas.
	Crosswalk *Crosswalk `toml:"crosswalk"`
	// Categories replace the map's categories for this layer (nil keeps
	// them). Use the same keys as the map's where groups are to be
	// compared: a category's dots are seeded by its key.
	Categories []Category `toml:"category"`
}

// Crosswalk is a relationship table between two sets of areas: rows of
// (source id, target id, weight), read by package geo/crosswalk.
type Crosswalk struct {
	// File is the crosswalk CSV, relative to the map file.
	File string `toml:"file"`
	// Source, Target and Weight name the columns: the older area's id,
	// the map's area id, and the share of the older area's people that
	// goes to the target.
	Source string `toml:"source"`
	// Target is the column of the map's area id.
	Target string `toml:"target"`
	// Weight is the column of the share of the older area's people that
	// goes to the target.
	Weight string `toml:"weight"`
	// Key normalisation, as a count table's (applied to both ids): Trim
	// drops white space around ids.
	Trim bool `toml:"trim"`
	// StripPrefix removes this prefix from ids that start with it.
	StripPrefix string `toml:"strip_prefix"`
	// KeepLast keeps the last N characters of longer ids (0: all).
	KeepLast int `toml:"keep_last"`
	// PadZeros left-pads ids made of digits to PadZeros digits.
	PadZeros int `toml:"pad_zeros"`
	// Delimiter separates the fields, as input.table.delimiter.
	Delimiter string `toml:"delimiter"`
	// SkipRows skips description rows under the header.
	SkipRows int `toml:"skip_rows"`
}

// Options returns the table options the crosswalk's ids are read with.
func (c *Crosswalk) Options() table.Options {
	t := Table{Trim: c.Trim, StripPrefix: c.StripPrefix, KeepLast: c.KeepLast, PadZeros: c.PadZeros, Delimiter: c.Delimiter, SkipRows: c.SkipRows}
	return t.Options()
}

var layerKeyRE = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9_-]{0,63}$`)

// LayerMap is the map that layer i renders: the map with the layer's
// counts, dot value and categories, written into the subfolder Key of the
// map's output. Its Input names the map's areas (the layer's own older
// areas, if any, are carried onto them by the caller) and Layers is nil.
func (m *Map) LayerMap(i int) *Map {
	l := m.Layers[i]
	lm := *m
	lm.Layers = nil
	if strings.Contains(m.Out, "://") {
		lm.Out = strings.TrimRight(m.Out, "/") + "/" + l.Key
	} else {
		lm.Out = filepath.Join(m.Out, l.Key)
	}
	if l.PeoplePerDot > 0 {
		lm.PeoplePerDot = l.PeoplePerDot
	}
	if l.Categories != nil {
		lm.Categories = l.Categories
	}
	if l.Input != nil && l.Input.File == "" {
		lm.Input.Table = l.Input.Table
	}
	return &lm
}

// LayerLabel is layer i's label, its key when it has none.
func (m *Map) LayerLabel(i int) string {
	if l := m.Layers[i]; l.Label != "" {
		return l.Label
	}
	return m.Layers[i].Key
}

// checkLayers checks the [[layer]] tables.
func (m *Map) checkLayers(lines *Lines) error {
	if len(m.Layers) == 1 {
		return &Error{Path: m.Path, Line: lines.Near("layer[1]"), Key: "layer", Msg: "one [[layer]]; layers are for two or more maps in one viewer (leave it out for a single map)"}
	}
	seen := map[string]int{}
	for i, l := range m.Layers {
		at := func(field, msg string) error {
			name := fmt.Sprintf("layer[%d]", i+1)
			if field != "" {
				name += "." + field
			}
			return &Error{Path: m.Path, Line: lines.Near(name), Key: name, Msg: msg}
		}
		if !layerKeyRE.MatchString(l.Key) {
			if l.Key == "" {
				return at("key", "missing: name the layer's subfolder, e.g. key = \"2010\"")
			}
			return at("key", fmt.Sprintf("%q; want letters, digits, '-' or '_' (it names a subfolder), at most 64", l.Key))
		}
		if l.Key == "tile-index" || strings.EqualFold(l.Key, "legend") {
			return at("key", fmt.Sprintf("%q is a name the viewer uses; choose another", l.Key))
		}
		if j, dup := seen[l.Key]; dup {
			return at("key", fmt.Sprintf("%q is also the key of layer %d", l.Key, j+1))
		}
		seen[l.Key] = i
		if l.PeoplePerDot != 0 {
			mm := Map{PeoplePerDot: l.PeoplePerDot}
			if err := mm.CheckPerDot(); err != nil {
				return at("people_per_dot", err.Error())
			}
		}
		if in := l.Input; in != nil {
			if len(in.Mask) > 0 {
				return at("input.mask", "masks are the map's for every layer (so the layers' dots stay in step); set input.mask at the top")
			}
			if in.File == "" && in.Table == nil {
				return at("input", "sets neither file nor table; give a table for the map's areas, or older areas in file")
			}
			if in.File == "" && (in.ID != "" || in.Layer != "") {
				return at("input", "id and layer describe a file of areas; without input.file the layer uses the map's areas")
			}
			if t := in.Table; t != nil {
				if t.File == "" {
					return at("input.table.file", "missing: name the CSV file of counts")
				}
				if t.Key == "" {
					return at("input.table.key", "missing: name the table's key column")
				}
				if in.File != "" && in.ID == "" {
					return at("input.id", "missing: with a table, input.id names the areas' field matched to the table key")
				}
				if in.File == "" && m.Input.ID == "" {
					return at("input.table", "the map's input.id is not set: it names the areas' field matched to the table key")
				}
				if t.delimiter() == -1 {
					return at("input.table.delimiter", fmt.Sprintf("%q; want one character, or \"tab\"", t.Delimiter))
				}
			}
		}
		if c := l.Crosswalk; c != nil {
			if l.Input == nil || l.Input.File == "" {
				return at("crosswalk", "a crosswalk carries counts from other areas: set the layer's input.file to the older areas")
			}
			for _, f := range []struct{ name, v string }{{"file", c.File}, {"source", c.Source}, {"target", c.Target}, {"weight", c.Weight}} {
				if f.v == "" {
					return at("crosswalk."+f.name, "missing: a crosswalk names its file and its source, target and weight columns")
				}
			}
			if c.KeepLast < 0 || c.PadZeros < 0 || c.SkipRows < 0 {
				return at("crosswalk", "keep_last, pad_zeros and skip_rows want whole numbers from 0 up")
			}
			t := Table{Delimiter: c.Delimiter}
			if t.delimiter() == -1 {
				return at("crosswalk.delimiter", fmt.Sprintf("%q; want one character, or \"tab\"", c.Delimiter))
			}
		}
		if l.Categories != nil {
			lm := m.LayerMap(i)
			lm.Layers = nil
			if err := lm.checkCategories(lines, fmt.Sprintf("layer[%d].", i+1)); err != nil {
				return err
			}
		}
	}
	return nil
}
