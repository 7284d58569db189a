package shard

import (
	"math"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/sample/dotstore"
)

// Rates are measured costs that turn counts of dots and tiles into time
// and bytes. MeasuredRates holds the values measured for this package's
// BENCHMARKS.part.md; re-measure them on the machines a job will run on.
type Rates struct {
	// Source says where the rates were measured.
	Source string `json:"source"`
	// SampleNsPerDot is placing, sorting and storing one dot, per core.
	SampleNsPerDot float64 `json:"sample_ns_per_dot"`
	// CountNsPerDot and DiscNsPerDot are one dot drawn at one zoom of count
	// tiles and of disc tiles, per core.
	CountNsPerDot float64 `json:"count_ns_per_dot_zoom"`
	DiscNsPerDot  float64 `json:"disc_ns_per_dot_zoom"`
	// TileNs is compositing, encoding and writing one tile, per core.
	TileNs float64 `json:"tile_ns"`
	// CountBytes and DiscBytes are the mean size of a count tile and of a
	// disc tile (PNG).
	CountBytes float64 `json:"count_tile_bytes"`
	DiscBytes  float64 `json:"disc_tile_bytes"`
}

// MeasuredRates were measured on the national benchmark (3230 areas,
// synthetic counts) on a 2-core machine: see BENCHMARKS.part.md.
var MeasuredRates = Rates{
	Source:         "the us-counties benchmark, 2 cores (BENCHMARKS.part.md)",
	SampleNsPerDot: 95,
	CountNsPerDot:  6,
	DiscNsPerDot:   40,
	TileNs:         1.2e6,
	CountBytes:     24000,
	DiscBytes:      9000,
}

// ZoomEstimate is the expected output of one zoom (1× tiles; @2x tiles
// double the count).
type ZoomEstimate struct {
	Zoom  int     `json:"zoom"`
	Disc  bool    `json:"disc"`
	Tiles float64 `json:"tiles"`
	Bytes float64 `json:"bytes"`
	// PerShard is the expected tiles of each part (zooms ≥ split).
	PerShard []float64 `json:"-"`
}

// Estimate is the expected output of a whole render.
type Estimate struct {
	Zooms     []ZoomEstimate `json:"zooms"`
	Tiles     float64        `json:"tiles"`
	Bytes     float64        `json:"bytes"`
	CoreHours float64        `json:"core_hours"`
	// Pixels is the expected number of occupied pixels at the summary
	// level (the final step reads at most this many times the number of
	// categories entries).
	Pixels float64 `json:"summary_pixels"`
}

// FillOf is the share of its bound that a lon/lat multipolygon covers, in
// Web Mercator (shoelace area of the projected rings, holes subtracted, over
// the projected bound's area); 1 for a degenerate bound.
func FillOf(mp orb.MultiPolygon) float64 {
	b := mp.Bound()
	x0, y0, x1, y1 := worldBound(b)
	box := float64(x1-x0) * float64(y1-y0)
	if box <= 0 {
		return 1
	}
	area := 0.0
	for _, poly := range mp {
		for k, ring := range poly {
			a := 0.0
			for i := range ring {
				j := (i + 1) % len(ring)
				xi, yi := dotstore.World(ring[i][0], ring[i][1])
				xj, yj := dotstore.World(ring[j][0], ring[j][1])
				a += float64(xi)*float64(yj) - float64(xj)*float64(yi)
			}
			a = math.Abs(a) / 2
			if k == 0 {
				area += a
			} else {
				area -= a
			}
		}
	}
	return math.Min(math.Max(area/box, 1e-6), 1)
}

// spanLimit is how many tiles of an area's bound are tracked one by one;
// an area spanning more tiles is counted as tiles of its own.
const spanLimit = 64

// EstimateTiles predicts the tiles per zoom from the areas' bounds, fills
// and dots, without placing a dot. Within an area, dots are taken to be
// spread evenly over the Fill share of its bound, so a tile of it holds
// Poisson(λ) dots and is drawn with probability 1 − e^(−λ); tiles shared by
// small areas combine those probabilities. Fringe tiles (empty tiles inked
// by a neighbour's dot) are not counted.
func EstimateTiles(areas []Area, l *Layout, r Rates) Estimate {
	p := l.Pyramid
	var e Estimate
	total := 0.0
	for _, a := range areas {
		total += max(a.Dots, 0)
	}
	scale := 1.0
	if p.HiDPI {
		scale = 2 // an @2x tile per 1× tile, each with about four times the pixels
	}
	coreNs := total * r.SampleNsPerDot
	for z := p.MinZoom; z <= p.MaxZoom; z++ {
		ze := ZoomEstimate{Zoom: z, Disc: p.look(z, pass{1}).Diameter >= 1, PerShard: make([]float64, l.Shards)}
		tilesOf(areas, z, func(tz, tx, ty int, v float64, owner func() int) {
			ze.Tiles += v
			if z >= l.Split {
				if tx >= 0 {
					ze.PerShard[l.Owner(z, tx, ty)] += v
				} else {
					ze.PerShard[owner()] += v
				}
			}
		}, l)
		b := r.CountBytes
		ns := r.CountNsPerDot
		if ze.Disc {
			b, ns = r.DiscBytes, r.DiscNsPerDot
		}
		ze.Bytes = ze.Tiles * b * scale
		e.Zooms = append(e.Zooms, ze)
		e.Tiles += ze.Tiles * scale
		e.Bytes += ze.Bytes
		coreNs += (ze.Tiles*r.TileNs + total*ns) * scale
	}
	if l.Split > p.MinZoom {
		// Pixels of the summary level, treated as tiles one pixel wide.
		tilesOf(areas, min(l.Level(), dotstore.WorldBits), func(_, _, _ int, v float64, _ func() int) { e.Pixels += v }, nil)
	}
	e.CoreHours = coreNs / 1e9 / 3600
	return e
}

// tilesOf calls fn with expected drawn tiles at zoom z: once per tracked
// tile (tx, ty ≥ 0) with its probability of holding a dot, and once per
// large area (tx = −1) with its expected tile count and a function giving
// the part that owns the area.
func tilesOf(areas []Area, z int, fn func(z, tx, ty int, v float64, owner func() int), l *Layout) {
	empty := map[[2]int]float64{} // probability that a tracked tile stays empty
	var order [][2]int
	for _, a := range areas {
		if !(a.Dots > 0) {
			continue
		}
		x0, y0, x1, y1 := worldBound(a.Bound)
		sh := uint(dotstore.WorldBits - z)
		tx0, ty0, tx1, ty1 := int(x0>>sh), int(y0>>sh), int(x1>>sh), int(y1>>sh)
		n := float64((tx1 - tx0 + 1) * (ty1 - ty0 + 1))
		fill := a.Fill
		if fill <= 0 || n == 1 {
			fill = 1
		}
		covered := math.Max(fill*n, 1)
		lambda := a.Dots / covered
		if n > spanLimit {
			b := a.Bound
			fn(z, -1, -1, covered*(1-math.Exp(-lambda)), func() int { return l.AreaOwner(b) })
			continue
		}
		// Each tracked tile is covered with probability fill.
		pHit := math.Min(fill*(1-math.Exp(-lambda)), 1)
		if n == 1 {
			pHit = 1 - math.Exp(-a.Dots)
		}
		for ty := ty0; ty <= ty1; ty++ {
			for tx := tx0; tx <= tx1; tx++ {
				k := [2]int{tx, ty}
				q, ok := empty[k]
				if !ok {
					q = 1
					order = append(order, k)
				}
				empty[k] = q * (1 - pHit)
			}
		}
	}
	for _, k := range order {
		fn(z, k[0], k[1], 1-empty[k], nil)
	}
}

// ShardWork is the expected work of one part.
type ShardWork struct {
	Shard int `json:"shard"`
	// OwnDots is the estimated dots in the part's blocks.
	OwnDots float64 `json:"own_dots"`
	// Areas and SampledDots are the areas the part samples and their dots
	// (areas near a cut are sampled by both parts).
	Areas       int     `json:"areas_sampled"`
	SampledDots float64 `json:"sampled_dots"`
	Tiles       float64 `json:"tiles"`
	Bytes       float64 `json:"bytes"`
	CoreHours   float64 `json:"core_hours"`
}

// Work is the expected work of every part.
func Work(areas []Area, l *Layout, e Estimate, r Rates) []ShardWork {
	out := make([]ShardWork, l.Shards)
	for i := range out {
		out[i].Shard = i
		out[i].OwnDots = l.Weight[i]
	}
	for _, a := range areas {
		if !(a.Dots > 0) {
			continue
		}
		for i := range out {
			if l.Touches(i, a.Bound) {
				out[i].Areas++
				out[i].SampledDots += a.Dots
			}
		}
	}
	scale := 1.0
	if l.Pyramid.HiDPI {
		scale = 2
	}
	for _, ze := range e.Zooms {
		if ze.Zoom < l.Split {
			continue
		}
		b, ns := r.CountBytes, r.CountNsPerDot
		if ze.Disc {
			b, ns = r.DiscBytes, r.DiscNsPerDot
		}
		for i := range out {
			t := ze.PerShard[i]
			out[i].Tiles += t * scale
			out[i].Bytes += t * b * scale
			out[i].CoreHours += (t*r.TileNs + out[i].OwnDots*ns) * scale / 1e9 / 3600
		}
	}
	for i := range out {
		out[i].CoreHours += out[i].SampledDots * r.SampleNsPerDot / 1e9 / 3600
	}
	return out
}

// FinalWork is the expected work of the final step.
type FinalWork struct {
	Cells     float64 `json:"summary_pixels"`
	Tiles     float64 `json:"tiles"`
	Bytes     float64 `json:"bytes"`
	CoreHours float64 `json:"core_hours"`
}

// Final is the expected work of the final step: the zooms above the split
// from the summaries (about one tile's cost per tile plus a count per
// summary entry and zoom).
func Final(l *Layout, e Estimate, r Rates) FinalWork {
	f := FinalWork{Cells: e.Pixels}
	scale := 1.0
	if l.Pyramid.HiDPI {
		scale = 2
	}
	for _, ze := range e.Zooms {
		if ze.Zoom >= l.Split {
			continue
		}
		f.Tiles += ze.Tiles * scale
		f.Bytes += ze.Bytes
		f.CoreHours += (ze.Tiles*r.TileNs + e.Pixels*r.CountNsPerDot) * scale / 1e9 / 3600
	}
	return f
}
