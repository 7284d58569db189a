package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"path/filepath"

	"github.com/stipple-maps/stipple/tiles/batch"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

var batchDoc = register(cmdDoc{Name: "batch", Order: 60, Usage: "batch FILE [flags]",
	Short: "render many extents (boxes, id lists, field values) from one sampling",
	About: "Reads a batch file (a map file with [[extent]] tables), places every dot once, and renders each " +
		"extent into its own folder with tiles, viewer, legend and totals (and a print page if asked), plus an " +
		"index page and summary.csv and summary.json. A failing extent is reported and the others finish; a " +
		"rerun redoes only the extents that changed.",
	Examples: []string{
		"stipple batch metros.toml",
		"stipple batch metros.toml --out /tmp/metros --workers 2",
	}})

// cmdBatch is "stipple batch FILE": many extents from one sampling.
func cmdBatch(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("batch", flag.ContinueOnError)
	fs.SetOutput(stderr)
	workers := fs.Int("workers", 0, "parallel workers, at most 4 per core (default: one per core)")
	memory := fs.String("memory", "", "memory budget for the dots and print pages, a `size` such as 512MiB (default 2GiB)")
	force := fs.Bool("force", false, "redo every extent, even those complete from an earlier run")
	out := fs.String("out", "", "batch folder (default: the batch file's out)")
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usageError{"batch takes one batch file (or a map file with [[extent]] tables)"}
	}
	var mem int64
	if *memory != "" {
		if mem, err = mapfile.ParseSize(*memory); err != nil {
			return usageError{"--memory: " + err.Error()}
		}
	}
	f, err := batch.Read(pos[0])
	if err != nil {
		return err
	}
	if *out != "" {
		f.Out = *out
	}
	rep, err := batch.Run(ctx, f, batch.Options{Workers: *workers, Memory: mem, Log: stdout, Force: *force})
	if err != nil {
		return err
	}
	failed := rep.Failed()
	for _, r := range failed {
		fmt.Fprintf(stderr, "stipple: batch: %s\n", r.Error)
	}
	fmt.Fprintf(stdout, "open %s in a browser, or: stipple serve %s\n", filepath.Join(f.Out, batch.IndexPage), f.Out)
	if len(failed) > 0 {
		return fmt.Errorf("batch: %d of %d extents failed (listed above and in %s); the others are done",
			len(failed), len(rep.Results), filepath.Join(f.Out, batch.SummaryCSV))
	}
	return nil
}
