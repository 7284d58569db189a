package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/stipple-maps/stipple/geo/demo"
	"github.com/stipple-maps/stipple/geo/geojson"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// renderLayers renders a map with [[layer]] entries: each layer into its
// subfolder, one viewer with the layer switch and compare divider on top.
func renderLayers(ctx context.Context, m *mapfile.Map, opt mapjob.Options, stdout io.Writer) error {
	s, err := mapjob.RunLayers(ctx, m, opt)
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "\n%s: %d layers\n", m.Title, len(s.Layers))
	for _, l := range s.Layers {
		people, dots := 0.0, 0
		for _, c := range l.Summary.Metadata.Categories {
			people += c.People
			dots += c.DotsDrawn
		}
		fmt.Fprintf(stdout, "  %-12s %-36s %12s people %10d dots (%s)\n", l.Key, l.Label, render.FormatCount(people), dots, l.Summary.Metadata.Note)
		if r := l.Crosswalk; r != nil {
			fmt.Fprintf(stdout, "  %-12s carried onto the map's areas: %s moved to another area id, %s lost\n", "", render.FormatCount(r.Moved), render.FormatCount(r.Lost))
		}
	}
	fmt.Fprintf(stdout, "  open %s in a browser, or: stipple serve %s\n", filepath.Join(s.OutputDir, "index.html"), s.OutputDir)
	return nil
}

// demoCompareFile is the demo's second map file: the invented older and
// newer counts as two layers on the newer areas.
const demoCompareFile = `# Quillmere's two invented counts, compared on the newer areas. The older
# count is on older boundaries; older-to-newer.csv (invented, like a
# statistics office's relationship file) carries it onto the newer ones.
title = "Home languages of Quillmere, two counts (invented demo)"
credit = "Invented data made by stipple's demo generator; not a real place."
people_per_dot = 10
seed = 1
out = "../compare"

[input]
file = "quillmere.geojson"
id = "code"

[tiles]
min_zoom = 9
max_zoom = 14

[dots]
diameter = 3.2
min_diameter = 0.7
opacity = 0.9

[[layer]]
key = "newer"
label = "Newer count"

[[layer]]
key = "older"
label = "Older count, on the newer areas"
[layer.input]
file = "quillmere-older.geojson"
id = "code"
[layer.crosswalk]
file = "older-to-newer.csv"
source = "older_code"
target = "newer_code"
weight = "weight"
`

// writeDemoCompare writes the older count, the crosswalk and the compare
// map file under dir/source and returns the parsed map.
func writeDemoCompare(dir string) (*mapfile.Map, error) {
	src := filepath.Join(dir, "source")
	old, pairs := demo.Older(1)
	if err := geojson.Write(filepath.Join(src, "quillmere-older.geojson"), old); err != nil {
		return nil, err
	}
	var cw strings.Builder
	cw.WriteString("older_code,newer_code,weight\n")
	for _, p := range pairs {
		fmt.Fprintf(&cw, "%s,%s,%.12g\n", p.Source, p.Target, p.Weight)
	}
	if err := os.WriteFile(filepath.Join(src, "older-to-newer.csv"), []byte(cw.String()), 0o644); err != nil {
		return nil, fmt.Errorf("demo: %w", err)
	}
	var b strings.Builder
	b.WriteString(demoCompareFile)
	for _, g := range demo.Groups {
		fmt.Fprintf(&b, "\n[[category]]\nkey = %q\nlabel = %q\ncolor = %q\nfields = [%q]\n", g.Field, g.Label, g.Color, g.Field)
	}
	path := filepath.Join(src, "quillmere-compare.toml")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		return nil, fmt.Errorf("demo: %w", err)
	}
	return mapfile.Read(path)
}
