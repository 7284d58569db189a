package batch

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

func parsePage(p Print) (page.Size, error) {
	size, err := page.ParseSize(p.Page)
	if err != nil {
		return page.Size{}, err
	}
	switch strings.ToLower(p.Orientation) {
	case "portrait":
		size = size.Portrait()
	case "landscape":
		size = size.Landscape()
	}
	return size, nil
}

// writePrint lays out the extent's page with mapjob.Print, as "stipple
// print" does: the extent's own areas and their dots, framed on its box
// (bbox extents) or its areas, with its rule as a footnote. It writes
// print.png and/or print.pdf into dir and returns their names.
func writePrint(ctx context.Context, dir string, e *Extent, p *Picked, in *mapjob.Input, pl *mapjob.Placed, m *mapfile.Map) ([]string, error) {
	opt, err := printOptions(e, p)
	if err != nil {
		return nil, err
	}
	pg, err := mapjob.Print(ctx, in, m, pl, opt)
	if err != nil {
		return nil, err
	}
	var names []string
	for _, f := range e.Print.Formats {
		name := "print." + f
		write := pg.Page.WritePNG
		if f == "pdf" {
			write = func(w io.Writer) error { return pg.Page.WritePDF(w, page.DotsAuto) }
		}
		if err := writeTo(filepath.Join(dir, name), write); err != nil {
			return nil, err
		}
		names = append(names, name)
	}
	return names, nil
}

// printOptions turns the extent's [print] settings and picked areas into
// mapjob.PrintOptions.
func printOptions(e *Extent, p *Picked) (mapjob.PrintOptions, error) {
	ps := *e.Print
	size, err := parsePage(ps)
	if err != nil {
		return mapjob.PrintOptions{}, err
	}
	margin, err := page.ParseLength(ps.Margin)
	if err != nil {
		return mapjob.PrintOptions{}, err
	}
	opt := mapjob.PrintOptions{Size: size, DPI: ps.DPI, Margin: margin, Projection: ps.Projection, DotMM: ps.DotMM,
		Outlines: ps.Outlines, Areas: p.Features, Rule: p.Rule}
	if e.Select == ByBox {
		b := p.Bound
		opt.Extent = &b
	}
	return opt, nil
}

func writeTo(path string, write func(io.Writer) error) error {
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("output: %w", err)
	}
	if err := write(f); err != nil {
		f.Close()
		return fmt.Errorf("output: %s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("output: %w", err)
	}
	return nil
}
