package sample

import (
	"math"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// Options set how dots are made.
type Options struct {
	// PeoplePerDot is N in "1 dot = N people"; it must be positive.
	PeoplePerDot float64
	// Seed selects one of many equally valid placements.
	Seed uint64
	// MaxAttempts caps the proposals for one dot, so that no polygon or mask
	// can make the sampler loop forever; 0 means DefaultMaxAttempts.
	MaxAttempts int
	// Masks, when not nil, are areas where nobody lives: dots are kept out
	// of them, unless they leave no room in a feature (Result.MaskIgnored).
	Masks *Mask
	// Streams, when set, gives category k the random stream Streams[k]
	// instead of k. Maps pass CategoryStream of each category's key, so a
	// dot depends on its category's key, not on where the category stands
	// in the map file.
	Streams []uint64
}

// DefaultMaxAttempts bounds the proposals per dot. The box and grid methods
// accept at least half of their proposals on ordinary parts and triangles
// all of them (see the package documentation), so in practice only masks
// that cover (nearly) all of a feature exhaust it: the chance that 10 000 proposals all land in masks
// covering 99.9% of a feature is about e^-10, and 0.5^10000 without masks.
const DefaultMaxAttempts = 10000

// Result says what happened to one feature's people.
type Result struct {
	// Expected is count / PeoplePerDot per category (nil from FeatureN,
	// which is given dot counts, not people).
	Expected []float64
	// Dots is the number of dots drawn per category.
	Dots []int
	// Lost is the number of dots per category that could not be placed:
	// the feature has no vertex at all, or (should never happen) every
	// proposal missed it.
	Lost []int
	// MaskIgnored is set when the masks cover all of the feature, or so
	// much that a dot could not be placed outside them within MaxAttempts;
	// then all of the feature's dots were placed ignoring the masks.
	MaskIgnored bool
	// NoArea is set when the feature has people but no area (its polygons
	// are lines or points); its dots were placed along its outline.
	NoArea bool
	// EvenOdd is set when some part's rings cross, or a hole lies outside
	// its outer ring or inside another hole; such a part is filled by the
	// even-odd rule (a point is inside when a ray from it crosses the
	// part's rings an odd number of times).
	EvenOdd bool
	// Problem describes, in one line, the flags above and any lost dots;
	// "" when there was nothing to report.
	Problem string
}

// DotCount is the unbiased integer rounding of count/perDot: floor plus one
// more with probability equal to the fractional part, decided by the
// feature's own random stream so the choice is reproducible. A negative,
// infinite or NaN count gives 0 dots.
func DotCount(count, perDot float64, seed uint64, id uint64, cat int) int {
	return dotCount(count, perDot, seed, id, uint64(cat))
}

func dotCount(count, perDot float64, seed uint64, id uint64, cat uint64) int {
	e := count / perDot
	if !(e > 0) || math.IsInf(e, 0) {
		return 0
	}
	n := math.Floor(e)
	frac := e - n
	if frac > 0 {
		p := stream(seed, id, cat, countIndex)
		if unit(&p) < frac {
			n++
		}
	}
	return int(n)
}

// Feature places the dots of f, counts[k] people of category k, and calls
// emit with each dot's category and position (lon, lat degrees, longitude
// in [-180, 180]), in category then index order. The number of dots per
// category is DotCount's unbiased rounding.
func Feature(f *geo.Feature, counts []float64, opt Options, emit func(cat int, p orb.Point)) Result {
	id := IDHash(f.ID)
	dots := make([]int, len(counts))
	expected := make([]float64, len(counts))
	for k, c := range counts {
		expected[k] = c / opt.PeoplePerDot
		dots[k] = dotCount(c, opt.PeoplePerDot, opt.Seed, id, streamOf(opt.Streams, k))
	}
	r := FeatureN(f, dots, opt, emit)
	r.Expected = expected
	return r
}

// FeatureN places exactly dots[k] dots of category k in f (for instance the
// counts from Allocate in exact mode) and calls emit like Feature. Dot i of
// category k is the same point as the i-th dot Feature would draw for k: it
// depends on (Seed, f.ID, k, i), f's geometry and the masks only.
func FeatureN(f *geo.Feature, dots []int, opt Options, emit func(cat int, p orb.Point)) Result {
	return FeatureNSin(f, dots, opt, func(cat int, p orb.Point, _ float64) { emit(cat, p) })
}

// FeatureNSin is FeatureN whose emit also receives sinLat, the sine of the
// dot's latitude as the sampler drew it: dots are drawn in the plane
// (longitude, sin latitude) and p[1] is the arcsine of that draw, so sinLat
// is the draw itself, not math.Sin(p[1]) with its rounding. (Dots of a
// feature without area lie on its outline in lon/lat; theirs is
// math.Sin(p[1]).) Web Mercator's northing is atanh(sin φ), so a caller can
// project the dot without trigonometry (dotstore.WorldFromSin). The dots
// are FeatureN's, in the same order.
func FeatureNSin(f *geo.Feature, dots []int, opt Options, emit func(cat int, p orb.Point, sinLat float64)) (r Result) {
	maxTry := opt.MaxAttempts
	if maxTry <= 0 {
		maxTry = DefaultMaxAttempts
	}
	r = Result{Dots: make([]int, len(dots)), Lost: make([]int, len(dots))}
	total := 0
	for _, n := range dots {
		total += max(n, 0)
	}
	if total == 0 {
		return r
	}
	id := IDHash(f.ID)
	shape := NewShape(f.Geometry)
	r.EvenOdd = shape.crossing
	var problems []string
	if r.EvenOdd {
		problems = append(problems, "rings cross or nest: filled by the even-odd rule")
	}
	defer func() { r.Problem = strings.Join(problems, "; ") }()

	if shape.area <= 0 {
		r.NoArea = true
		placed := 0
		for cat, n := range dots {
			for i := 0; i < n; i++ {
				p := stream(opt.Seed, id, streamOf(opt.Streams, cat), uint64(i))
				pt, ok := shape.outlinePoint(&p)
				if !ok {
					r.Lost[cat]++
					continue
				}
				r.Dots[cat]++
				placed++
				emit(cat, pt, math.Sin(pt[1]*degToRad))
			}
		}
		if placed > 0 {
			problems = append(problems, "the feature has people but no area: its dots lie on its outline")
		} else {
			problems = append(problems, "the feature has people but no area")
		}
		return r
	}

	if opt.Masks.overlaps(shape) {
		type dot struct {
			cat int
			p   orb.Point
			sin float64
		}
		buf := make([]dot, 0, total)
		ok := true
	masked:
		for cat, n := range dots {
			for i := 0; i < n; i++ {
				p := stream(opt.Seed, id, streamOf(opt.Streams, cat), uint64(i))
				pt, sin, hit := shape.pointUnmasked(&p, maxTry, opt.Masks)
				if !hit {
					ok = false
					break masked
				}
				buf = append(buf, dot{cat, pt, sin})
			}
		}
		if ok {
			for _, d := range buf {
				r.Dots[d.cat]++
				emit(d.cat, d.p, d.sin)
			}
			return r
		}
		r.MaskIgnored = true
		problems = append(problems, "masks cover (almost) all of the feature: its dots were placed ignoring them")
	}

	lost := false
	for cat, n := range dots {
		for i := 0; i < n; i++ {
			if lost {
				// One dot found no room in MaxAttempts: the rest would
				// not either, and need not take as long to find out.
				r.Lost[cat]++
				continue
			}
			p := stream(opt.Seed, id, streamOf(opt.Streams, cat), uint64(i))
			pt, sin, ok := shape.point(&p, maxTry)
			if !ok {
				r.Lost[cat]++
				lost = true
				continue
			}
			r.Dots[cat]++
			emit(cat, pt, sin)
		}
	}
	if lost {
		problems = append(problems, "dots could not be placed inside the polygon")
	}
	return r
}
