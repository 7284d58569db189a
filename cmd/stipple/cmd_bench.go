package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime/pprof"
	"strconv"
	"strings"
	"time"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/benchdata"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// benchColors are the Okabe & Ito (2008) "Color Universal Design" hues.
var benchColors = []string{"#E69F00", "#56B4E9", "#009E73", "#F0E442", "#CC79A7"}

var benchDoc = register(cmdDoc{Name: "bench", Order: 90, Usage: "bench [flags]",
	Short: "time the whole pipeline on an invented country (or on --input)",
	About: "Makes an invented country of --areas areas and --people people (or reads --input), renders it " +
		"into a temporary folder (or --out), and prints dots placed per second, tiles written per second, the " +
		"bytes written and the peak memory. Counts are invented; the figures in BENCHMARKS.md come from it.",
	Examples: []string{
		"stipple bench                                   # 30 million people, zooms 0–12",
		"stipple bench --people 1000000 --max-zoom 10 --workers 1",
	}})

// cmdBench runs the whole pipeline on a synthetic national-scale country (or
// on --input) and prints dots/s, tiles/s and peak memory.
func cmdBench(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("bench", flag.ContinueOnError)
	fs.SetOutput(stderr)
	input := fs.String("input", "", "a polygon file (any format stipple reads) with count fields grp_a … grp_e (default: the invented country)")
	id := fs.String("id", "geoid", "id field of --input")
	people := fs.Int64("people", 30_000_000, "people in the invented country")
	areas := fs.Int("areas", 3072, "areas in the invented country (a grid of about 4:3)")
	perDot := fs.Float64("per-dot", 1, "people per dot")
	minZoom := fs.Int("min-zoom", 0, "lowest zoom, 0 to 22 (default 0)")
	maxZoom := fs.Int("max-zoom", 12, "deepest zoom, 0 to 22")
	workers := fs.Int("workers", 0, "parallel workers, at most 4 per core (default: one per core)")
	memory := fs.String("memory", "", "dot store memory budget, e.g. 2GiB (default 2GiB)")
	out := fs.String("out", "", "output folder (default: a temporary folder, removed afterwards)")
	hidpi := fs.Bool("hidpi", false, "also write @2x tiles")
	diameter := fs.Float64("diameter", 0, "dot diameter in pixels at the deepest zoom, above 0 and at most 64 (default 3, the map file default)")
	opacity := fs.Float64("opacity", 0, "dot opacity, above 0 and at most 1 (default 0.9, the map file default)")
	seed := fs.Uint64("seed", 1, "seed of the dots (and of the invented country)")
	cpuProfile := fs.String("cpuprofile", "", "write a CPU profile (go tool pprof) to this file (default: none)")
	if _, err := parse(fs, args); err != nil {
		return err
	}
	if *cpuProfile != "" {
		f, err := os.Create(*cpuProfile)
		if err != nil {
			return fmt.Errorf("bench: %w", err)
		}
		defer f.Close()
		if err := pprof.StartCPUProfile(f); err != nil {
			return fmt.Errorf("bench: %w", err)
		}
		defer pprof.StopCPUProfile()
	}
	var budget int64
	if *memory != "" {
		v, err := mapfile.ParseSize(*memory)
		if err != nil {
			return usageError{"--memory: " + err.Error()}
		}
		budget = v
	}
	dir := *out
	if dir == "" {
		d, err := os.MkdirTemp("", "stipple-bench-")
		if err != nil {
			return fmt.Errorf("bench: %w", err)
		}
		defer os.RemoveAll(d)
		dir = d
	}
	m := mapfile.Defaults
	m.Path = filepath.Join(dir, "bench.toml")
	m.Out = dir
	m.Title = "Benchmark map (invented or synthetic counts)"
	m.Credit = "Synthetic counts; not real people."
	m.PeoplePerDot = *perDot
	m.Seed = *seed
	m.Tiles.MinZoom, m.Tiles.MaxZoom = *minZoom, *maxZoom
	if *diameter > 0 {
		m.Dots.Diameter = *diameter
		m.Dots.MinDiameter = min(m.Dots.MinDiameter, *diameter)
	}
	if *opacity > 0 {
		m.Dots.Opacity = *opacity
	}
	for i, f := range benchdata.Fields {
		m.Categories = append(m.Categories, mapfile.Category{Key: f, Label: "Group " + strings.ToUpper(f[4:]), Color: benchColors[i], Fields: []string{f}})
	}
	if err := m.CheckZooms(); err != nil {
		return usageError{err.Error()}
	}
	var layer *geo.Layer
	what := ""
	if *input != "" {
		abs, err := filepath.Abs(*input)
		if err != nil {
			return fmt.Errorf("bench: %w", err)
		}
		m.Input.File, m.Input.ID = abs, *id
		what = abs
	} else {
		cols := 1
		for cols*cols*3 < *areas*4 {
			cols++
		}
		rows := max(1, *areas/cols)
		t := time.Now()
		layer = benchdata.Country(*people, cols, rows, *seed)
		m.Input.File = "invented"
		what = fmt.Sprintf("invented country, %d areas, %s people (made in %s)", len(layer.Features), strconv.FormatInt(*people, 10), time.Since(t).Round(time.Millisecond))
	}
	fmt.Fprintf(stdout, "bench: %s, zooms %d–%d, %s\n", what, m.Tiles.MinZoom, m.Tiles.MaxZoom, filepath.Base(os.Args[0]))
	s, err := mapjob.Run(ctx, &m, mapjob.Options{Workers: *workers, Log: stdout, Layer: layer, Memory: budget, HiDPI: *hidpi})
	if err != nil {
		return err
	}
	dots := 0
	for _, d := range s.Dots {
		dots += d
	}
	tilesN := s.Tiles.Tiles + s.Tiles.Tiles2x
	fmt.Fprintf(stdout, "bench: dots      %d placed in %.2f s: %.0f dots/s\n", dots, s.PlaceTime.Seconds(), float64(dots)/s.PlaceTime.Seconds())
	fmt.Fprintf(stdout, "bench: tiles     %d written in %.2f s: %.0f tiles/s, %.0f dots/s drawn per zoom\n", tilesN, s.TileTime.Seconds(),
		float64(tilesN)/s.TileTime.Seconds(), float64(dots)*float64(m.Tiles.MaxZoom-m.Tiles.MinZoom+1)/s.TileTime.Seconds())
	fmt.Fprintf(stdout, "bench: output    %.1f MB of tiles; spilled runs %d\n", float64(s.Tiles.Bytes)/1e6, s.StoreRuns)
	fmt.Fprintf(stdout, "bench: total     %.2f s, peak RSS %.0f MB\n", s.Elapsed.Seconds(), float64(s.PeakRSS)/(1<<20))
	return nil
}
