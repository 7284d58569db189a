package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/stipple-maps/stipple/tiles/batch"
)

// cmdBatch is "stipple batch FILE": many extents from one sampling.
func cmdBatch(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("batch", flag.ContinueOnError)
	fs.SetOutput(stderr)
	workers := fs.Int("workers", 0, "parallel workers (default: all cores)")
	memory := fs.String("memory", "", "memory budget for the dots and print pages, e.g. 2GiB (default 2GiB)")
	force := fs.Bool("force", false, "redo every extent, even those complete from an earlier run")
	out := fs.String("out", "", "batch folder (overrides the batch file's out)")
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usageError{"batch takes one batch file (or a map file with [[extent]] tables)"}
	}
	var mem int64
	if *memory != "" {
		if mem, err = parseMemory(*memory); err != nil {
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

// parseMemory reads a byte count such as "2GiB", "512MiB", "1.5G" or
// "1000000" (binary units for both spellings, as memory is counted).
func parseMemory(s string) (int64, error) {
	t := strings.TrimSpace(s)
	mult := 1.0
	for _, u := range []struct {
		suffix string
		m      float64
	}{{"KiB", 1 << 10}, {"MiB", 1 << 20}, {"GiB", 1 << 30}, {"TiB", 1 << 40}, {"K", 1 << 10}, {"M", 1 << 20}, {"G", 1 << 30}, {"T", 1 << 40}, {"B", 1}} {
		if strings.HasSuffix(t, u.suffix) {
			t, mult = strings.TrimSpace(strings.TrimSuffix(t, u.suffix)), u.m
			break
		}
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || !(v > 0) || v*mult > 1<<50 {
		return 0, fmt.Errorf("%q: want a size such as 2GiB or 512MiB", s)
	}
	return int64(v * mult), nil
}
