package shard

import (
	"math"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/tiles/dotstore"
)

// Rates are measured costs that turn counts of dots and tiles into time
// and bytes. MeasuredRates holds the values measured for BENCHMARKS.md;
// re-measure them on the machines a job will run on.
type Rates struct {
	// Source says where the rates were measured.
	Source string `json:"source"`
	// SampleNsPerDot is placing, sorting and storing one dot, per core.
	SampleNsPerDot float64 `json:"sample_ns_per_dot"`
	// CountNsPerDot and DiscNsPerDot are one dot drawn at one zoom of count
	// tiles and of disc tiles, per core.
	CountNsPerDot float64 `json:"count_ns_per_dot_zoom"`
	DiscNsPerDot  float64 `json:"disc_ns_per_dot_zoom"`
	// TileNs is compositing, encoding and writing one tile, per core, with
	// the tiles on tmpfs.
	TileNs float64 `json:"tile_ns"`
	// FileNs is what creating one tile file costs on the output's file
	// system beyond tmpfs (kernel time and waiting for the disk): a sparse
	// part writes many tiles per dot, so leaving it out makes such parts
	// look light. 0 for tiles on tmpfs.
	FileNs float64 `json:"file_ns"`
	// CountBytes and DiscBytes are the mean size of a count tile and of a
	// disc tile (PNG).
	CountBytes float64 `json:"count_tile_bytes"`
	DiscBytes  float64 `json:"disc_tile_bytes"`
}

// MeasuredRates were measured on the national benchmark (3230 areas,
// synthetic counts, 1 dot = 10 people: 30.9 million dots, zooms 0–12,
// 296 000 tiles) on a 2-core machine, with the tiles on tmpfs so that the
// rates are the renderer's work rather than the disk's: a least-squares
// fit of the CPU time (user + sys) of 22 part renders (N = 2, 4 and 16)
// to their drawn dot-zooms, tiles and a fixed cost per part, with the
// sampling rate fixed to the placing rate stipple bench measures (sampled
// and drawn dots go together in most parts, so the fit cannot separate
// them). The fixed cost, 0.26 s a part, is the same for every part and
// does not move the cuts. Creating tile files on a virtual disk costs
// about as much again as rendering them (BENCHMARKS.md, "Sharded
// renders"). Rerun: go test ./cmd/stipple -run '^$' -bench ShardParts
// -benchtime 1x, with STIPPLE_SHARD_PER_DOT=10 and STIPPLE_SHARD_DIR on
// tmpfs.
var MeasuredRates = Rates{
	Source:         "the national benchmark, 2 cores, tiles on tmpfs (BENCHMARKS.md)",
	SampleNsPerDot: 450,
	CountNsPerDot:  10,
	DiscNsPerDot:   580,
	TileNs:         0.123e6,
	// sink.Dir.Put of a 4 KiB tile on the ext4 virtual disk of the same
	// machines less the same on tmpfs: 0.36–1.1 ms over three rounds at
	// load 6–23 (BenchmarkTileFiles, BENCHMARKS.md "Tile files"); a part's
	// own writes overlap its drawing, so a figure from the lower half.
	FileNs:     0.6e6,
	CountBytes: 6400,
	DiscBytes:  3800,
}

// tileNs is the whole cost of one tile: drawing, encoding and its file.
func (r Rates) tileNs() float64 { return r.TileNs + r.FileNs }

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
// Web Mercator (geo.RingArea of the rings projected to world cells, holes
// subtracted, over the projected bound's area); 1 for a degenerate bound.
func FillOf(mp orb.MultiPolygon) float64 {
	b := mp.Bound()
	x0, y0, x1, y1 := worldBound(b)
	box := float64(x1-x0) * float64(y1-y0)
	if box <= 0 {
		return 1
	}
	area := 0.0
	var w orb.Ring
	for _, poly := range mp {
		for k, ring := range poly {
			w = w[:0]
			for _, p := range ring {
				x, y := dotstore.World(p[0], p[1])
				w = append(w, orb.Point{float64(x), float64(y)})
			}
			a := math.Abs(geo.RingArea(w))
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
		tilesOfAreas(areas, z, func(tx, ty int, v float64, area int) {
			ze.Tiles += v
			if z >= l.Split {
				if tx >= 0 {
					ze.PerShard[l.Owner(z, tx, ty)] += v
				} else {
					ze.PerShard[l.AreaOwner(areas[area].Bound)] += v
				}
			}
		})
		b := r.CountBytes
		ns := r.CountNsPerDot
		if ze.Disc {
			b, ns = r.DiscBytes, r.DiscNsPerDot
		}
		ze.Bytes = ze.Tiles * b * scale
		e.Zooms = append(e.Zooms, ze)
		e.Tiles += ze.Tiles * scale
		e.Bytes += ze.Bytes
		coreNs += (ze.Tiles*r.tileNs() + total*ns) * scale
	}
	if l.Split > p.MinZoom {
		// Pixels of the summary level, treated as tiles one pixel wide.
		tilesOfAreas(areas, min(l.Level(), dotstore.WorldBits), func(_, _ int, v float64, _ int) { e.Pixels += v })
	}
	e.CoreHours = coreNs / 1e9 / 3600
	return e
}

// tilesOfAreas calls fn with expected drawn tiles at zoom z: once per
// tracked tile (tx, ty ≥ 0) with its probability of holding a dot, and once
// per large area (tx = −1) with its expected tile count and its index.
func tilesOfAreas(areas []Area, z int, fn func(tx, ty int, v float64, area int)) {
	empty := map[[2]int]float64{} // probability that a tracked tile stays empty
	var order [][2]int
	for ai, a := range areas {
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
			fn(-1, -1, covered*(1-math.Exp(-lambda)), ai)
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
		fn(k[0], k[1], 1-empty[k], -1)
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
		out[i].OwnDots = l.Dots[i]
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
		b := r.CountBytes
		if ze.Disc {
			b = r.DiscBytes
		}
		for i := range out {
			t := ze.PerShard[i]
			out[i].Tiles += t * scale
			out[i].Bytes += t * b * scale
		}
	}
	// The layout's own estimate, block by block, is the finer one: large
	// areas' tiles are shared out like their dots there, and given to one
	// part here.
	for i := range out {
		out[i].CoreHours = l.Weight[i] / 3600
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
		f.CoreHours += (ze.Tiles*r.tileNs() + e.Pixels*r.CountNsPerDot) * scale / 1e9 / 3600
	}
	return f
}

// workModel holds what Plan needs to weigh blocks by work: per zoom, the
// expected tiles of small areas (tile by tile) and of large areas (area by
// area).
type workModel struct {
	p       Pyramid
	r       Rates
	tracked map[int][]trackedTile
	large   map[int]map[int]float64 // zoom → area → expected tiles
	scale   float64
}

type trackedTile struct {
	x, y int
	v    float64
}

func newWorkModel(areas []Area, p Pyramid, r Rates, maxSplit int) *workModel {
	wm := &workModel{p: p, r: r, tracked: map[int][]trackedTile{}, large: map[int]map[int]float64{}, scale: 1}
	if p.HiDPI {
		wm.scale = 2
	}
	for z := p.MinZoom; z <= p.MaxZoom; z++ {
		lg := map[int]float64{}
		var tr []trackedTile
		tilesOfAreas(areas, z, func(tx, ty int, v float64, area int) {
			if tx < 0 {
				lg[area] += v
			} else {
				tr = append(tr, trackedTile{tx, ty, v})
			}
		})
		wm.tracked[z], wm.large[z] = tr, lg
	}
	return wm
}

// blocks is the estimated work, in core-seconds, of every block of zoom
// s: drawing each dot at every zoom from s down, and compositing, encoding
// and writing each expected tile. Sampling is not in it: a part samples
// every dot of each area near its blocks, its own or not (sampledBy).
func (wm *workModel) blocks(areas []Area, s int, points func(int) []orb.Point) []block {
	perDot := 0.0
	for z := s; z <= wm.p.MaxZoom; z++ {
		if wm.p.look(z, pass{1}).Diameter >= 1 {
			perDot += wm.r.DiscNsPerDot * wm.scale
		} else {
			perDot += wm.r.CountNsPerDot * wm.scale
		}
	}
	areaWork := make([]float64, len(areas))
	for i, a := range areas {
		areaWork[i] = a.Dots * perDot
	}
	for z := s; z <= wm.p.MaxZoom; z++ {
		for i, v := range wm.large[z] {
			areaWork[i] += v * wm.r.tileNs() * wm.scale
		}
	}
	w := map[uint64]float64{}
	for _, b := range weigh(areas, s, points, func(i int) float64 { return areaWork[i] }) {
		w[b.code] += b.w
	}
	for z := s; z <= wm.p.MaxZoom; z++ {
		d := z - s
		for _, t := range wm.tracked[z] {
			w[morton(s, t.x>>d, t.y>>d)] += t.v * wm.r.tileNs() * wm.scale
		}
	}
	for c, v := range w {
		w[c] = v / 1e9
	}
	return sortedBlocks(w)
}
