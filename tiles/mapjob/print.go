package mapjob

import (
	"context"
	"fmt"
	"math"
	"os"
	"runtime/debug"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/proj"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/render/theme"
	"github.com/stipple-maps/stipple/sample"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// printWords are the print page's own words from the map's theme.
func printWords(t *theme.Theme) page.Words {
	tx := theme.Or(t).Text
	return page.Words{People: tx.People, Dots: tx.Dots, All: tx.All, Scale: tx.Scale, ScaleUndefined: tx.ScaleUndefined,
		Albers: tx.ProjectionAlbers, AlbersOne: tx.ProjectionAlbersOne, LAEA: tx.ProjectionLAEA,
		EqualEarth: tx.ProjectionEqualEarth, Mercator: tx.ProjectionMercator, PlateCarree: tx.ProjectionPlateCarree,
		North: tx.LatitudeNorth, South: tx.LatitudeSouth, East: tx.LongitudeEast, West: tx.LongitudeWest}
}

// PrintCaution is the English caution of every page (the default
// theme's): the map caution, which already says that maps of groups can
// be misused. A page prints its map's theme's caution.
const PrintCaution = render.Caution

// PlaceForPrint returns the map's dots for a print page: the store a
// render of the same map left in its state folder (StateDir of m.Out) when
// it holds these dots (same sampling fingerprint), else the dots placed
// anew under opt's memory budget, spilling to the system's temporary
// folder and leaving the render's store as it is. ctx stops placing.
func PlaceForPrint(ctx context.Context, in *Input, m *mapfile.Map, opt Options) (*Placed, error) {
	if pl := reuseStore(StateDir(m.Out, opt.Work), in.Fingerprint, ""); pl != nil {
		return pl, nil
	}
	defer debug.SetMemoryLimit(debug.SetMemoryLimit(max(opt.budget(), 512<<20)))
	tmp, err := os.MkdirTemp("", "stipple-print-")
	if err != nil {
		return nil, fmt.Errorf("print: %w", err)
	}
	// A store past the budget is merged into a mapped file; the mapping
	// outlives the file's name (POSIX unlink), so the folder goes at once.
	defer os.RemoveAll(tmp)
	return Place(ctx, in, m, PlaceOptions{Workers: opt.Workers, Memory: storeBudget(opt.budget()), Dir: tmp})
}

// PrintOptions set one print page.
type PrintOptions struct {
	Size   page.Size
	DPI    float64
	Margin float64 // mm
	// Projection is a page.Projection name ("auto" picks by extent).
	Projection string
	DotMM      float64
	// Outlines draws the printed areas' boundaries.
	Outlines bool
	// Title and Subtitle replace the map's title and the default subtitle
	// (the people and areas printed) when not "".
	Title, Subtitle string
	// Areas, when not nil, are the areas printed: the legend counts their
	// people and the page shows their dots only (dots of neighbours that
	// reach into the frame are left out, so people and dots are one set).
	Areas []int
	// Extent, when set, is the extent to frame (default: the bound of the
	// printed areas that have people).
	Extent *orb.Bound
	// Frame, when set, prints a box instead of areas: the page shows every
	// dot inside it, and the legend counts the people those dots stand for
	// (dots × people per dot), so both describe the same set.
	Frame *orb.Bound
	// Rule, when not "", is a footnote saying how the areas were chosen.
	Rule string
}

// PrintPage is a laid-out page and what is on it.
type PrintPage struct {
	Page *page.Page
	// Areas is the number of areas printed (0 for a Frame).
	Areas int
	// People and Dots are per category, over what the page shows.
	People []float64
	Dots   []int
	// NotDrawn is the people of the printed areas whose dots found no
	// place.
	NotDrawn float64
}

// Print lays out one page of the map from its placed dots: the same dots
// as the tiles (pl, from Place, usually the render's store), plus the dots
// beyond Web Mercator's latitude limit, which the store does not hold and
// which are placed again here (they depend on the area's seeded streams
// alone). The page's legend and footnotes say what is on it.
func Print(ctx context.Context, in *Input, m *mapfile.Map, pl *Placed, opt PrintOptions) (*PrintPage, error) {
	nc := len(m.Categories)
	if opt.Frame != nil && opt.Areas != nil {
		return nil, fmt.Errorf("print: a frame or a list of areas, not both")
	}
	var (
		extent orb.Bound
		areas  = opt.Areas
		keep   func(lon, lat float64) bool
	)
	switch {
	case opt.Frame != nil:
		extent = *opt.Frame
		box := ExtentOfBound(*opt.Frame)
		keep = box.Contains
	case areas != nil:
		extent = TallyAreas(in, m, pl.Outcomes, areas).Bounds
		keep = InsideAny(in.Layer, areas)
	default:
		extent = TallyAreas(in, m, pl.Outcomes, nil).Bounds
	}
	if opt.Extent != nil {
		extent = *opt.Extent
	}
	if !(extent.Min[1] <= extent.Max[1]) {
		return nil, fmt.Errorf("%s: nothing to print: no area of the extent has both geometry and people", m.Path)
	}
	pr, err := page.Projection(opt.Projection, extent)
	if err != nil {
		return nil, err
	}
	colors := m.RGBA()
	tx := theme.Or(m.Theme).Text
	spec := page.Spec{
		Size: opt.Size, DPI: opt.DPI, Margin: opt.Margin, Title: m.Title,
		Note: m.Theme.DotNote(m.PeoplePerDot), Caution: theme.Or(m.Theme).Text.Caution, Credit: m.Theme.CreditLine(m.Credit),
		Font: theme.Or(m.Theme).Font, Words: printWords(m.Theme),
		Projection: pr, Extent: extent, DotMM: opt.DotMM, Opacity: m.Dots.Opacity,
	}
	if opt.Title != "" {
		spec.Title = opt.Title
	}
	for k, c := range m.Categories {
		spec.Entries = append(spec.Entries, page.Entry{Label: c.Label, Color: colors[k]})
	}
	dots := printDots(ctx, in, m, pl, keep)
	res := &PrintPage{People: make([]float64, nc), Dots: make([]int, nc)}
	if opt.Frame != nil {
		// The legend counts what the page shows: the dots inside the box,
		// and the people they stand for.
		dots(func(_, _ float64, cat int) bool {
			res.Dots[cat]++
			return true
		})
		for k := range res.People {
			res.People[k] = float64(res.Dots[k]) * m.PeoplePerDot
		}
		spec.Footnotes = append(spec.Footnotes, theme.Fill(tx.PrintFramePeople, "dots", render.FormatCount(float64(sum(res.Dots))),
			"box", ExtentOfBound(extent).String(), "n", render.FormatCount(m.PeoplePerDot)))
	} else {
		var t Tally
		if areas == nil {
			t = TallyAreas(in, m, pl.Outcomes, nil)
		} else {
			t = TallyAreas(in, m, pl.Outcomes, areas)
		}
		res.Areas, res.NotDrawn = t.Features, t.NotDrawn
		copy(res.People, t.People)
		for k := range res.Dots {
			res.Dots[k] = t.Dots[k] + t.Beyond[k]
		}
		if opt.Rule != "" {
			spec.Footnotes = append(spec.Footnotes, theme.Fill(tx.PrintRule, "rule", opt.Rule))
		}
		spec.Footnotes = append(spec.Footnotes, NotDrawnNote(m.Theme, t.NotDrawn))
		if opt.Outlines {
			spec.Outlines = []orb.MultiPolygon{}
			if areas == nil {
				for _, f := range in.Layer.Features {
					spec.Outlines = append(spec.Outlines, f.Geometry)
				}
			} else {
				for _, i := range areas {
					spec.Outlines = append(spec.Outlines, in.Layer.Features[i].Geometry)
				}
			}
		}
	}
	total := 0.0
	for k := range spec.Entries {
		spec.Entries[k].People = res.People[k]
		total += res.People[k]
	}
	spec.Subtitle = opt.Subtitle
	if spec.Subtitle == "" {
		if opt.Frame != nil {
			spec.Subtitle = theme.Fill(tx.PrintSubtitleFrame, "people", render.FormatCount(total))
		} else {
			spec.Subtitle = theme.Fill(tx.PrintSubtitle, "people", render.FormatCount(total), "areas", render.FormatCount(float64(res.Areas)))
		}
	}
	if spec.References, err = printReferences(in, m, areas); err != nil {
		return nil, err
	}
	lay, err := page.NewLayout(spec)
	if err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	p, err := lay.Place(dots)
	if err != nil {
		return nil, err
	}
	res.Page = p
	return res, ctx.Err()
}

// NotDrawnNote is the print footnote on people whose dots found no place,
// in the words of theme t (nil: theme.Default).
func NotDrawnNote(t *theme.Theme, people float64) string {
	tx := theme.Or(t).Text
	if people == 0 {
		return tx.PrintAllDrawn
	}
	return theme.Fill(tx.PrintNotDrawn, "people", render.FormatCount(people))
}

func sum(v []int) int {
	n := 0
	for _, x := range v {
		n += x
	}
	return n
}

// printDots yields the store's dots at their cells' centres in
// longitude/latitude (within 4 cm of where each dot was placed), then the
// dots beyond the tiles' latitude limit, placed again from their areas'
// seeded streams. keep, when not nil, picks the dots to show. It stops
// early when ctx is done.
func printDots(ctx context.Context, in *Input, m *mapfile.Map, pl *Placed, keep func(lon, lat float64) bool) page.DotSource {
	return func(yield func(lon, lat float64, cat int) bool) {
		for n, k := range pl.Store.Range(0, math.MaxUint64) {
			if n&0xffff == 0 && ctx.Err() != nil {
				return
			}
			x, y, cat := dotstore.Split(k)
			lon, lat := dotstore.CellLonLat(x, y)
			if keep != nil && !keep(lon, lat) {
				continue
			}
			if !yield(lon, lat, cat) {
				return
			}
		}
		var sopt *sample.Options
		if len(pl.Outcomes) == 0 {
			return
		}
		for i := range in.Layer.Features {
			o, ok := pl.Outcomes[i]
			if !ok || o.Beyond == nil {
				continue
			}
			if sopt == nil {
				sopt = &sample.Options{PeoplePerDot: m.PeoplePerDot, Seed: m.Seed, Masks: in.Masks, Streams: Streams(m)}
			}
			stop := false
			sample.FeatureN(&in.Layer.Features[i], in.Dots[i], *sopt, func(cat int, p orb.Point) {
				if stop || math.Abs(p[1]) <= proj.WebMercatorMaxLat || (keep != nil && !keep(p[0], p[1])) {
					return
				}
				stop = !yield(p[0], p[1], cat)
			})
			if stop {
				return
			}
		}
	}
}
