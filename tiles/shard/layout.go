package shard

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"slices"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/dotstore"
)

// Area is what the planner knows of one input area before any dot is
// placed.
type Area struct {
	// Bound is the area's lon/lat bound.
	Bound orb.Bound
	// Dots is the number of dots the area is expected to get.
	Dots float64
	// Fill is the share of the bound the area covers (FillOf); 0 means
	// unknown, taken as 1. Only tile estimates use it.
	Fill float64
	// Points, when set, returns a few points spread the way the area's
	// dots will be (for example its first dots). They share out Dots among
	// the blocks of an area that spans several; without them the dots are
	// spread evenly over the blocks of the bound. Plan calls it at most
	// once per area, and only for areas that span blocks.
	Points func() []orb.Point
}

// Pyramid is the part of a map's tile settings the partition depends on.
type Pyramid struct {
	MinZoom, MaxZoom int
	// TileSize is 256 or 512 pixels.
	TileSize int
	// HiDPI is set when @2x tiles are drawn too.
	HiDPI bool
	// Look is the dot's look per zoom, in pixels of TileSize tiles.
	Look func(z int) render.Dot
	// Categories is the number of categories, for size estimates (a map
	// of one colour has palette tiles); 0 for not known.
	Categories int
}

// pass is one kind of tile: scale 1 (the 1× tiles) or 2 (@2x).
type pass struct{ scale int }

func (p Pyramid) passes() []pass {
	if p.HiDPI {
		return []pass{{1}, {2}}
	}
	return []pass{{1}}
}

func (p Pyramid) look(z int, ps pass) render.Dot {
	d := p.Look(z)
	d.Diameter *= float64(ps.scale)
	return d
}

// FirstDisc is the lowest zoom in the pyramid at which a dot of either kind
// of tile is a disc (at least a pixel wide, drawn with its neighbours' edge
// strips); MaxZoom+1 when every zoom is drawn as count tiles.
func (p Pyramid) FirstDisc() int {
	for z := p.MinZoom; z <= p.MaxZoom; z++ {
		for _, ps := range p.passes() {
			if p.look(z, ps).Diameter >= 1 {
				return z
			}
		}
	}
	return p.MaxZoom + 1
}

// tileShift is log2 of the finest tile size drawn, in pixels.
func (p Pyramid) tileShift() int {
	s := 8
	if p.TileSize == 512 {
		s = 9
	}
	if p.HiDPI {
		s++
	}
	return s
}

// Margin is how far, in world cells, a dot can ink pixels beyond its own
// tile at any zoom from split up: the stamp's reach (render.Stamp.Reach,
// pixels beyond the dot's own pixel) plus two pixels of slack, at the
// coarsest disc zoom, where pixels are widest. Count tiles (dots narrower
// than a pixel) ink only the dot's own pixel and add nothing.
func (p Pyramid) Margin(split int) uint32 {
	var m uint64
	for z := max(split, p.MinZoom); z <= p.MaxZoom; z++ {
		for _, ps := range p.passes() {
			d := p.look(z, ps)
			if d.Diameter < 1 {
				continue
			}
			if d.Diameter > render.MaxStampDiameter {
				d.Diameter = render.MaxStampDiameter
			}
			reach := render.NewStamp(d).Reach()
			size := p.TileSize * ps.scale
			shift := dotstore.WorldBits - z - log2(size)
			cells := uint64(1)
			if shift > 0 {
				cells = 1 << shift
			}
			m = max(m, uint64(reach+2)*cells)
		}
	}
	return uint32(min(m, dotstore.WorldSize))
}

func log2(n int) int {
	s := 0
	for 1<<s < n {
		s++
	}
	return s
}

// Layout is a partition of a pyramid into shards. Shard i owns the blocks
// (tiles of zoom Split) whose Z-order code c has Lo[i] ≤ c < Lo[i+1].
type Layout struct {
	Shards int `json:"shards"`
	// Split is the zoom of the blocks; zooms below it are the final step's.
	Split            int `json:"split_zoom"`
	MinZoom, MaxZoom int `json:"-"`
	// Margin is in world cells (see Pyramid.Margin).
	Margin uint32 `json:"margin_cells"`
	// Lo holds Shards+1 Z-order codes of blocks: the first block of each
	// shard, and 4^Split at the end.
	Lo []uint64 `json:"first_block"`
	// Weight is the estimated work of each shard in core-seconds (see
	// Plan); Dots its estimated dots.
	Weight []float64 `json:"estimated_core_seconds"`
	Dots   []float64 `json:"estimated_dots"`
	// Blocks is the number of blocks with dots.
	Blocks int `json:"blocks"`
	// MaxBlock is the estimated work of the heaviest block.
	MaxBlock float64 `json:"heaviest_block_core_seconds"`
	// Pyramid the layout was made for.
	Pyramid Pyramid `json:"-"`
}

// PlanOptions set how Plan chooses a layout.
type PlanOptions struct {
	Shards int
	// MaxSplit caps the split zoom; 0 means 12 (16.7 million blocks).
	MaxSplit int
	// Balance is the largest shard's estimated work over the mean that is
	// good enough; Plan takes the coarsest split zoom that reaches it, or
	// else the best one it can. 0 means 1.05.
	Balance float64
	// Rates turn dots and tiles into work; the zero value means
	// MeasuredRates.
	Rates *Rates
}

// Plan chooses the split zoom and cuts the blocks of areas into shards.
//
// The split zoom is at least p.MinZoom and at most p.FirstDisc() (so every
// zoom the final step draws is a count tile), p.MaxZoom and MaxSplit.
// Among those, the coarsest zoom whose cut reaches the Balance goal wins:
// coarser blocks make shards more compact (fewer areas sampled by two
// shards) and the final step smaller.
func Plan(areas []Area, p Pyramid, opt PlanOptions) (*Layout, error) {
	if opt.Shards < 1 {
		return nil, fmt.Errorf("shard: %d shards; want at least 1", opt.Shards)
	}
	if p.MinZoom < 0 || p.MaxZoom > 24 || p.MinZoom > p.MaxZoom {
		return nil, fmt.Errorf("shard: zoom range %d–%d", p.MinZoom, p.MaxZoom)
	}
	if p.TileSize != 256 && p.TileSize != 512 {
		return nil, fmt.Errorf("shard: tile size %d; want 256 or 512", p.TileSize)
	}
	maxSplit := opt.MaxSplit
	if maxSplit <= 0 {
		maxSplit = 12
	}
	goal := opt.Balance
	if goal <= 0 {
		goal = 1.05
	}
	hi := min(p.FirstDisc(), p.MaxZoom, max(maxSplit, p.MinZoom))
	rates := MeasuredRates
	if opt.Rates != nil {
		rates = *opt.Rates
	}
	var best *Layout
	var bestErr error
	pts := make([][]orb.Point, len(areas))
	got := make([]bool, len(areas))
	points := func(i int) []orb.Point {
		if !got[i] && areas[i].Points != nil {
			pts[i], got[i] = areas[i].Points(), true
		}
		return pts[i]
	}
	wk := newWorkModel(areas, p, rates, hi)
	for s := p.MinZoom; s <= hi; s++ {
		work := wk.blocks(areas, s, points)
		margin := p.Margin(s)
		sampling := sampledBy(areas, s, margin, work, func(i int) float64 { return areas[i].Dots * rates.SampleNsPerDot / 1e9 })
		l, err := cutShared(work, sampling, s, opt.Shards)
		if err != nil {
			bestErr = err
			continue
		}
		l.MinZoom, l.MaxZoom, l.Pyramid = p.MinZoom, p.MaxZoom, p
		l.Margin = margin
		l.Dots = l.sumByShard(weigh(areas, s, points, func(i int) float64 { return areas[i].Dots }))
		if best == nil || l.Imbalance() < best.Imbalance() {
			best = l
		}
		if l.Imbalance() <= goal {
			break
		}
	}
	if best == nil {
		return nil, fmt.Errorf("shard: cannot cut into %d shards at split zooms %d–%d: %v", opt.Shards, p.MinZoom, hi, bestErr)
	}
	return best, nil
}

// Imbalance is the largest shard's estimated work over the mean (1 is a
// perfect cut).
func (l *Layout) Imbalance() float64 {
	total, most := 0.0, 0.0
	for _, w := range l.Weight {
		total += w
		most = max(most, w)
	}
	if total == 0 {
		return 1
	}
	return most / (total / float64(len(l.Weight)))
}

// block is one block with its estimated dots.
type block struct {
	code uint64
	w    float64
}

// morton is the Z-order code of tile (x, y) at zoom z.
func morton(z, x, y int) uint64 {
	first, _ := dotstore.TileRange(z, x, y)
	return first >> (2*(dotstore.WorldBits-z) + dotstore.CatBits)
}

// blockOf is the block at zoom s that holds world cell (x, y).
func blockOf(s int, x, y uint32) (int, int) {
	return int(x >> (dotstore.WorldBits - s)), int(y >> (dotstore.WorldBits - s))
}

// worldBound converts a lon/lat bound to inclusive world-cell corners
// (x0, y0 north-west, x1, y1 south-east).
func worldBound(b orb.Bound) (x0, y0, x1, y1 uint32) {
	x0, y0 = dotstore.World(b.Min[0], b.Max[1])
	x1, y1 = dotstore.World(b.Max[0], b.Min[1])
	return
}

// weigh shares each area's value (its dots, or its work) out among the
// blocks of zoom s, the way its dots fall, in a fixed order so that every
// process gets the same sums.
func weigh(areas []Area, s int, points func(i int) []orb.Point, value func(i int) float64) []block {
	w := map[uint64]float64{}
	for i, a := range areas {
		if !(a.Dots > 0) {
			continue
		}
		v := value(i)
		x0, y0, x1, y1 := worldBound(a.Bound)
		bx0, by0 := blockOf(s, x0, y0)
		bx1, by1 := blockOf(s, x1, y1)
		switch {
		case bx0 == bx1 && by0 == by1:
			w[morton(s, bx0, by0)] += v
		case len(points(i)) > 0:
			pts := points(i)
			share := v / float64(len(pts))
			for _, p := range pts {
				px, py := dotstore.World(p[0], p[1])
				bx, by := blockOf(s, px, py)
				w[morton(s, bx, by)] += share
			}
		default:
			n := float64((bx1 - bx0 + 1) * (by1 - by0 + 1))
			for by := by0; by <= by1; by++ {
				for bx := bx0; bx <= bx1; bx++ {
					w[morton(s, bx, by)] += v / n
				}
			}
		}
	}
	return sortedBlocks(w)
}

func sortedBlocks(w map[uint64]float64) []block {
	out := make([]block, 0, len(w))
	for c, v := range w {
		out = append(out, block{c, v})
	}
	slices.SortFunc(out, func(a, b block) int {
		switch {
		case a.code < b.code:
			return -1
		case a.code > b.code:
			return 1
		}
		return 0
	})
	return out
}

// cut splits the Z-ordered blocks into n contiguous runs whose largest sum
// is as small as it can be (see cutShared), every run holding at least one
// block.
func cut(blocks []block, s, n int) (*Layout, error) { return cutShared(blocks, nil, s, n) }

// shared is work that every part touching some of a set of blocks does in
// full: sampling an area, which each part whose blocks come within the
// margin of the area's bound does for all of the area's dots.
type shared struct {
	w float64
	// spans are the sorted, disjoint index ranges [a, b] (into the blocks
	// being cut) of the blocks whose part does the work.
	spans [][2]int
}

// cutShared splits the Z-ordered blocks into n contiguous runs, every run
// holding at least one block, whose largest cost is as small as it can be.
// A run's cost is the sum of its blocks' work plus the work of every shared
// item one of its blocks calls for (counted once per run, however many of
// its blocks do). The cost only grows as a run takes more blocks, so a
// greedy packing checks whether a largest cost can be met, and bisection
// finds the least one.
func cutShared(blocks []block, items []shared, s, n int) (*Layout, error) {
	if len(blocks) < n {
		return nil, fmt.Errorf("only %d blocks with people at split zoom %d", len(blocks), s)
	}
	total, heaviest := 0.0, 0.0
	for _, b := range blocks {
		total += b.w
		heaviest = max(heaviest, b.w)
	}
	// The spans of all items, by first block.
	type span struct{ a, b, item int }
	var spans []span
	for k, it := range items {
		total += it.w
		for _, sp := range it.spans {
			spans = append(spans, span{sp[0], sp[1], k})
		}
	}
	slices.SortStableFunc(spans, func(x, y span) int { return x.a - y.a })
	seen := make([]int, len(items)) // run number + 1 that last paid for the item
	var active []span
	// groups packs runs of at most limit (a run's first block alone may
	// exceed it), leaving a block for each run to come, and returns the
	// first block and the cost of each run.
	groups := func(limit float64) (starts []int, sums []float64) {
		clear(seen)
		active = active[:0]
		starts, sums = []int{0}, []float64{0}
		next := 0
		for i, b := range blocks {
			// Spans starting here join the active ones; ended ones leave.
			first := len(active)
			for next < len(spans) && spans[next].a == i {
				active = append(active, spans[next])
				next++
			}
			add := b.w
			for _, sp := range active[first:] {
				if seen[sp.item] != len(starts) {
					add += items[sp.item].w
				}
			}
			left := n - len(starts) // runs still to start
			mustStart := len(blocks)-i == left && left > 0
			if i > 0 && (sums[len(sums)-1]+add > limit || mustStart) && len(starts) < n {
				// A new run pays for every item whose span covers block i.
				starts, sums = append(starts, i), append(sums, b.w)
				kept := active[:0]
				for _, sp := range active {
					if sp.b < i {
						continue
					}
					kept = append(kept, sp)
					if seen[sp.item] != len(starts) {
						seen[sp.item] = len(starts)
						sums[len(sums)-1] += items[sp.item].w
					}
				}
				active = kept
			} else {
				sums[len(sums)-1] += add
				for _, sp := range active[first:] {
					seen[sp.item] = len(starts)
				}
			}
			// Drop the spans that end here.
			kept := active[:0]
			for _, sp := range active {
				if sp.b > i {
					kept = append(kept, sp)
				}
			}
			active = kept
		}
		return starts, sums
	}
	fits := func(limit float64) bool {
		_, sums := groups(limit)
		return slices.Max(sums) <= limit
	}
	lo, hi := max(total/float64(n), heaviest), total
	for it := 0; it < 100 && hi-lo > 1e-9*total; it++ {
		mid := (lo + hi) / 2
		if fits(mid) {
			hi = mid
		} else {
			lo = mid
		}
	}
	starts, sums := groups(hi)
	l := &Layout{Shards: n, Split: s, Blocks: len(blocks), MaxBlock: heaviest, Weight: sums}
	l.Lo = make([]uint64, n+1)
	for k, st := range starts {
		if k > 0 {
			l.Lo[k] = blocks[st].code
		}
	}
	l.Lo[n] = uint64(1) << (2 * s)
	return l, nil
}

// sampledBy lists, for every area with dots, the work value(i) of sampling
// it and the blocks (indices into blocks, Z-ordered) whose part samples it:
// those whose Z-order range — from the block's code up to the next
// block's, the first block's from 0 — holds a block of zoom s within
// margin of the area's bound, as Layout.Touches decides once the cut is
// made.
func sampledBy(areas []Area, s int, margin uint32, blocks []block, value func(i int) float64) []shared {
	if len(blocks) == 0 {
		return nil
	}
	// index is the block whose range holds code c.
	index := func(c uint64) int {
		j, _ := slices.BinarySearchFunc(blocks, c+1, func(b block, t uint64) int {
			switch {
			case b.code < t:
				return -1
			case b.code > t:
				return 1
			}
			return 0
		})
		return max(j-1, 0)
	}
	var out []shared
	for i, a := range areas {
		if !(a.Dots > 0) {
			continue
		}
		x0, y0, x1, y1 := worldBound(a.Bound)
		cols, by0, by1 := marginBox(s, margin, x0, y0, x1, y1)
		var spans [][2]int
		zRanges(s, cols, by0, by1, func(first, last uint64) {
			spans = append(spans, [2]int{index(first), index(last)})
		})
		slices.SortFunc(spans, func(x, y [2]int) int { return x[0] - y[0] })
		merged := spans[:0]
		for _, sp := range spans {
			if k := len(merged) - 1; k >= 0 && sp[0] <= merged[k][1]+1 {
				merged[k][1] = max(merged[k][1], sp[1])
				continue
			}
			merged = append(merged, sp)
		}
		if len(merged) > 0 {
			out = append(out, shared{w: value(i), spans: merged})
		}
	}
	return out
}

// zRanges calls emit with the Z-order code ranges [first, last] of the
// blocks of zoom s in columns cols (inclusive ranges) and rows by0 … by1,
// as few as a quadtree descent gives.
func zRanges(s int, cols [][2]int64, by0, by1 int64, emit func(first, last uint64)) {
	var descend func(z int, x, y int64)
	descend = func(z int, x, y int64) {
		d := uint(s - z)
		x0, x1 := x<<d, (x+1)<<d-1
		y0, y1 := y<<d, (y+1)<<d-1
		if y1 < by0 || y0 > by1 {
			return
		}
		meets, inside := false, false
		for _, c := range cols {
			if x1 < c[0] || x0 > c[1] {
				continue
			}
			meets = true
			inside = inside || (x0 >= c[0] && x1 <= c[1] && y0 >= by0 && y1 <= by1)
		}
		if !meets {
			return
		}
		if inside || z == s {
			first := morton(s, int(x0), int(y0))
			emit(first, first+(uint64(1)<<(2*d))-1)
			return
		}
		for q := int64(0); q < 4; q++ {
			descend(z+1, 2*x+(q&1), 2*y+(q>>1))
		}
	}
	descend(0, 0, 0)
}

// sumByShard adds block values up per shard.
func (l *Layout) sumByShard(blocks []block) []float64 {
	out := make([]float64, l.Shards)
	for _, b := range blocks {
		i, _ := slices.BinarySearch(l.Lo, b.code+1)
		out[i-1] += b.w
	}
	return out
}

// BlockOwner is the shard that owns block (x, y) of the split zoom.
func (l *Layout) BlockOwner(x, y int) int {
	c := morton(l.Split, x, y)
	// The last i with Lo[i] ≤ c.
	i, _ := slices.BinarySearch(l.Lo, c+1)
	return i - 1
}

// Owner is the shard that renders tile (z, x, y): the owner of its block
// for z ≥ Split, -1 (the final step) for the zooms above.
func (l *Layout) Owner(z, x, y int) int {
	if z < l.Split {
		return -1
	}
	d := z - l.Split
	return l.BlockOwner(x>>d, y>>d)
}

// OwnerAt is the shard whose block holds world cell (x, y).
func (l *Layout) OwnerAt(x, y uint32) int { return l.BlockOwner(blockOf(l.Split, x, y)) }

// AreaOwner is the shard that reports an area's sampling results (dots
// drawn, dots lost): the owner of the block holding its bound's centre.
// That shard always samples the area, since the centre's block lies
// within the bound.
func (l *Layout) AreaOwner(b orb.Bound) int {
	x0, y0, x1, y1 := worldBound(b)
	return l.OwnerAt(x0+(x1-x0)/2, y0+(y1-y0)/2)
}

// Touches reports whether shard i needs to sample an area with bound b:
// whether some block of shard i lies within Margin of b. Columns wrap
// around the antimeridian, as tiles do.
func (l *Layout) Touches(i int, b orb.Bound) bool {
	x0, y0, x1, y1 := worldBound(b)
	return l.touchesCells(i, x0, y0, x1, y1)
}

// marginBox gives the blocks of zoom s within margin cells of the world
// cells x0 … x1, y0 … y1: column ranges (inclusive, after wrapping around
// the antimeridian) and the rows by0 … by1.
func marginBox(s int, margin uint32, x0, y0, x1, y1 uint32) (cols [][2]int64, by0, by1 int64) {
	m := int64(margin)
	ws := int64(dotstore.WorldSize)
	ya, yb := max(int64(y0)-m, 0), min(int64(y1)+m, ws-1)
	xa, xb := int64(x0)-m, int64(x1)+m
	sh := uint(dotstore.WorldBits - s)
	nb := int64(1) << s
	by0, by1 = ya>>sh, yb>>sh
	if xb-xa+1 >= ws {
		return [][2]int64{{0, nb - 1}}, by0, by1
	}
	if xa < 0 {
		cols = append(cols, [2]int64{(xa + ws) >> sh, nb - 1})
		xa = 0
	}
	if xb >= ws {
		cols = append(cols, [2]int64{0, (xb - ws) >> sh})
		xb = ws - 1
	}
	cols = append(cols, [2]int64{xa >> sh, xb >> sh})
	return cols, by0, by1
}

func (l *Layout) touchesCells(i int, x0, y0, x1, y1 uint32) bool {
	cols, by0, by1 := marginBox(l.Split, l.Margin, x0, y0, x1, y1)
	// Quick test: is any of the shard's Z-order range inside the box's
	// range of codes? Otherwise scan the box's blocks.
	lo, hi := l.Lo[i], l.Lo[i+1]
	for _, c := range cols {
		cmin := morton(l.Split, int(c[0]), int(by0))
		cmax := morton(l.Split, int(c[1]), int(by1))
		if cmax < lo || cmin >= hi {
			continue // Z-order codes of the box all lie outside the shard's
		}
		for by := by0; by <= by1; by++ {
			for bx := c[0]; bx <= c[1]; bx++ {
				if cd := morton(l.Split, int(bx), int(by)); cd >= lo && cd < hi {
					return true
				}
			}
		}
	}
	return false
}

// Keeps reports whether shard i keeps a dot at world cell (x, y): whether
// it lies within Margin of one of the shard's blocks (a square of
// Margin cells each way, wrapping around the antimeridian).
func (l *Layout) Keeps(i int, x, y uint32) bool {
	if l.OwnerAt(x, y) == i {
		return true
	}
	if l.Margin == 0 {
		return false
	}
	return l.touchesCells(i, x, y, x, y)
}

// Fingerprint identifies the layout: every shard of one render and the
// final step must agree on it.
func (l *Layout) Fingerprint() string {
	h := sha256.New()
	fmt.Fprintf(h, "stipple-shards/1 n=%d split=%d margin=%d zooms=%d-%d\n", l.Shards, l.Split, l.Margin, l.MinZoom, l.MaxZoom)
	for _, c := range l.Lo {
		fmt.Fprintf(h, "%x\n", c)
	}
	return hex.EncodeToString(h.Sum(nil))[:32]
}

// MarshalJSON writes the layout with its fingerprint and zoom range.
func (l *Layout) MarshalJSON() ([]byte, error) {
	type plain Layout
	return json.Marshal(struct {
		*plain
		MinZoom     int     `json:"min_zoom"`
		MaxZoom     int     `json:"max_zoom"`
		Imbalance   float64 `json:"imbalance"`
		Fingerprint string  `json:"fingerprint"`
	}{(*plain)(l), l.MinZoom, l.MaxZoom, math.Round(l.Imbalance()*1e4) / 1e4, l.Fingerprint()})
}
