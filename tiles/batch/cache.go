package batch

import (
	"context"
	"encoding/json"
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"time"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/proj"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
)

// tileCache holds every tile any extent of one sampling needs, each
// rendered once from the whole store. done records, per zoom, the tiles
// rendered so far, inked (a file) or empty (no file).
type tileCache struct {
	dir    string
	fp     string
	size   int
	hidpi  bool
	colors []color.NRGBA
	look   func(z int) render.Dot
	done   map[int]map[[2]int]bool
}

type cacheManifest struct {
	Fingerprint string              `json:"fingerprint"`
	Zooms       map[string][][2]int `json:"zooms"`
}

const cacheManifestName = "done.json"

// openCache opens (or starts) the cache for fingerprint fp (from
// mapjob.LookFingerprint) in the sampling folder parent; caches made for
// other fingerprints are removed.
func openCache(parent, fp string, size int, hidpi bool, colors []color.NRGBA, look func(int) render.Dot) (*tileCache, error) {
	dir := filepath.Join(parent, "tiles-"+fp[:16])
	old, _ := filepath.Glob(filepath.Join(parent, "tiles-*"))
	for _, o := range old {
		if o != dir {
			if err := os.RemoveAll(o); err != nil {
				return nil, fmt.Errorf("batch: tile cache: %w", err)
			}
		}
	}
	c := &tileCache{dir: dir, fp: fp, size: size, hidpi: hidpi, colors: colors, look: look, done: map[int]map[[2]int]bool{}}
	data, err := os.ReadFile(filepath.Join(dir, cacheManifestName))
	var man cacheManifest
	if err == nil && json.Unmarshal(data, &man) == nil && man.Fingerprint == fp {
		for zs, list := range man.Zooms {
			z, err := strconv.Atoi(zs)
			if err != nil {
				continue
			}
			c.done[z] = map[[2]int]bool{}
			for _, t := range list {
				c.done[z][t] = true
			}
		}
		return c, nil
	}
	if err := os.RemoveAll(dir); err != nil {
		return nil, fmt.Errorf("batch: tile cache: %w", err)
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("batch: tile cache: %w", err)
	}
	return c, c.save()
}

func (c *tileCache) save() error {
	man := cacheManifest{Fingerprint: c.fp, Zooms: map[string][][2]int{}}
	for z, set := range c.done {
		list := make([][2]int, 0, len(set))
		for t := range set {
			list = append(list, t)
		}
		slices.SortFunc(list, func(a, b [2]int) int {
			if a[1] != b[1] {
				return a[1] - b[1]
			}
			return a[0] - b[0]
		})
		man.Zooms[strconv.Itoa(z)] = list
	}
	data, err := json.Marshal(man)
	if err != nil {
		return fmt.Errorf("batch: %w", err)
	}
	return tiles.WriteFileAtomic(filepath.Join(c.dir, cacheManifestName), append(data, '\n'))
}

// suffixes are the tile kinds the cache holds.
func (c *tileCache) suffixes() []string {
	if c.hidpi {
		return []string{"", "@2x"}
	}
	return []string{""}
}

func (c *tileCache) path(z, x, y int, suffix string) string {
	return filepath.Join(c.dir, strconv.Itoa(z), strconv.Itoa(x), strconv.Itoa(y)+suffix+".png")
}

// Cover lists the tiles at zoom z that meet bound b, clamped to the Web
// Mercator square (±85.0511°).
func Cover(b orb.Bound, z int) [][2]int {
	if b.Min[0] > b.Max[0] { // across the antimeridian
		var out [][2]int
		for _, part := range unwrapped(b) {
			out = append(out, Cover(part, z)...)
		}
		return out
	}
	const maxLat = proj.WebMercatorMaxLat
	b.Min[1] = math.Max(b.Min[1], -maxLat)
	b.Max[1] = math.Min(b.Max[1], maxLat)
	b.Min[0] = math.Max(b.Min[0], -180)
	b.Max[0] = math.Min(b.Max[0], 180)
	var out [][2]int
	for _, t := range tiles.Cover(b, tiles.Zoom(z)) {
		out = append(out, [2]int{int(t.X), int(t.Y)})
	}
	return out
}

// sliceSource is a tiles.Source over keys already sorted.
type sliceSource []uint64

func (s sliceSource) Keys() []uint64 { return s }

// zoomStats is what rendering one zoom into the cache did.
type zoomStats struct {
	Rendered int // tiles asked for
	Inked    int // of them, tiles with ink (written)
	Elapsed  time.Duration
}

// ensure renders, at zoom z, the tiles of need that the cache lacks.
// tiles.Write draws whatever tiles its keys touch, so it is given the keys
// of the needed tiles and, at zooms drawn as discs, the keys near their
// edges in the neighbouring tiles (the edge strips a disc tile reads); it
// draws into a scratch folder, and only the needed tiles, which saw every
// dot that can ink them, move into the cache.
func (c *tileCache) ensure(ctx context.Context, keys []uint64, z int, need [][2]int, workers int, progress func(tiles.Stats)) (zoomStats, error) {
	start := time.Now()
	done := c.done[z]
	var todo [][2]int
	seen := map[[2]int]bool{}
	for _, t := range need {
		if !done[t] && !seen[t] {
			seen[t] = true
			todo = append(todo, t)
		}
	}
	if len(todo) == 0 {
		return zoomStats{}, nil
	}
	sub := gather(keys, z, seen, c.edgeCells(z))
	scratch := filepath.Join(c.dir, fmt.Sprintf(".scratch-%d", z))
	if err := os.RemoveAll(scratch); err != nil {
		return zoomStats{}, fmt.Errorf("batch: %w", err)
	}
	st := zoomStats{Rendered: len(todo)}
	if len(sub) > 0 {
		_, err := tiles.Write(ctx, sliceSource(sub), tiles.Options{
			Dir: scratch, MinZoom: z, MaxZoom: z, TileSize: c.size, Colors: c.colors, Look: c.look,
			HiDPI: c.hidpi, Workers: workers, Progress: progress,
		})
		if err != nil {
			return zoomStats{}, err
		}
		for _, t := range todo {
			for _, sfx := range c.suffixes() {
				src := filepath.Join(scratch, strconv.Itoa(z), strconv.Itoa(t[0]), strconv.Itoa(t[1])+sfx+".png")
				if _, err := os.Stat(src); err != nil {
					continue
				}
				dst := c.path(z, t[0], t[1], sfx)
				if err := os.MkdirAll(filepath.Dir(dst), 0o755); err != nil {
					return zoomStats{}, fmt.Errorf("batch: %w", err)
				}
				if err := os.Rename(src, dst); err != nil {
					return zoomStats{}, fmt.Errorf("batch: %w", err)
				}
				if sfx == "" {
					st.Inked++
				}
			}
		}
	}
	if done == nil {
		done = map[[2]int]bool{}
		c.done[z] = done
	}
	for _, t := range todo {
		done[t] = true
	}
	if err := c.save(); err != nil {
		return zoomStats{}, err
	}
	if err := os.RemoveAll(scratch); err != nil {
		return zoomStats{}, fmt.Errorf("batch: %w", err)
	}
	st.Elapsed = time.Since(start)
	return st, nil
}

// edgeCells is how far, in world cells, a disc tile at zoom z reads into
// its neighbours; 0 at zooms drawn as count canvases (sub-pixel dots),
// which read their own dots only. tiles.Write descends into a neighbour's
// quadrants along the shared side until a quadrant is at most twice the
// stamp's margin (reach + 1 pixels) wide, so it reads at most 2 × margin
// pixels deep; 8 pixels more leave room for a change of stamp.
func (c *tileCache) edgeCells(z int) int64 {
	var e int64
	for i, size := range []int{c.size, 2 * c.size} {
		if i == 1 && !c.hidpi {
			break
		}
		d := c.look(z)
		if i == 1 {
			d.Diameter *= 2
		}
		if d.Diameter < 1 {
			continue
		}
		if d.Diameter > render.MaxStampDiameter {
			d.Diameter = render.MaxStampDiameter
		}
		margin := render.NewStamp(d).Reach() + 1
		px := int64(2*margin + 8)
		cellsPerPx := float64(dotstore.WorldSize) / (math.Exp2(float64(z)) * float64(size))
		e = max(e, int64(math.Ceil(float64(px)*cellsPerPx)))
	}
	return e
}

// gather returns, sorted, the keys of the tiles in need at zoom z and, when
// edge > 0, the keys of their neighbours within edge world cells of a side
// or corner they share with a needed tile.
func gather(keys []uint64, z int, need map[[2]int]bool, edge int64) []uint64 {
	n := 1 << z
	type part struct {
		first uint64
		x, y  int
		face  uint16 // bit (fx+1)+3(fy+1): a needed tile lies at (fx, fy)
		full  bool
	}
	parts := map[[2]int]*part{}
	add := func(x, y int) *part {
		p := parts[[2]int{x, y}]
		if p == nil {
			f, _ := dotstore.TileRange(z, x, y)
			p = &part{first: f, x: x, y: y}
			parts[[2]int{x, y}] = p
		}
		return p
	}
	for t := range need {
		add(t[0], t[1]).full = true
	}
	if edge > 0 {
		for t := range need {
			for dy := -1; dy <= 1; dy++ {
				ny := t[1] + dy
				if ny < 0 || ny >= n {
					continue
				}
				for dx := -1; dx <= 1; dx++ {
					nx := (t[0] + dx + n) % n
					if (dx == 0 && dy == 0) || need[[2]int{nx, ny}] {
						continue
					}
					// The needed tile lies at (-dx, -dy) from the neighbour.
					add(nx, ny).face |= 1 << ((-dx + 1) + 3*(-dy+1))
				}
			}
		}
	}
	list := make([]*part, 0, len(parts))
	total := 0
	for _, p := range parts {
		list = append(list, p)
		if p.full {
			f, l := dotstore.TileRange(z, p.x, p.y)
			total += len(rangeOf(keys, f, l))
		}
	}
	slices.SortFunc(list, func(a, b *part) int {
		switch {
		case a.first < b.first:
			return -1
		case a.first > b.first:
			return 1
		}
		return 0
	})
	out := make([]uint64, 0, total+total/8)
	cells := int64(dotstore.WorldSize >> z)
	for _, p := range list {
		f, l := dotstore.TileRange(z, p.x, p.y)
		ks := rangeOf(keys, f, l)
		if p.full || edge >= cells {
			out = append(out, ks...)
			continue
		}
		x0, y0 := int64(p.x)*cells, int64(p.y)*cells
		for _, k := range ks {
			wx, wy, _ := dotstore.Split(k)
			lx, ly := int64(wx)-x0, int64(wy)-y0
			for b := 0; b < 9; b++ {
				if p.face&(1<<b) == 0 {
					continue
				}
				fx, fy := b%3-1, b/3-1
				if near(lx, fx, edge, cells) && near(ly, fy, edge, cells) {
					out = append(out, k)
					break
				}
			}
		}
	}
	return out
}

// near reports whether local coordinate v (0 ≤ v < cells) lies within edge
// of the side facing f: −1 the low side, +1 the high side, 0 any.
func near(v int64, f int, edge, cells int64) bool {
	switch f {
	case -1:
		return v < edge
	case 1:
		return v >= cells-edge
	}
	return true
}

func rangeOf(keys []uint64, first, last uint64) []uint64 {
	i, _ := slices.BinarySearch(keys, first)
	j := i
	if last == math.MaxUint64 {
		j = len(keys)
	} else {
		j, _ = slices.BinarySearch(keys, last+1)
	}
	return keys[i:j]
}

// linkTile puts the cached tile src at dst: a hard link where the file
// system allows one, a copy where not.
func linkTile(src, dst string) (int64, error) {
	fi, err := os.Stat(src)
	if err != nil {
		return 0, err
	}
	if err := os.MkdirAll(filepath.Dir(dst), 0o755); err != nil {
		return 0, fmt.Errorf("batch: %w", err)
	}
	os.Remove(dst)
	if err := os.Link(src, dst); err == nil {
		return fi.Size(), nil
	}
	in, err := os.Open(src)
	if err != nil {
		return 0, fmt.Errorf("batch: %w", err)
	}
	defer in.Close()
	out, err := os.Create(dst)
	if err != nil {
		return 0, fmt.Errorf("batch: %w", err)
	}
	if _, err := io.Copy(out, in); err != nil {
		out.Close()
		return 0, fmt.Errorf("batch: %w", err)
	}
	if err := out.Close(); err != nil {
		return 0, fmt.Errorf("batch: %w", err)
	}
	return fi.Size(), nil
}
