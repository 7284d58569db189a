package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"github.com/stipple-maps/stipple/tiles/sink"
)

var stillDoc = register(cmdDoc{Name: "still", Order: 57, Usage: "still MAP [--view Z/LAT/LON] [--size 1200x675] [--out FILE]",
	Short: "write a PNG of one view of a rendered map, with legend, note and credit",
	About: "Composes a PNG of one view of a rendered map from the tiles the render wrote, with the legend, " +
		"the dot note and the credit, for social posts and CMS fallbacks. MAP is the map file (its output " +
		"folder is read) or the rendered folder or bucket URL; without --view the still shows the whole map.",
	Examples: []string{
		"stipple still map.toml --view 12/-30.02/-140.0 --out card.png",
		"stipple still map-out --size square",
	}})

// cmdStill is "stipple still MAP --view z/lat/lon --size 1200x675": a PNG
// of one view of a rendered map, legend, note and credit composed in
// (tiles.Still), for social posts and CMS fallbacks. MAP is the map file
// (its output is read) or the rendered folder or bucket URL.
func cmdStill(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("still", flag.ContinueOnError)
	fs.SetOutput(stderr)
	viewFlag := fs.String("view", "", "`zoom/lat/lon` of the centre (default: the whole map)")
	sizeFlag := fs.String("size", "1200x675", "`size`: WIDTHxHEIGHT in pixels, or wide (1200x675), portrait (1080x1350), square (1080x1080)")
	outFlag := fs.String("out", "", "PNG `file` to write (default still-WIDTHxHEIGHT.png in the current folder)")
	fs.StringVar(outFlag, "o", "", "") // -o, as before: an alias without help
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usageError{"still takes one map file or rendered folder"}
	}
	w, h, err := tiles.ParseStillSize(*sizeFlag)
	if err != nil {
		return usageError{"--" + err.Error()}
	}
	loc := pos[0]
	if strings.HasSuffix(strings.ToLower(loc), ".toml") {
		m, err := mapfile.Read(loc)
		if err != nil {
			return err
		}
		loc = m.Out
	}
	src, err := sink.Open(ctx, loc)
	if err != nil {
		return err
	}
	defer src.Close()
	raw, err := src.Get(ctx, tiles.MetadataFile)
	if err != nil {
		return fmt.Errorf("still: %s has no %s: render the map first", loc, tiles.MetadataFile)
	}
	var md tiles.Metadata
	if err := json.Unmarshal(raw, &md); err != nil {
		return fmt.Errorf("still: %s: %s: %w", loc, tiles.MetadataFile, err)
	}
	view := tiles.FitView(&md, w, h)
	if *viewFlag != "" {
		if view, err = tiles.ParseView(*viewFlag); err != nil {
			return usageError{"--" + err.Error()}
		}
	}
	colors, err := mapjob.MetadataColors(&md)
	if err != nil {
		return fmt.Errorf("still: %s: %w", loc, err)
	}
	img, box, err := tiles.Still(ctx, src, &md, tiles.StillOptions{View: view, Width: w, Height: h, Legend: mapjob.LegendOf(&md, colors)})
	if err != nil {
		return err
	}
	b, err := tiles.StillPNG(img)
	if err != nil {
		return err
	}
	out := *outFlag
	if out == "" {
		out = fmt.Sprintf("still-%dx%d.png", w, h)
	}
	if err := os.WriteFile(out, b, 0o644); err != nil {
		return fmt.Errorf("still: %w", err)
	}
	fmt.Fprintf(stdout, "wrote %s: %d×%d, view %s, legend at %d,%d %d×%d\n", out, w, h, view, box.Min.X, box.Min.Y, box.Dx(), box.Dy())
	return nil
}
