package mapjob

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"os"
	"slices"
	"strings"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/read"
	"github.com/stipple-maps/stipple/geo/table"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/sample"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// Input is what Load found in the map's inputs.
type Input struct {
	// Layer holds the areas in lon/lat, repaired.
	Layer *geo.Layer
	// Counts[i][k] is the people of category k in feature i.
	Counts [][]float64
	// Read is the reader's result: format, CRS, repair notes.
	Read *read.Result
	// Join is the table join's report, nil without a table.
	Join *table.Report
	// Unjoined lists features that found no table row (their counts are 0).
	Unjoined map[int]bool
	// Masks holds the map's mask polygons prepared for sampling; nil
	// without masks. MaskFeatures counts the polygons read.
	Masks        *sample.Mask
	MaskFeatures int
	// Dots[i][k] is the number of dots feature i gets in category k, by the
	// map's rounding rule (sample.Allocate).
	Dots [][]int
	// Margins[i][k], when the map names fields_moe, is the published 90%
	// margin of error of Counts[i][k]: for a category summing several
	// fields, the square root of the sum of their margins squared (the
	// usual approximation for the margin of a sum, assuming independent
	// estimates; US Census Bureau, "Understanding and Using American
	// Community Survey Data", chapter 8, from memory). nil without
	// margins.
	Margins [][]float64
	// Fingerprint identifies everything the placed dots depend on (see
	// samplingFingerprint): two inputs with the same one place the same
	// dots.
	Fingerprint string
}

// Load reads the map's areas, joins their counts, reads the masks, and
// allocates each area's dots by the map's rounding rule, with the reports
// of reading and joining. A non-nil layer is used as it is instead of
// reading m.Input.File. Every command that makes a map starts here.
func Load(m *mapfile.Map, layer *geo.Layer) (*Input, error) {
	in := &Input{Layer: layer, Unjoined: map[int]bool{}}
	if layer == nil {
		res, err := read.File(m.Resolve(m.Input.File), read.Options{IDField: m.Input.ID, Layer: m.Input.Layer})
		if err != nil {
			return nil, err
		}
		in.Read, in.Layer = res, res.Layer
	}
	layer = in.Layer
	if t := m.Input.Table; t != nil {
		tab, err := table.Read(m.Resolve(t.File), t.Options())
		if err != nil {
			return nil, err
		}
		header := map[string]bool{}
		for _, h := range tab.Header {
			header[h] = true
		}
		var cols []string
		seen := map[string]bool{}
		for _, c := range m.Categories {
			for _, f := range append(slices.Clone(c.Fields), c.FieldsMOE...) {
				if header[f] && !seen[f] {
					cols = append(cols, f)
					seen[f] = true
					for i := range layer.Features {
						if _, shadow := layer.Features[i].Props[f]; shadow && f != m.Input.ID {
							return nil, fmt.Errorf("%s: category field %q is both a column of %s and a property of the areas in %s (feature %d has it); rename one of them, so it is clear whose counts are drawn",
								m.Path, f, t.File, m.Input.File, layer.Features[i].Index)
						}
					}
				}
			}
		}
		rep, err := table.Join(layer, m.Input.ID, tab, cols)
		if err != nil {
			return nil, err
		}
		in.Join = rep
		missing := map[string]bool{}
		for _, k := range rep.FeaturesWithoutRow {
			missing[k] = true
		}
		for i, f := range layer.Features {
			if missing[tab.Options.Normalize(geo.Text(f.Props[m.Input.ID]))] {
				in.Unjoined[i] = true
			}
		}
	}
	in.Counts = make([][]float64, len(layer.Features))
	ids := make(map[string]int, len(layer.Features))
	for i := range layer.Features {
		f := &layer.Features[i]
		if j, dup := ids[f.ID]; dup {
			return nil, &geo.Error{Path: layer.Path, Index: i, ID: f.ID, Field: m.Input.ID,
				Message: fmt.Sprintf("id is also the id of feature %d; ids must be unique (they seed the dots)", j)}
		}
		ids[f.ID] = i
		in.Counts[i] = make([]float64, len(m.Categories))
		if in.Unjoined[i] {
			continue // no table row: reported by the join, no people
		}
		for k, c := range m.Categories {
			n, err := geo.Count(layer.Path, f, c.Fields)
			if err != nil {
				return nil, err
			}
			in.Counts[i][k] = n
		}
	}
	if err := loadMargins(in, m); err != nil {
		return nil, err
	}
	if err := checkScale(m, layer, in.Counts); err != nil {
		return nil, err
	}
	masks, n, maskHash, err := loadMasks(m)
	if err != nil {
		return nil, err
	}
	in.Masks, in.MaskFeatures = masks, n
	idList := make([]string, len(layer.Features))
	for i, f := range layer.Features {
		idList[i] = f.ID
	}
	in.Dots = sample.AllocateStreams(idList, in.Counts, m.PeoplePerDot, m.Seed, m.Rounding == "exact", Streams(m))
	in.Fingerprint = samplingFingerprint(m, layer, in.Counts, maskHash)
	return in, nil
}

// loadMasks reads the map's mask files (input.mask) into one mask index;
// nil when the map has none. n is the number of mask polygons; sum hashes
// the files' names and bytes, so editing a mask in place changes the
// sampling fingerprint.
func loadMasks(m *mapfile.Map) (mask *sample.Mask, n int, sum string, err error) {
	var polys []orb.MultiPolygon
	h := sha256.New()
	for _, mf := range m.Input.Mask {
		data, err := os.ReadFile(m.Resolve(mf))
		if err != nil {
			return nil, 0, "", fmt.Errorf("%s: key input.mask: %w", m.Path, err)
		}
		fmt.Fprintf(h, "%q %x\n", mf, sha256.Sum256(data))
		res, err := read.File(m.Resolve(mf), read.Options{})
		if err != nil {
			return nil, 0, "", fmt.Errorf("%s: key input.mask: %w", m.Path, err)
		}
		for _, f := range res.Layer.Features {
			if len(f.Geometry) > 0 {
				polys = append(polys, f.Geometry)
			}
		}
	}
	sum = hex.EncodeToString(h.Sum(nil))
	if len(polys) == 0 {
		return nil, 0, sum, nil
	}
	return sample.NewMask(polys), len(polys), sum, nil
}

// Streams are the random stream numbers of the map's categories, from
// their keys: a category's dots stay where they are when the map file lists
// the categories in another order.
func Streams(m *mapfile.Map) []uint64 {
	out := make([]uint64, len(m.Categories))
	for k, c := range m.Categories {
		out[k] = sample.CategoryStream(c.Key)
	}
	return out
}

// InsideAny reports whether a point lies inside one of the features idx
// (orb's even-odd planar test in lon/lat, after a bound check): print pages use it
// to show the dots placed in the listed areas alone. A dot
// was placed inside its own area, and its cell centre is within 4 cm of
// that place, so it lands in a neighbour only where areas overlap.
func InsideAny(layer *geo.Layer, idx []int) func(lon, lat float64) bool {
	type area struct {
		b orb.Bound
		g orb.MultiPolygon
	}
	areas := make([]area, 0, len(idx))
	for _, i := range idx {
		g := layer.Features[i].Geometry
		if len(g) > 0 {
			areas = append(areas, area{g.Bound(), g})
		}
	}
	return func(lon, lat float64) bool {
		p := orb.Point{lon, lat}
		for _, a := range areas {
			if a.b.Contains(p) && planar.MultiPolygonContains(a.g, p) {
				return true
			}
		}
		return false
	}
}

// Outlier rule (common practice for catching sentinels such as 999999999
// and slipped decimal points, no published source): a cell is an outlier
// when it holds more than outlierFloor people and more than outlierRatio
// times the median of its category's non-empty cells, or more than
// outlierCeiling people whatever the others hold (more than any nation).
const (
	outlierFloor   = 1e6
	outlierRatio   = 1e4
	outlierCeiling = 2e9
)

// checkScale stops a map that would cost hours for a wrong reason before
// any work starts: more dots than max_dots, or a count cell that is an
// outlier by orders of magnitude (unless allow_outliers is set).
func checkScale(m *mapfile.Map, layer *geo.Layer, counts [][]float64) error {
	for k, c := range m.Categories {
		if m.AllowOutliers {
			break
		}
		var vals []float64
		for _, row := range counts {
			if row[k] > 0 {
				vals = append(vals, row[k])
			}
		}
		if len(vals) == 0 {
			continue
		}
		slices.Sort(vals)
		median := vals[len(vals)/2]
		if vals[len(vals)-1] <= outlierFloor {
			continue
		}
		for i, row := range counts {
			v := row[k]
			if v > outlierCeiling || (v > outlierFloor && v > outlierRatio*median) {
				f := layer.Features[i]
				return fmt.Errorf("%s: feature %d (id %q), category %q (fields %s): %s people, %s times the median area's %s; a placeholder or a typo? Fix the count, or set allow_outliers = true in the map file",
					layer.Path, f.Index, f.ID, c.Key, strings.Join(c.Fields, "+"), render.FormatCount(v), render.FormatCount(math.Round(v/median)), render.FormatCount(median))
			}
		}
	}
	people := 0.0
	for _, row := range counts {
		for _, v := range row {
			people += v
		}
	}
	limit := m.MaxDots
	if limit <= 0 {
		limit = mapfile.DefaultMaxDots // a map made in code, not read from a file
	}
	if dots := people / m.PeoplePerDot; dots > float64(limit) {
		return fmt.Errorf("%s: key max_dots: this map would place about %s dots (%s people at %s), more than max_dots = %s; check people_per_dot and the counts, or raise max_dots",
			m.Path, render.FormatCount(math.Round(dots)), render.FormatCount(math.Round(people)), render.DotNote(m.PeoplePerDot), render.FormatCount(float64(limit)))
	}
	return nil
}

// loadMargins reads the categories' fields_moe into in.Margins.
func loadMargins(in *Input, m *mapfile.Map) error {
	any := false
	for _, c := range m.Categories {
		any = any || len(c.FieldsMOE) > 0
	}
	if !any {
		return nil
	}
	layer := in.Layer
	in.Margins = make([][]float64, len(layer.Features))
	for i := range layer.Features {
		f := &layer.Features[i]
		in.Margins[i] = make([]float64, len(m.Categories))
		if in.Unjoined[i] {
			continue
		}
		for k, c := range m.Categories {
			ss := 0.0
			for _, field := range c.FieldsMOE {
				v, err := geo.Count(layer.Path, f, []string{field})
				if err != nil {
					return err
				}
				ss += v * v
			}
			in.Margins[i][k] = math.Sqrt(ss)
		}
	}
	return nil
}
