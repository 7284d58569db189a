package mapjob

import (
	"context"
	"math"
	"math/rand/v2"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
	"github.com/stipple-maps/stipple/geo/read"
	"github.com/stipple-maps/stipple/geo/reftool"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/sample"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// worldMap is a map of ../shared/data/world-110m.geojson: real country
// shapes whose synthetic "pop" is 50 people per km² of true area (see the
// data's README), so any difference in dot density between regions is an
// error.
func worldMap(t *testing.T, perDot float64) *mapfile.Map {
	t.Helper()
	path := reftool.SharedData(t, "world-110m.geojson")
	dir := t.TempDir()
	return &mapfile.Map{Path: filepath.Join(dir, "world.toml"), Title: "World, synthetic counts", PeoplePerDot: perDot, Seed: 3,
		Out: filepath.Join(dir, "out"), Rounding: "random",
		Input: mapfile.Input{File: path, ID: "name"}, Tiles: mapfile.Tiles{MinZoom: 0, MaxZoom: 2, Size: 256},
		Dots:       mapfile.Dots{Diameter: 1.5, MinDiameter: 0.6, Opacity: 0.9},
		Categories: []mapfile.Category{{Key: "p", Label: "People", Color: "#0072B2", Fields: []string{"pop"}}}}
}

// chiSquare2xB is Pearson's statistic of a 2 × B contingency table (rows a
// and b), with B − 1 degrees of freedom (NIST/SEMATECH e-Handbook §1.3.5.15,
// chi-square test of independence).
func chiSquare2xB(a, b []float64) float64 {
	var ta, tb float64
	for i := range a {
		ta += a[i]
		tb += b[i]
	}
	x := 0.0
	for i := range a {
		col := a[i] + b[i]
		if col == 0 {
			continue
		}
		ea, eb := col*ta/(ta+tb), col*tb/(ta+tb)
		x += (a[i]-ea)*(a[i]-ea)/ea + (b[i]-eb)*(b[i]-eb)/eb
	}
	return x
}

// TestWorldDotsTruthful renders and prints the world: every dot of every
// country is accounted for (drawn on the tiles, or beyond their latitude
// limit and on the print page), no dot lies outside its country by orb's
// planar point-in-polygon test (not the sampler's own), and the dots'
// spread over latitude bands and hemispheres matches the land's, measured
// independently by uniform random points on the sphere tested against the
// countries (two-sample chi-square against the NIST/SEMATECH e-Handbook
// table 1.3.6.7.4 critical values at α = 0.001).
func TestWorldDotsTruthful(t *testing.T) {
	if testing.Short() {
		t.Skip("world map: not in -short")
	}
	ctx := context.Background()
	m := worldMap(t, 25_000)
	s, err := Run(ctx, m, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	in, err := Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	total := 0
	for i, f := range in.Layer.Features {
		want := in.Counts[i][0] / m.PeoplePerDot
		if d := float64(in.Dots[i][0]); d != math.Floor(want) && d != math.Ceil(want) {
			t.Errorf("%s: %v dots for %v people; want ⌊%v⌋ or ⌈%v⌉", f.ID, d, in.Counts[i][0], want, want)
		}
		total += in.Dots[i][0]
	}
	if s.Dots[0]+s.Beyond[0] != total || s.NotDrawn != 0 {
		t.Fatalf("tiles %d + beyond %d dots, not drawn %v; want all %d", s.Dots[0], s.Beyond[0], s.NotDrawn, total)
	}
	if s.Beyond[0] == 0 || s.Metadata.NotDrawn.BeyondTileLimit != float64(s.Beyond[0])*m.PeoplePerDot {
		t.Errorf("Antarctica's dots south of 85.05°S: %d, map.json %v", s.Beyond[0], s.Metadata.NotDrawn.BeyondTileLimit)
	}

	// The world page holds every dot, and its legend counts them all.
	pl, err := PlaceForPrint(ctx, in, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer pl.Store.Close()
	size, _ := page.ParseSize("A4")
	p, err := Print(ctx, in, m, pl, PrintOptions{Size: size.Landscape(), DPI: 72, Margin: 10, Projection: "auto", DotMM: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if p.Page.Len() != total || p.Dots[0] != total || p.People[0] != s.People[0] {
		t.Errorf("world page: %d dots, legend %d dots and %v people; want %d dots and %v people", p.Page.Len(), p.Dots[0], p.People[0], total, s.People[0])
	}
	if desc := page.Describe(p.Page.Spec().Projection); !strings.HasPrefix(desc, "Equal Earth") {
		t.Errorf("world page projection %q; want Equal Earth", desc)
	}

	// Dots exactly where the sampler put them: inside their country.
	sopt := sample.Options{PeoplePerDot: m.PeoplePerDot, Seed: m.Seed, Streams: Streams(m)}
	const bands = 12 // 15° of latitude each
	var dots [bands + 4]float64
	outside := 0
	for i := range in.Layer.Features {
		f := &in.Layer.Features[i]
		b := f.Geometry.Bound()
		sample.FeatureN(f, in.Dots[i], sopt, func(_ int, q orb.Point) {
			if !b.Pad(1e-9).Contains(q) || !planar.MultiPolygonContains(f.Geometry, q) {
				// On an edge the planar test may say either; allow 1e-9°.
				if !planar.MultiPolygonContains(f.Geometry, orb.Point{q[0] + 1e-9, q[1]}) && !planar.MultiPolygonContains(f.Geometry, orb.Point{q[0] - 1e-9, q[1]}) {
					outside++
				}
			}
			dots[min(bands-1, int((q[1]+90)/15))]++
			dots[bands+quadrant(q)]++
		})
	}
	if outside != 0 {
		t.Errorf("%d dots outside their country", outside)
	}

	// Land by uniform random points on the sphere: longitude uniform, sine
	// of latitude uniform (Archimedes' hat-box theorem).
	rng := rand.New(rand.NewPCG(1, 2))
	type country struct {
		b orb.Bound
		g orb.MultiPolygon
	}
	var cs []country
	for _, f := range in.Layer.Features {
		cs = append(cs, country{f.Geometry.Bound(), f.Geometry})
	}
	var land [bands + 4]float64
	for n := 0; n < 600_000; n++ {
		q := orb.Point{rng.Float64()*360 - 180, math.Asin(rng.Float64()*2-1) * 180 / math.Pi}
		for _, c := range cs {
			if c.b.Contains(q) && planar.MultiPolygonContains(c.g, q) {
				land[min(bands-1, int((q[1]+90)/15))]++
				land[bands+quadrant(q)]++
				break
			}
		}
	}
	// NIST/SEMATECH e-Handbook table 1.3.6.7.4, upper-tail critical values
	// at α = 0.001: df 11 → 31.264, df 3 → 16.266.
	if x := chiSquare2xB(dots[:bands], land[:bands]); x > 31.264 {
		t.Errorf("latitude bands: chi-square %.2f > 31.264 (df 11, α = 0.001); dots %v, land points %v", x, dots[:bands], land[:bands])
	} else {
		t.Logf("latitude bands: chi-square %.2f (df 11)", x)
	}
	if x := chiSquare2xB(dots[bands:], land[bands:]); x > 16.266 {
		t.Errorf("hemisphere quadrants: chi-square %.2f > 16.266 (df 3, α = 0.001); dots %v, land %v", x, dots[bands:], land[bands:])
	}
}

// quadrant numbers the four quarters of the globe split at the equator and
// the prime meridian.
func quadrant(q orb.Point) int {
	k := 0
	if q[0] >= 0 {
		k++
	}
	if q[1] >= 0 {
		k += 2
	}
	return k
}

// TestAleutiansPrintCentredOnNorthAmerica: the counties of the 50 states
// and DC reach 180° (the Aleutians, cut at ±180 by their publisher); the
// page's projection is centred on the extent measured on the circle of
// longitudes, over North America, not near 0°. (With the Pacific
// territories the file spans 144.6°E to 64.6°W, a different map.)
func TestAleutiansPrintCentredOnNorthAmerica(t *testing.T) {
	path := reftool.SharedData(t, "us-counties.geojson")
	res, err := read.File(path, read.Options{IDField: "geoid"})
	if err != nil {
		t.Fatal(err)
	}
	layer := res.Layer
	kept := layer.Features[:0]
	for _, f := range layer.Features {
		if f.ID < "60" { // state FIPS codes 01–56; territories are 60 and up
			kept = append(kept, f)
		}
	}
	layer.Features = kept
	dir := t.TempDir()
	m := &mapfile.Map{Path: filepath.Join(dir, "us.toml"), Title: "Counties, synthetic counts", PeoplePerDot: 5000, Seed: 1,
		Out: filepath.Join(dir, "out"), Rounding: "random", MaxDots: mapfile.DefaultMaxDots,
		Input: mapfile.Input{File: path, ID: "geoid"}, Tiles: mapfile.Tiles{MinZoom: 0, MaxZoom: 4, Size: 256},
		Dots:       mapfile.Dots{Diameter: 1.5, MinDiameter: 0.6, Opacity: 0.9},
		Categories: []mapfile.Category{{Key: "a", Label: "A", Color: "#0072B2", Fields: []string{"grp_a"}}}}
	ctx := context.Background()
	s, err := Run(ctx, m, Options{Workers: 2, Layer: layer})
	if err != nil {
		t.Fatal(err)
	}
	if b := s.Metadata.Bounds; !(b[0] > 170 && b[2] < -60) {
		t.Errorf("map.json bounds %v; want west near 172 and east near −65 (across 180°, RFC 7946 §5.2)", b)
	}
	if c := s.Metadata.Center; !(c[0] > -130 && c[0] < -90) {
		t.Errorf("map.json centre %v; want a longitude between −130 and −90", c)
	}
	in, err := Load(m, layer)
	if err != nil {
		t.Fatal(err)
	}
	pl, err := PlaceForPrint(ctx, in, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer pl.Store.Close()
	size, _ := page.ParseSize("A4")
	p, err := Print(ctx, in, m, pl, PrintOptions{Size: size.Landscape(), DPI: 72, Margin: 10, Projection: "auto", DotMM: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	lon0 := math.NaN()
	for _, f := range strings.Fields(p.Page.Spec().Projection.String()) {
		if v, ok := strings.CutPrefix(f, "+lon_0="); ok {
			lon0, _ = strconv.ParseFloat(v, 64)
		}
	}
	if !(lon0 > -130 && lon0 < -90) {
		t.Errorf("page projection %v: central meridian %v; want between −130 and −90", p.Page.Spec().Projection, lon0)
	}
	if p.Page.Len() != sum(s.Dots)+sum(s.Beyond) {
		t.Errorf("page holds %d dots; the render placed %d", p.Page.Len(), sum(s.Dots)+sum(s.Beyond))
	}
}
