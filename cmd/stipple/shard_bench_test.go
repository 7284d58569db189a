package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/stipple-maps/stipple/cmd/stipple/build"
	"github.com/stipple-maps/stipple/cmd/stipple/mapfile"
	"github.com/stipple-maps/stipple/sample/dotstore"
	"github.com/stipple-maps/stipple/tiles/shard"
)

// BenchmarkShardBalance measures, on the national input (synthetic
// counts, 1 dot = 10 people), how evenly N = 2, 4 and 16 parts share the
// work: the dots each part owns and samples and the tiles with dots it
// draws, counted on the real dots (all areas placed once), and the work
// those make at MeasuredRates. The metrics are the largest part over the
// mean. It needs ../../../shared/data (skipped without it).
//
//	go test ./cmd/stipple -run '^$' -bench ShardBalance -benchtime 1x
func BenchmarkShardBalance(b *testing.B) {
	path := filepath.Join("..", "..", "examples", "us-counties-synthetic", "map.toml")
	m, err := mapfile.Read(path)
	if err != nil {
		b.Fatal(err)
	}
	if _, err := os.Stat(m.Resolve(m.Input.File)); err != nil {
		b.Skipf("national input not here: %v", err)
	}
	m.PeoplePerDot = 10
	in, err := build.LoadInput(m, nil)
	if err != nil {
		b.Fatal(err)
	}
	store, results, _, err := build.PlaceStore(context.Background(), in.Layer, in.Counts, m, build.PlaceOptions{})
	if err != nil {
		b.Fatal(err)
	}
	keys := store.Keys()
	r := shard.MeasuredRates
	b.ReportAllocs()
	b.ResetTimer()
	for it := 0; it < b.N; it++ {
		for _, n := range []int{2, 4, 16} {
			l, err := layoutFor(m, in, n, false)
			if err != nil {
				b.Fatal(err)
			}
			own := make([]float64, n)
			sampled := make([]float64, n)
			tilesN := make([]float64, n)
			work := make([]float64, n)
			for i := 0; i < n; i++ {
				own[i] = float64(len(l.OwnedKeys(keys, i)))
			}
			for j, f := range in.Layer.Features {
				d := 0
				for _, v := range results[j].Dots {
					d += v
				}
				for i := 0; i < n; i++ {
					if l.Touches(i, f.Geometry.Bound()) {
						sampled[i] += float64(d)
					}
				}
			}
			perDot := 0.0
			for z := l.Split; z <= m.Tiles.MaxZoom; z++ {
				zt := make([]float64, n)
				dotstore.TilesOf(keys, z, func(x, y int, _ []uint64) { zt[l.Owner(z, x, y)]++ })
				for i := range zt {
					tilesN[i] += zt[i]
				}
				if build.Look(m)(z).Diameter >= 1 {
					perDot += r.DiscNsPerDot
				} else {
					perDot += r.CountNsPerDot
				}
			}
			for i := range work {
				work[i] = sampled[i]*r.SampleNsPerDot + own[i]*perDot + tilesN[i]*r.TileNs
			}
			ratio := func(v []float64) float64 {
				s := 0.0
				for _, x := range v {
					s += x
				}
				return slices.Max(v) / (s / float64(len(v)))
			}
			b.ReportMetric(ratio(own), fmt.Sprintf("n%d-own-dots-max/mean", n))
			b.ReportMetric(ratio(sampled), fmt.Sprintf("n%d-sampled-dots-max/mean", n))
			b.ReportMetric(ratio(tilesN), fmt.Sprintf("n%d-tiles-max/mean", n))
			b.ReportMetric(ratio(work), fmt.Sprintf("n%d-work-max/mean", n))
			if it == 0 {
				b.Logf("N=%d split %d, estimated imbalance %.3f", n, l.Split, l.Imbalance())
				for i := 0; i < n; i++ {
					b.Logf("  part %2d: own %9.0f dots (est. %9.0f), sampled %9.0f, tiles %7.0f, work %6.1f core-s (est. %6.1f)",
						i, own[i], l.Dots[i], sampled[i], tilesN[i], work[i]/1e9, l.Weight[i])
				}
			}
		}
	}
}
