package batch

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/geojson"
	"github.com/stipple-maps/stipple/geo/read"
	"github.com/stipple-maps/stipple/geo/reftool"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// countiesFile returns the shared benchmark input, in ../shared/data beside
// the repository root: real county outlines with synthetic counts (see the
// README.md there).
func countiesFile(tb testing.TB) string {
	tb.Helper()
	return reftool.SharedData(tb, "us-counties.geojson")
}

// countiesBatch writes, into dir, a map file over the counties (groups
// grp_a..grp_e, 1 dot = 10 people, zooms 4–9) and a batch file of 20
// extents: each a group of neighbouring counties, the counties whose centre
// lies within 0.8° of a seed county's, the seeds spread over the 48
// contiguous states by taking every 150th county in geoid order.
func countiesBatch(b testing.TB, dir string, n int) *File {
	b.Helper()
	file := countiesFile(b)
	res, err := read.File(file, read.Options{IDField: "geoid"})
	if err != nil {
		b.Fatal(err)
	}
	type county struct {
		id   string
		x, y float64
	}
	var cs []county
	for _, f := range res.Layer.Features {
		st := f.ID[:2]
		if st == "02" || st == "15" || st >= "60" {
			continue // Alaska, Hawaii, Puerto Rico and the other territories
		}
		if p, ok := RepresentativePoint(f.Geometry); ok {
			cs = append(cs, county{f.ID, p[0], p[1]})
		}
	}
	slices.SortFunc(cs, func(a, b county) int { return strings.Compare(a.id, b.id) })
	var mapText strings.Builder
	fmt.Fprintf(&mapText, `title = "Synthetic groups by county (synthetic counts, not census figures)"
credit = "County outlines: US Census Bureau cartographic boundaries via us-atlas; counts are synthetic."
people_per_dot = 10
seed = 1
[input]
file = %q
id = "geoid"
[tiles]
min_zoom = 4
max_zoom = 9
`, file)
	colors := []string{"#0072B2", "#E69F00", "#009E73", "#CC79A7", "#56B4E9"}
	for i, g := range []string{"a", "b", "c", "d", "e"} {
		fmt.Fprintf(&mapText, "[[category]]\nkey = %q\nlabel = \"Group %s\"\ncolor = %q\nfields = [\"grp_%s\"]\n", g, strings.ToUpper(g), colors[i], g)
	}
	mapPath := filepath.Join(dir, "counties.toml")
	if err := os.WriteFile(mapPath, []byte(mapText.String()), 0o644); err != nil {
		b.Fatal(err)
	}
	var bt strings.Builder
	fmt.Fprintf(&bt, "map = %q\nout = \"out\"\n", mapPath)
	for k := 0; k < n; k++ {
		seed := cs[(k*150+75)%len(cs)]
		var ids []string
		for _, c := range cs {
			if math.Hypot(c.x-seed.x, c.y-seed.y) < 0.8 {
				ids = append(ids, fmt.Sprintf("%q", c.id))
			}
		}
		fmt.Fprintf(&bt, "\n[[extent]]\nslug = \"g%02d\"\ntitle = \"Counties round %s\"\nids = [%s]\n", k+1, seed.id, strings.Join(ids, ", "))
	}
	path := filepath.Join(dir, "batch.toml")
	if err := os.WriteFile(path, []byte(bt.String()), 0o644); err != nil {
		b.Fatal(err)
	}
	f, err := Read(path)
	if err != nil {
		b.Fatal(err)
	}
	return f
}

// BenchmarkCounties20 renders 20 groups of neighbouring counties (1 dot =
// 10 people, zooms 4–9) as one batch ("batch"), and as 20 separate
// single-extent runs of the same extents that each read the input, place
// every dot and draw the extent's tiles ("separate"): what it takes to make
// the same 20 maps with consistent dots without the batch.
//
//	go test ./tiles/batch -run '^$' -bench Counties20 -benchtime 1x -timeout 60m
func BenchmarkCounties20(b *testing.B) {
	countiesFile(b)
	b.Run("batch", func(b *testing.B) { benchBatch(b, "all") })
	b.Run("batch-near", func(b *testing.B) { benchBatch(b, "near") })
	b.Run("separate", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			dir := b.TempDir()
			all := countiesBatch(b, dir, 20)
			start := time.Now()
			for i, e := range all.Extents {
				one := *all
				one.Extents = []*Extent{e}
				one.Out = filepath.Join(dir, fmt.Sprintf("run%02d", i+1))
				rep, err := Run(context.Background(), &one, Options{})
				if err != nil {
					b.Fatal(err)
				}
				if len(rep.Failed()) > 0 {
					b.Fatalf("%+v", rep.Failed())
				}
				os.RemoveAll(one.Out) // keep the disk use of one run
			}
			b.ReportMetric(time.Since(start).Seconds(), "s/20-runs")
		}
	})
	// For comparison, not the same maps: 20 renders of inputs cut down to
	// each extent's counties. Their tiles hold the extent's dots alone,
	// so a place in two extents is drawn differently in each, and low
	// zooms miss the neighbours.
	b.Run("subset-inputs", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			dir := b.TempDir()
			all := countiesBatch(b, dir, 20)
			res, err := read.File(countiesFile(b), read.Options{IDField: "geoid"})
			if err != nil {
				b.Fatal(err)
			}
			index := map[string]int{}
			for i, f := range res.Layer.Features {
				index[f.ID] = i
			}
			start := time.Now()
			for i, e := range all.Extents {
				sub := &geo.Layer{Path: res.Layer.Path, Name: res.Layer.Name, Fields: res.Layer.Fields}
				for _, id := range e.IDs {
					sub.Features = append(sub.Features, res.Layer.Features[index[id]])
				}
				in := filepath.Join(dir, fmt.Sprintf("sub%02d.geojson", i+1))
				if err := geojson.Write(in, sub); err != nil {
					b.Fatal(err)
				}
				m := *all.Map
				m.Input.File = in
				m.Out = filepath.Join(dir, fmt.Sprintf("render%02d", i+1))
				if _, err := mapjob.Run(context.Background(), &m, mapjob.Options{}); err != nil {
					b.Fatal(err)
				}
				os.RemoveAll(m.Out)
			}
			b.ReportMetric(time.Since(start).Seconds(), "s/20-renders")
		}
	})
}

func benchBatch(b *testing.B, mode string) {
	b.ReportAllocs()
	for b.Loop() {
		dir := b.TempDir()
		f := countiesBatch(b, dir, 20)
		f.Sample = mode
		start := time.Now()
		rep, err := Run(context.Background(), f, Options{})
		if err != nil {
			b.Fatal(err)
		}
		if len(rep.Failed()) > 0 {
			b.Fatalf("%+v", rep.Failed())
		}
		b.ReportMetric(time.Since(start).Seconds(), "s/batch")
		b.ReportMetric(rep.PlaceTime.Seconds(), "s-place")
		b.ReportMetric(rep.TileTime.Seconds(), "s-tiles")
		b.ReportMetric(float64(rep.TilesDrawn), "tiles-drawn")
		var linked int64
		for _, r := range rep.Results {
			linked += r.Tiles
		}
		b.ReportMetric(float64(linked), "tiles-in-extents")
	}
}
