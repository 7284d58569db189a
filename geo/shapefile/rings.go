package shapefile

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// ringInfo is one usable ring of a record with what assembly needs.
type ringInfo struct {
	index int // position among the record's parts, for messages and order
	ring  orb.Ring
	area  float64   // signed; negative = clockwise (y up)
	bound orb.Bound // set only when there are holes to place
}

// assemble turns the parts of one polygon record into polygons by the rule of
// the Technical Description ("Polygon" shape type): a ring whose interior is
// on the right when walking it (clockwise) is an outer ring, a
// counter-clockwise ring is a hole. Each hole goes to the smallest outer ring
// that contains it. A hole no outer ring contains becomes an outer ring of
// its own, and a ring that cannot bound an area (fewer than 4 points once
// closed, or zero area) is dropped; both are reported in the returned
// messages. Output rings follow RFC 7946 §3.1.6: outer rings
// counter-clockwise, holes clockwise, i.e. each stored ring reversed.
func assemble(parts []orb.Ring) (orb.MultiPolygon, []string) {
	// Problems are gathered per kind so that a record with a million empty
	// parts gives a few lines, not a million.
	var short, unclosed, huge, flat, lonely []int
	shortN := 0 // point count of the first short ring
	var outers, holes []ringInfo
	for k, r := range parts {
		n := len(r)
		closed := n > 0 && r[0] == r[n-1]
		eff := n
		if !closed {
			eff++
		}
		if eff < 4 {
			if len(short) == 0 {
				shortN = n
			}
			short = append(short, k)
			continue
		}
		if !closed {
			r = append(r, r[0]) // copies: parts carry a capped capacity
			unclosed = append(unclosed, k)
		}
		a, bound := geo.RingAreaBound(r)
		if math.IsInf(bound, 0) || math.IsNaN(a) {
			huge = append(huge, k)
			continue
		}
		if math.Abs(a) <= 2*bound {
			// Zero, or too small to tell its sign from rounding: the ring
			// has no orientation and bounds nothing.
			flat = append(flat, k)
			continue
		}
		ri := ringInfo{index: k, ring: r, area: a}
		if a < 0 {
			outers = append(outers, ri)
		} else {
			holes = append(holes, ri)
		}
	}

	owner := make([]int, len(holes)) // index into outers, -1 = none
	if len(holes) > 0 {
		// Bounds serve only to place holes. Outers are tried from the
		// smallest up, so the first that contains a hole is the smallest.
		for i := range outers {
			outers[i].bound = outers[i].ring.Bound()
		}
		bySize := make([]int, len(outers))
		for i := range bySize {
			bySize[i] = i
		}
		slices.SortStableFunc(bySize, func(a, b int) int { return cmpFloat(-outers[a].area, -outers[b].area) })
		for h := range holes {
			owner[h] = -1
			hb := holes[h].ring.Bound()
			for _, o := range bySize {
				// An outer smaller than the hole cannot contain it (the
				// margin allows for rounding when the two rings coincide).
				if -outers[o].area < holes[h].area*(1-1e-9) || !boundWithin(hb, outers[o].bound) {
					continue
				}
				if ringInside(holes[h].ring, outers[o].ring) {
					owner[h] = o
					break
				}
			}
		}
	}

	type poly struct {
		index int
		rings []orb.Ring
	}
	polys := make([]poly, 0, len(outers))
	for _, o := range outers {
		polys = append(polys, poly{o.index, []orb.Ring{reversed(o.ring)}})
	}
	for h, hi := range holes {
		if owner[h] >= 0 {
			polys[owner[h]].rings = append(polys[owner[h]].rings, reversed(hi.ring))
			continue
		}
		lonely = append(lonely, hi.index)
		polys = append(polys, poly{hi.index, []orb.Ring{hi.ring}}) // already counter-clockwise
	}
	slices.SortStableFunc(polys, func(a, b poly) int { return a.index - b.index })
	var mp orb.MultiPolygon
	if len(polys) > 0 {
		mp = make(orb.MultiPolygon, len(polys))
		for i, p := range polys {
			mp[i] = orb.Polygon(p.rings)
		}
	}

	var warns []string
	if len(short) == 1 {
		warns = append(warns, fmt.Sprintf("ring %d has %d points (a closed ring needs at least 4): dropped", short[0], shortN))
	} else if len(short) > 1 {
		warns = append(warns, fmt.Sprintf("%s fewer than 4 points once closed: dropped", ringNames(short, "has", "have")))
	}
	if len(unclosed) > 0 {
		warns = append(warns, fmt.Sprintf("%s not closed (first point differs from last): the first point was repeated at the end", ringList(unclosed)))
	}
	if len(huge) > 0 {
		warns = append(warns, fmt.Sprintf("%s coordinates too large to compute an area: dropped", ringNames(huge, "has", "have")))
	}
	if len(flat) > 0 {
		warns = append(warns, fmt.Sprintf("%s zero area: dropped", ringNames(flat, "has", "have")))
	}
	if len(lonely) > 0 {
		slices.Sort(lonely)
		warns = append(warns, fmt.Sprintf("%s a hole (counter-clockwise) that no outer ring contains: kept as an outer ring", ringList(lonely)))
	}
	return mp, warns
}

// ringList names rings for a message with its verb: "ring 3 is",
// "rings 1, 4 are", "rings 1, 2, 3, 4, 5 and 7 more are".
func ringList(idx []int) string { return ringNames(idx, "is", "are") }

func ringNames(idx []int, one, many string) string {
	if len(idx) == 1 {
		return fmt.Sprintf("ring %d %s", idx[0], one)
	}
	var b strings.Builder
	b.WriteString("rings ")
	for i, k := range idx {
		if i == 5 {
			fmt.Fprintf(&b, " and %d more", len(idx)-5)
			break
		}
		if i > 0 {
			b.WriteString(", ")
		}
		fmt.Fprint(&b, k)
	}
	b.WriteString(" " + many)
	return b.String()
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

func boundWithin(in, out orb.Bound) bool {
	return in.Min[0] >= out.Min[0] && in.Min[1] >= out.Min[1] && in.Max[0] <= out.Max[0] && in.Max[1] <= out.Max[1]
}

// ringInside reports whether ring h lies inside ring o, deciding on the first
// vertex (then edge midpoint) of h that is not on o's boundary. A ring lying
// wholly on o's boundary counts as inside.
func ringInside(h, o orb.Ring) bool {
	for i := 0; i+1 < len(h); i++ {
		if c := classify(h[i], o); c != onBoundary {
			return c == inside
		}
	}
	for i := 0; i+1 < len(h); i++ {
		m := orb.Point{(h[i][0] + h[i+1][0]) / 2, (h[i][1] + h[i+1][1]) / 2}
		if c := classify(m, o); c != onBoundary {
			return c == inside
		}
	}
	return true
}

const (
	outside = iota
	inside
	onBoundary
)

// classify locates p against the closed ring r by crossing number (even-odd
// rule), with an exact test for p lying on an edge.
func classify(p orb.Point, r orb.Ring) int {
	in := false
	px, py := p[0], p[1]
	for i := 0; i+1 < len(r); i++ {
		ax, ay := r[i][0], r[i][1]
		bx, by := r[i+1][0], r[i+1][1]
		if (ax-px)*(by-py)-(bx-px)*(ay-py) == 0 &&
			px >= math.Min(ax, bx) && px <= math.Max(ax, bx) &&
			py >= math.Min(ay, by) && py <= math.Max(ay, by) {
			return onBoundary
		}
		if (ay > py) != (by > py) {
			if px < ax+(py-ay)*(bx-ax)/(by-ay) {
				in = !in
			}
		}
	}
	if in {
		return inside
	}
	return outside
}

// reversed reverses r in place (the record's point slice is ours) and
// returns it.
func reversed(r orb.Ring) orb.Ring {
	slices.Reverse(r)
	return r
}
