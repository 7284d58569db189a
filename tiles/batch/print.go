package batch

import (
	"fmt"
	"image/color"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// PrintCaution is printed on every page: the map caution and a word on
// what maps of groups can be used for.
const PrintCaution = render.Caution + " A map of where groups of people live can be misused to single them out; share it with care."

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

// writePrint lays out the extent's page with render/page: the extent's box
// in the frame, every dot of the store inside the frame (the tiles' dots,
// neighbours' included), and a legend with the extent's own totals. It
// writes print.png and/or print.pdf and returns their names.
func writePrint(dir string, e *Extent, p *Picked, in *mapjob.Input, pl *placed, m *mapfile.Map, colors []color.NRGBA, tot Totals) ([]string, error) {
	ps := *e.Print
	size, err := parsePage(ps)
	if err != nil {
		return nil, err
	}
	margin, err := page.ParseLength(ps.Margin)
	if err != nil {
		return nil, err
	}
	pr, err := page.Projection(ps.Projection, p.Bound)
	if err != nil {
		return nil, err
	}
	total := 0.0
	for _, v := range tot.People {
		total += v
	}
	spec := page.Spec{
		Size: size, DPI: ps.DPI, Margin: margin,
		Title:    e.Title,
		Subtitle: fmt.Sprintf("%s people in %s areas", render.FormatCount(total), render.FormatCount(float64(len(p.Features)))),
		Note:     render.DotNote(e.PeoplePerDot), Caution: PrintCaution, Credit: m.Credit,
		Projection: pr, Extent: p.Bound, DotMM: ps.DotMM, Opacity: m.Dots.Opacity,
	}
	var keep func(lon, lat float64) bool
	if e.Select == ByBox {
		spec.Footnotes = append(spec.Footnotes, "People: "+p.Rule+". Dots: every dot inside the frame, those of areas whose centre lies outside the box included.")
	} else {
		// Like the tiles' legend, the page shows the extent's own areas.
		keep = mapjob.InsideAny(in.Layer, p.Features)
		spec.Footnotes = append(spec.Footnotes, "People and dots: "+p.Rule+".")
	}
	if tot.NotDrawn > 0 {
		spec.Footnotes = append(spec.Footnotes, fmt.Sprintf("Not drawn: %s people, in areas too small or too thin to hold their dots.", render.FormatCount(tot.NotDrawn)))
	} else {
		spec.Footnotes = append(spec.Footnotes, "Not drawn: 0 people; every dot found room in its area.")
	}
	for k, c := range m.Categories {
		spec.Entries = append(spec.Entries, page.Entry{Label: c.Label, Color: colors[k], People: tot.People[k]})
	}
	if ps.Outlines {
		spec.Outlines = []orb.MultiPolygon{}
		for _, i := range p.Features {
			spec.Outlines = append(spec.Outlines, in.Layer.Features[i].Geometry)
		}
	}
	lay, err := page.NewLayout(spec)
	if err != nil {
		return nil, err
	}
	pg, err := lay.Place(frameDots(pl.store, lay.FrameBound(), keep))
	if err != nil {
		return nil, err
	}
	var names []string
	for _, f := range ps.Formats {
		name := "print." + f
		write := pg.WritePNG
		if f == "pdf" {
			write = func(w io.Writer) error { return pg.WritePDF(w, page.DotsAuto) }
		}
		if err := writeTo(filepath.Join(dir, name), write); err != nil {
			return nil, err
		}
		names = append(names, name)
	}
	return names, nil
}

// frameDots yields the store's dots inside lon/lat box b (the frame's
// box), at their world cells' centres: the inverse of Web Mercator (IOGP
// GN7-2, method 1024: φ = π/2 − 2 atan(e^(−N/R)), λ = E/R). It reads only
// the tiles under the box, at a zoom where they are few. keep, when not
// nil, picks the dots to show.
func frameDots(s *dotstore.Store, b orb.Bound, keep func(lon, lat float64) bool) page.DotSource {
	return func(yield func(lon, lat float64, cat int) bool) {
		if b.Min[0] < -180 || b.Max[0] > 180 {
			b.Min[0], b.Max[0] = -180, 180 // across the antimeridian: read every column
		}
		z := 0
		for z < 16 && len(Cover(b, z+1)) <= 64 {
			z++
		}
		keys := s.Keys()
		for _, t := range Cover(b, z) {
			first, last := dotstore.TileRange(z, t[0], t[1])
			for _, k := range rangeOf(keys, first, last) {
				x, y, cat := dotstore.Split(k)
				lon, lat := dotstore.CellLonLat(x, y)
				if keep != nil && !keep(lon, lat) {
					continue
				}
				if !yield(lon, lat, cat) {
					return
				}
			}
		}
	}
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
