package mapjob

import (
	"fmt"
	"math"
	"slices"
	"sort"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/read"
	"github.com/stipple-maps/stipple/sample"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// Tally is the account of a set of areas, per category: the people
// counted, the dots drawn on the tiles, the dots placed beyond the tiles'
// latitude limit, and the people whose dots found no place. Every person
// is in People; their dots are in Dots, in Beyond, or in NotDrawn.
type Tally struct {
	// Features is the number of areas tallied.
	Features int
	People   []float64
	// Dots are the dots drawn on the tiles.
	Dots []int
	// Beyond are dots placed beyond Web Mercator's latitude limit: on
	// print pages, not on tiles. BeyondPeople is their people (dots ×
	// people per dot), over all categories.
	Beyond       []int
	BeyondPeople float64
	// NotDrawn is the people with no dot (lost dots × people per dot).
	NotDrawn float64
	// Problems has one line per area with lost dots; Notes one line per
	// area whose dots were all placed, but not plainly.
	Problems []string
	Notes    []string
	// Estimates is set when the counts are survey estimates: the map file
	// names their margins of error (fields_moe).
	Estimates bool
	// Bounds is the extent of the areas that have people and geometry, as
	// RFC 7946 §5.2 gives a box: Min is (west, south), Max (east, north),
	// and west > east when the areas cross the antimeridian (the shortest
	// span of longitude that holds them all, geo.ExtentOf). Without such
	// areas Min > Max in both coordinates.
	Bounds orb.Bound
	// Lost totals the people with no dot by reason (the sampler's problem
	// text), sorted by reason: the methods note says why.
	Lost []LostReason
	// GeometryNotes is the number of repair and warning notes made while
	// reading the input file (all of it, also for a subset of areas), and
	// Repairs their counts by kind; both zero for a layer made in code.
	GeometryNotes int
	Repairs       read.Repairs
}

// LostReason is the people of the areas whose dots were lost for one reason.
type LostReason struct {
	Reason string  `json:"reason"`
	Areas  int     `json:"areas"`
	People float64 `json:"people"`
}

// TallyAreas tallies the areas idx of the input (all when idx is nil) from
// their outcomes. An area without an Outcome had all its dots drawn, except
// an area with no geometry, which no placement samples: its outcome is
// taken from the sampler here, so every path counts it alike.
func TallyAreas(in *Input, m *mapfile.Map, outcomes Outcomes, idx []int) Tally {
	nc := len(m.Categories)
	t := Tally{People: make([]float64, nc), Dots: make([]int, nc), Beyond: make([]int, nc), Problems: []string{}, Estimates: in.Margins != nil}
	var parts []orb.Bound
	sopt := sample.Options{PeoplePerDot: m.PeoplePerDot, Seed: m.Seed, Streams: Streams(m)}
	add := func(i int) {
		f := &in.Layer.Features[i]
		t.Features++
		has := false
		for k := 0; k < nc; k++ {
			t.People[k] += in.Counts[i][k]
			has = has || in.Counts[i][k] > 0
		}
		if has {
			for _, p := range f.Geometry {
				if len(p) > 0 && len(p[0]) > 0 {
					parts = append(parts, p.Bound())
				}
			}
		}
		o, ok := outcomes[i]
		if !ok && len(f.Geometry) == 0 {
			r := sample.FeatureN(f, in.Dots[i], sopt, func(int, orb.Point) {})
			o, ok = outcomeOf(r, nil)
		}
		lost := 0
		for k := 0; k < nc; k++ {
			d := in.Dots[i][k]
			if ok && o.Lost != nil {
				d -= o.Lost[k]
				lost += o.Lost[k]
			}
			if ok && o.Beyond != nil {
				d -= o.Beyond[k]
				t.Beyond[k] += o.Beyond[k]
				t.BeyondPeople += float64(o.Beyond[k]) * m.PeoplePerDot
			}
			t.Dots[k] += d
		}
		switch {
		case lost > 0:
			t.NotDrawn += float64(lost) * m.PeoplePerDot
			t.Problems = append(t.Problems, fmt.Sprintf("feature %d (id %q): %d dots not drawn: %s", f.Index, f.ID, lost, o.Problem))
			t.addLost(o.Problem, float64(lost)*m.PeoplePerDot)
		case ok && o.Problem != "":
			t.Notes = append(t.Notes, fmt.Sprintf("feature %d (id %q): %s", f.Index, f.ID, o.Problem))
		}
	}
	if in.Read != nil {
		t.GeometryNotes, t.Repairs = len(in.Read.Notes), in.Read.Repairs
	}
	if idx == nil {
		for i := range in.Layer.Features {
			add(i)
		}
	} else {
		for _, i := range idx {
			add(i)
		}
	}
	t.Bounds = BoundOf(parts)
	return t
}

// BoundOf is the extent of the bounds (geo.ExtentOf) as an orb.Bound whose
// west may exceed its east (across the antimeridian); Min > Max in both
// coordinates when there is none.
func BoundOf(parts []orb.Bound) orb.Bound {
	e, ok := geo.ExtentOf(parts...)
	if !ok {
		return orb.Bound{Min: orb.Point{math.Inf(1), math.Inf(1)}, Max: orb.Point{math.Inf(-1), math.Inf(-1)}}
	}
	return orb.Bound{Min: orb.Point{e.West, e.South}, Max: orb.Point{e.East, e.North}}
}

// ExtentOfBound is the geo.Extent of a bound that BoundOf made.
func ExtentOfBound(b orb.Bound) geo.Extent {
	return geo.Extent{West: b.Min[0], South: b.Min[1], East: b.Max[0], North: b.Max[1]}
}

// addLost adds people lost for reason to t.Lost, kept sorted by reason.
func (t *Tally) addLost(reason string, people float64) {
	i := sort.Search(len(t.Lost), func(i int) bool { return t.Lost[i].Reason >= reason })
	if i == len(t.Lost) || t.Lost[i].Reason != reason {
		t.Lost = slices.Insert(t.Lost, i, LostReason{Reason: reason})
	}
	t.Lost[i].Areas++
	t.Lost[i].People += people
}
