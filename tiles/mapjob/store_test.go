package mapjob

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/benchdata"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// benchMap is a map of the invented benchmark country.
func benchMap(out string) *mapfile.Map {
	m := mapfile.Defaults
	m.Path = filepath.Join(out, "bench.toml")
	m.Out = out
	m.Title = "test"
	m.Input.File = "invented"
	m.Tiles.MinZoom, m.Tiles.MaxZoom = 0, 8
	colors := []string{"#E69F00", "#56B4E9", "#009E73", "#F0E442", "#CC79A7"}
	for i, f := range benchdata.Fields {
		m.Categories = append(m.Categories, mapfile.Category{Key: f, Label: f, Color: colors[i], Fields: []string{f}})
	}
	return &m
}

// files reads every file under root (relative path → bytes), skipping the
// names skip says to.
func files(t *testing.T, root string, skip func(rel string) bool) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	err := filepath.WalkDir(root, func(p string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(root, p)
		if skip != nil && skip(rel) {
			return nil
		}
		out[rel], err = os.ReadFile(p)
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func sameFiles(t *testing.T, a, b map[string][]byte) {
	t.Helper()
	if len(a) != len(b) {
		t.Fatalf("%d files vs %d", len(a), len(b))
	}
	for k, v := range a {
		if w, ok := b[k]; !ok || !bytes.Equal(v, w) {
			t.Fatalf("%s differs", k)
		}
	}
}

// TestSpilledStoreGivesTheSameMap renders the same map with the store in
// memory and with a budget so small that it spills dozens of sorted runs
// and merges them: every file, tiles and dot store included, is the same.
func TestSpilledStoreGivesTheSameMap(t *testing.T) {
	layer := benchdata.Country(400_000, 16, 12, 3)
	run := func(memory int64) (string, *Summary) {
		dir := t.TempDir()
		s, err := Run(context.Background(), benchMap(dir), Options{Layer: cloneLayer(layer), Memory: memory, Workers: 2})
		if err != nil {
			t.Fatal(err)
		}
		return dir, s
	}
	memDir, mem := run(0)
	spillDir, spill := run(16 * 10_000)
	if mem.StoreRuns != 0 || spill.StoreRuns < 20 {
		t.Fatalf("runs: in memory %d, tiny budget %d; want 0 and ≥ 20", mem.StoreRuns, spill.StoreRuns)
	}
	skip := func(rel string) bool { return rel == filepath.Join(".stipple", "dots.json") } // records the run count
	sameFiles(t, files(t, memDir, skip), files(t, spillDir, skip))
	if mem.Tiles.Tiles < 100 {
		t.Fatalf("only %d tiles", mem.Tiles.Tiles)
	}
}

func cloneLayer(l *geo.Layer) *geo.Layer { c := *l; return &c }

// TestRestyleReusesTheStore: a new colour redraws the tiles from the stored
// dots; a new seed samples again.
func TestRestyleReusesTheStore(t *testing.T) {
	layer := benchdata.Country(50_000, 8, 6, 4)
	dir := t.TempDir()
	m := benchMap(dir)
	m.Tiles.MinZoom, m.Tiles.MaxZoom = 3, 7
	first, err := Run(context.Background(), m, Options{Layer: layer})
	if err != nil {
		t.Fatal(err)
	}
	if first.StoreReused {
		t.Fatal("first run reused a store")
	}
	before := files(t, dir, func(rel string) bool { return !strings.HasSuffix(rel, ".png") })
	m.Categories[0].Color = "#000000"
	second, err := Run(context.Background(), m, Options{Layer: layer})
	if err != nil {
		t.Fatal(err)
	}
	if !second.StoreReused {
		t.Error("a colour change resampled the dots")
	}
	if second.Tiles.Kept != 0 {
		t.Errorf("a colour change kept %d old tiles", second.Tiles.Kept)
	}
	after := files(t, dir, func(rel string) bool { return !strings.HasSuffix(rel, ".png") })
	changed := 0
	for k, v := range before {
		if !bytes.Equal(v, after[k]) {
			changed++
		}
	}
	if changed == 0 {
		t.Error("no tile changed with the colour")
	}
	m.Seed++
	third, err := Run(context.Background(), m, Options{Layer: layer})
	if err != nil {
		t.Fatal(err)
	}
	if third.StoreReused {
		t.Error("a new seed reused the old dots")
	}
}
