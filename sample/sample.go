package sample

import (
	"math"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// Options set how dots are made.
type Options struct {
	// PeoplePerDot is N in "1 dot = N people"; it must be positive.
	PeoplePerDot float64
	// Seed selects one of many equally valid placements.
	Seed uint64
	// MaxAttempts caps the random tries for one dot, so that no polygon can
	// make the sampler loop forever; 0 means DefaultMaxAttempts.
	MaxAttempts int
}

// DefaultMaxAttempts bounds rejection sampling per dot. A polygon filling
// 1% of its box needs 100 tries on average; the chance that 10 000 tries all
// miss it is about e^-100.
const DefaultMaxAttempts = 10000

// Result says what happened to one feature's people.
type Result struct {
	// Expected is count / PeoplePerDot per category.
	Expected []float64
	// Dots is the number of dots drawn per category.
	Dots []int
	// Lost is the number of dots per category that could not be placed
	// (the feature has no area, or every try missed it).
	Lost []int
	// Problem describes why dots were lost; "" when none were.
	Problem string
}

// DotCount is the unbiased integer rounding of count/perDot: floor plus one
// more with probability equal to the fractional part, decided by the
// feature's own random stream so the choice is reproducible.
func DotCount(count, perDot float64, seed uint64, id uint64, cat int) int {
	e := count / perDot
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
// emit with each dot's category and position (lon, lat degrees), in category
// then index order.
func Feature(f *geo.Feature, counts []float64, opt Options, emit func(cat int, p orb.Point)) Result {
	maxTry := opt.MaxAttempts
	if maxTry <= 0 {
		maxTry = DefaultMaxAttempts
	}
	id := IDHash(f.ID)
	r := Result{
		Expected: make([]float64, len(counts)),
		Dots:     make([]int, len(counts)),
		Lost:     make([]int, len(counts)),
	}
	var shape *Shape
	for cat, c := range counts {
		r.Expected[cat] = c / opt.PeoplePerDot
		n := DotCount(c, opt.PeoplePerDot, opt.Seed, id, cat)
		if n == 0 {
			continue
		}
		if shape == nil {
			shape = NewShape(f.Geometry)
		}
		if shape.Area() <= 0 {
			r.Lost[cat] += n
			r.Problem = "the feature has people but no area"
			continue
		}
		for i := 0; i < n; i++ {
			p := stream(opt.Seed, id, cat, uint64(i))
			pt, ok := shape.Point(&p, maxTry)
			if !ok {
				r.Lost[cat]++
				r.Problem = "dots could not be placed inside the polygon"
				continue
			}
			r.Dots[cat]++
			emit(cat, pt)
		}
	}
	return r
}
