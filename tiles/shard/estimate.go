package shard

import (
	"math"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
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
	// TileNs is compositing and encoding one tile, per core, beyond its
	// dots' drawing.
	TileNs float64 `json:"tile_ns"`
	// FileNs is what writing one tile file costs where the tiles go
	// (system calls, the file system, the network): a sparse part writes
	// many tiles per dot, so getting it wrong makes such parts look light
	// or heavy. ProbeFiles measures it.
	FileNs float64 `json:"file_ns"`
	// TileBytes is a drawn tile's PNG size beyond its inked pixels
	// (signature, header, palette or row filters, empty rows).
	TileBytes float64 `json:"tile_bytes"`
	// CountInkBytes and DiscInkBytes are the PNG bytes per inked pixel of
	// a count tile and of a disc tile: about one on tiles that fit a
	// palette of 256 colours, three to four on truecolour tiles.
	CountInkBytes float64 `json:"count_ink_bytes"`
	DiscInkBytes  float64 `json:"disc_ink_bytes"`
	// SingleInkBytes and SparseInkBytes are the PNG bytes per inked pixel
	// of a map of one category, whose tiles hold one colour at levels of
	// opacity and always fit a palette: SingleInkBytes on a well-inked
	// tile, SparseInkBytes on a tile of a few scattered dots, where every
	// short run of ink costs its own codes (singleInkBytes).
	SingleInkBytes float64 `json:"single_ink_bytes"`
	SparseInkBytes float64 `json:"sparse_ink_bytes"`
}

// MeasuredRates were measured on the national benchmark (3230 areas,
// synthetic counts, one person per dot: 309 million dots, zooms 0–14, cut
// into 16 parts at split zoom 8) on a 2-core machine with the tiles on its
// ext4 disk (BENCHMARKS.md, "Shard parts at zoom 14"): a least-squares fit
// of the CPU time (user + sys) of the 16 parts to their drawn disc
// dot-zooms and tiles, with the sampling rate fixed to the placing rate
// stipple bench measures and a fixed cost of one second a part (the parts
// of a balanced cut do the same mix of work, so the fit cannot separate
// those three). A tile file on that disk costs 23 µs (stipple plan
// --probe); the rest of a tile's 80 µs is compositing, encoding and the
// work of the zooms' tile walk. Rerun: the 16 parts with /usr/bin/time,
// then fit as BENCHMARKS.md says. Measure FileNs where a job's tiles go
// (plan --probe): a network folder or a bucket costs far more per file.
var MeasuredRates = Rates{
	Source:         "the national benchmark at zoom 14, 2 cores, tiles on ext4 (BENCHMARKS.md)",
	SampleNsPerDot: 450,
	CountNsPerDot:  10,
	DiscNsPerDot:   390,
	TileNs:         57e3,
	// sink.Dir.PutFresh of a 2 KiB file on the ext4 disk of the same
	// machine, 64 files a folder (ProbeFiles through stipple plan --probe).
	FileNs: 23e3,
	// Fitted on the demo, one state and the national map (BENCHMARKS.md,
	// "Size estimates"): total bytes of each zoom against its predicted
	// inked pixels (inkedPixels).
	TileBytes:      TileBytesFit,
	CountInkBytes:  CountInkBytesFit,
	DiscInkBytes:   DiscInkBytesFit,
	SingleInkBytes: SingleInkBytesFit,
	SparseInkBytes: SparseInkBytesFit,
}

// countInkBytes is the PNG bytes per inked pixel of a count zoom whose
// inked pixels hold m dots each on average. With about one dot a pixel,
// the tiles' colours fit a palette (about a byte a pixel); with more, the
// mixes of categories and counts run past 256 colours and the tiles are
// truecolour (DiscInkBytes a pixel). Between 1.2 and 3 dots a pixel the
// rate is taken to rise in a straight line: the count zooms of the renders
// in BENCHMARKS.md ("Size estimates") change over there.
func (r Rates) countInkBytes(m float64) float64 {
	t := math.Min(math.Max((m-1.2)/1.8, 0), 1)
	return r.CountInkBytes + t*(r.DiscInkBytes-r.CountInkBytes)
}

// singleInkBytes is the PNG bytes per inked pixel of a one-category tile
// with a share f of its pixels inked: SparseInkBytes for a tile of a few
// dots, falling to SingleInkBytes as the ink joins up (a twentieth of the
// tile inked is taken as the scale of that change, from the one-category
// renders of BENCHMARKS.md, "Size estimates").
func (r Rates) singleInkBytes(f float64) float64 {
	return r.SingleInkBytes + (r.SparseInkBytes-r.SingleInkBytes)*math.Exp(-f/0.05)
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
	// Inked is the expected number of inked pixels over the zoom's tiles.
	Inked float64 `json:"inked_pixels"`
	// PerShard and PerShardBytes are the expected tiles and bytes of each
	// part (zooms ≥ split).
	PerShard      []float64 `json:"-"`
	PerShardBytes []float64 `json:"-"`
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
		ze := ZoomEstimate{Zoom: z, Disc: p.look(z, pass{1}).Diameter >= 1, PerShard: make([]float64, l.Shards), PerShardBytes: make([]float64, l.Shards)}
		for _, ps := range p.passes() {
			look := p.look(z, ps)
			px := float64(p.TileSize * ps.scale)
			px *= px
			inkPer := inkPerDot(look)
			// Tiles and inked pixels, in all and per part; the bytes per
			// inked pixel of a count zoom depend on its dots per inked
			// pixel, known once the zoom is summed.
			var tilesAll, inkAll, dotsAll, inkBytes float64
			partTiles, partInk, partInkBytes := make([]float64, l.Shards), make([]float64, l.Shards), make([]float64, l.Shards)
			perTile := p.Categories == 1 || look.Diameter >= 1 // bytes per inked pixel known tile by tile
			tilesOfAreas(areas, z, func(t tileGuess) {
				v := t.V
				if v <= 0 {
					return
				}
				ink := v * inkedPixels(t.Dots/v, inkPer, math.Max(px*t.Share, 1))
				ib := 0.0
				switch {
				case p.Categories == 1:
					ib = ink * r.singleInkBytes(ink/(v*px))
				case look.Diameter >= 1:
					ib = ink * r.DiscInkBytes
				}
				tilesAll += v
				inkAll += ink
				dotsAll += t.Dots
				inkBytes += ib
				if z >= l.Split {
					owner := 0
					if t.Area < 0 {
						owner = l.Owner(z, t.X, t.Y)
					} else {
						owner = l.AreaOwner(areas[t.Area].Bound)
					}
					partTiles[owner] += v
					partInk[owner] += ink
					partInkBytes[owner] += ib
				}
			})
			if !perTile {
				perInk := r.countInkBytes(dotsAll / math.Max(inkAll, 1))
				inkBytes = inkAll * perInk
				for i := range partInk {
					partInkBytes[i] = partInk[i] * perInk
				}
			}
			ze.Bytes += tilesAll*r.TileBytes + inkBytes
			for i := range partTiles {
				ze.PerShardBytes[i] += partTiles[i]*r.TileBytes + partInkBytes[i]
			}
			if ps.scale == 1 {
				ze.Tiles, ze.Inked = tilesAll, inkAll
				copy(ze.PerShard, partTiles)
			}
		}
		ns := r.CountNsPerDot
		if ze.Disc {
			ns = r.DiscNsPerDot
		}
		e.Zooms = append(e.Zooms, ze)
		e.Tiles += ze.Tiles * scale
		e.Bytes += ze.Bytes
		coreNs += (ze.Tiles*r.tileNs() + total*ns) * scale
	}
	if l.Split > p.MinZoom {
		// Pixels of the summary level, treated as tiles one pixel wide.
		tilesOfAreas(areas, min(l.Level(), dotstore.WorldBits), func(t tileGuess) { e.Pixels += t.V })
	}
	e.CoreHours = coreNs / 1e9 / 3600
	return e
}

// inkPerDot is the pixels one dot of look d inks on an empty tile: a disc
// inks every pixel its edge's antialiasing reaches, about a disc half a
// pixel wider all round; a count tile's dot, smaller than a pixel, inks one.
func inkPerDot(d render.Dot) float64 {
	if d.Diameter < 1 {
		return 1
	}
	r := d.Diameter/2 + 0.5
	return math.Pi * r * r
}

// inkedPixels is the expected number of inked pixels of a tile of px
// pixels holding n dots placed at random, each inking a pixels: every
// pixel stays empty with probability (1 − a/px)^n ≈ e^(−n·a/px).
func inkedPixels(n, a, px float64) float64 {
	return px * (1 - math.Exp(-n*a/px))
}

// tileGuess is an expected drawn tile (or, for a large area, a group of
// them) of tilesOfAreas.
type tileGuess struct {
	// X and Y are the tile's column and row; −1 for a large area's tiles.
	X, Y int
	// V is the probability that the tile holds a dot, or a large area's
	// expected number of drawn tiles.
	V float64
	// Dots is the expected number of dots in them.
	Dots float64
	// Share is the part of a tile's pixels the dots fall on: the areas'
	// footprint in the tile (1 for a large area's tiles).
	Share float64
	// Area is a large area's index; −1 for a tracked tile.
	Area int
}

// tilesOfAreas calls fn with the expected drawn tiles at zoom z: once per
// tracked tile (an area spanning at most spanLimit tiles is tracked tile by
// tile) and once per large area.
func tilesOfAreas(areas []Area, z int, fn func(t tileGuess)) {
	type tracked struct{ empty, dots, share float64 } // probability that the tile stays empty; expected dots; footprint
	seen := map[[2]int]*tracked{}
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
		if fill <= 0 || fill > 1 {
			fill = 1
		}
		// The area's footprint per tile of its bound, as a share of a tile.
		cell := float64(uint64(1) << sh)
		share := math.Min(fill*float64(x1-x0+1)*float64(y1-y0+1)/(cell*cell*n), 1)
		if n == 1 {
			fill = 1
		}
		covered := math.Max(fill*n, 1)
		lambda := a.Dots / covered
		if n > spanLimit {
			fn(tileGuess{X: -1, Y: -1, V: covered * (1 - math.Exp(-lambda)), Dots: a.Dots, Share: 1, Area: ai})
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
				t := seen[k]
				if t == nil {
					t = &tracked{empty: 1}
					seen[k] = t
					order = append(order, k)
				}
				t.empty *= 1 - pHit
				t.dots += a.Dots / n
				t.share = math.Min(t.share+share, 1)
			}
		}
	}
	for _, k := range order {
		t := seen[k]
		fn(tileGuess{X: k[0], Y: k[1], V: 1 - t.empty, Dots: t.dots, Share: t.share, Area: -1})
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
		for i := range out {
			out[i].Tiles += ze.PerShard[i] * scale
			out[i].Bytes += ze.PerShardBytes[i]
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
		tilesOfAreas(areas, z, func(t tileGuess) {
			if t.Area >= 0 {
				lg[t.Area] += t.V
			} else {
				tr = append(tr, trackedTile{t.X, t.Y, t.V})
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

// The byte rates of MeasuredRates, fitted on the renders of BENCHMARKS.md
// ("Size estimates").
const (
	TileBytesFit      = 300
	CountInkBytesFit  = 1.0
	DiscInkBytesFit   = 3.4
	SingleInkBytesFit = 1.0
	SparseInkBytesFit = 2.4
)
