package tiles

import (
	"bytes"
	"context"
	"fmt"
	"image/color"
	"math/bits"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"sync"
	"sync/atomic"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// Options describe one pyramid.
type Options struct {
	// Dir is a local folder for the run's state (Dir/.stipple holds the
	// resume manifest); unless Out is set, the tiles go there too, as
	// Dir/{z}/{x}/{y}.png.
	Dir string
	// Out, when set, is where the tiles go instead ({z}/{x}/{y}.png in a
	// folder or a bucket); every tile is one atomic Put.
	Out              sink.Sink
	MinZoom, MaxZoom int
	// TileSize is the tile edge in pixels: 256 or 512.
	TileSize int
	// Colors has one colour per category, by category number.
	Colors []color.NRGBA
	// Look gives the dot's look at a zoom, in pixels of TileSize tiles.
	Look func(z int) render.Dot
	// HiDPI also writes {z}/{x}/{y}@2x.png: tiles of twice the pixels with
	// every dot twice as wide, for high-density screens.
	HiDPI bool
	// Workers is the number of tiles rendered at once; 0 means all cores.
	Workers int
	// Fingerprint identifies everything the tiles depend on (dots, look,
	// colours, sizes). A rerun with the same fingerprint keeps the zooms and
	// tiles an interrupted run finished; with another, the old tiles are
	// removed first. "" never resumes.
	Fingerprint string
	// Progress, when set, is called after each tile with the running totals.
	Progress func(Stats)
	// Keep, when set, picks the tiles to draw: a candidate tile (z, x, y)
	// for which it returns false is skipped before it is drawn and counted
	// nowhere in Stats (a part of a sharded render keeps the tiles it
	// owns). It must give the same answer on a rerun with the same
	// Fingerprint, so that resuming stays correct.
	Keep func(z, x, y int) bool
}

// Stats count what a pyramid write did. Tiles kept from an interrupted run
// count as written, so the totals are those of an uninterrupted run.
type Stats struct {
	Tiles   int64         // 1× tiles written
	Tiles2x int64         // @2x tiles written
	Bytes   int64         // bytes of PNG, both kinds
	Empty   int64         // candidate tiles with no ink, not written
	Kept    int64         // tiles found complete from an earlier run
	PerZoom map[int]int64 // 1× tiles per zoom
	// Planned is the number of tiles that hold dots, over all zooms and
	// kinds: an estimate of the final Tiles + Tiles2x for progress displays.
	Planned int64
	// Counting is true while the count zooms (dots narrower than a pixel)
	// are still being drawn: their tiles cost far more or less each than
	// disc tiles, so a rate measured now does not tell the time left.
	Counting bool
}

// Source is where the dots come from: a sorted dot store.
type Source interface {
	// Keys returns every dot key in ascending order.
	Keys() []uint64
}

// indexed is a Source that searches through an index (*dotstore.Store);
// Write indexes any other Source itself.
type indexed interface {
	Keys() []uint64
	// Range returns the sorted keys k with first ≤ k ≤ last.
	Range(first, last uint64) []uint64
	// EachTile calls fn for every tile at zoom z holding dots, with them.
	EachTile(z int, fn func(x, y int, keys []uint64))
}

func asIndexed(src Source) indexed {
	if x, ok := src.(indexed); ok {
		return x
	}
	return dotstore.FromSorted(src.Keys())
}

// releaser is a Source that can drop pages it has read (a mapped store)
// and estimate how much of it reads have made resident.
type releaser interface {
	Release()
	Resident() int64
	Touched(keys []uint64)
}

// releaseEvery is how much of a mapped store may be resident before it is
// released: resident memory of the store stays within about this much.
const releaseEvery = 128 << 20

// pass is one kind of tile: 1× or @2x.
type pass struct {
	size   int
	shift  int // log2(size)
	look   func(z int) render.Dot
	suffix string // "" or "@2x"
}

type job struct {
	p       *pass
	z, x, y int
	n       int // keys in the tile
	// walk, when set, makes the job a subtree of a count walk (sub).
	walk *countWalk
	sub  subtree
}

// Write renders every tile in the zoom range that has ink and writes it.
//
// Each zoom is drawn one of two ways, decided by the dot's look there. Where
// a dot is narrower than a pixel, the tile is a count canvas: every dot adds
// one to the pixel holding its centre, and compositing turns counts into ink
// (count × dot mass). Those low zooms hold the most dots per tile; the dots
// are counted once, at the deepest count zoom, and each zoom above is the
// sum of 2 × 2 pixel blocks of the one below (countWalk), which gives the
// same integers as counting its dots. Where a dot is a pixel or wider it is
// an anti-aliased disc from a precomputed stamp, and the tile also draws the
// dots of its neighbours' edge strips, so a dot across an edge has the same
// pixels on both tiles. All tiles of all zooms go into one queue, the count
// zooms' subtrees first, so every worker stays busy even at zoom 0.
func Write(ctx context.Context, src Source, opt Options) (Stats, error) {
	if opt.TileSize != 256 && opt.TileSize != 512 {
		return Stats{}, fmt.Errorf("tiles: tile size %d; want 256 or 512", opt.TileSize)
	}
	if opt.MinZoom < 0 || opt.MaxZoom > 24 || opt.MinZoom > opt.MaxZoom {
		return Stats{}, fmt.Errorf("tiles: zoom range %d–%d; want 0 ≤ min ≤ max ≤ 24", opt.MinZoom, opt.MaxZoom)
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	if opt.Out == nil {
		opt.Out = sink.NewDir(opt.Dir)
	}
	w := &writer{ctx: ctx, opt: opt, src: asIndexed(src), st: Stats{PerZoom: map[int]int64{}}}
	w.rel, _ = src.(releaser)
	man, resuming, err := openManifest(ctx, opt.Dir, opt.Out, opt.Fingerprint, opt.Keep)
	if err != nil {
		return Stats{}, err
	}
	w.man, w.resuming = man, resuming
	if err := man.dropOutside(ctx, opt); err != nil {
		return Stats{}, err
	}
	passes := []*pass{{size: opt.TileSize, look: opt.Look}}
	if opt.HiDPI {
		look := opt.Look
		passes = append(passes, &pass{size: 2 * opt.TileSize, suffix: "@2x", look: func(z int) render.Dot {
			d := look(z)
			d.Diameter *= 2
			return d
		}})
	}
	// Plan: every zoom not yet done. Count zooms are walked as one tree per
	// pass (countWalk); disc tiles are streamed from the store zoom by
	// zoom, so memory does not grow with the number of tiles.
	var walks []*countWalk
	type discZoom struct {
		p *pass
		z int
	}
	var disc []discZoom
	w.left = map[string]*int64{}
	w.zoomStats = map[string]*ZoomStats{}
	for _, p := range passes {
		p.shift = bits.TrailingZeros(uint(p.size))
		var cw *countWalk
		for z := opt.MinZoom; z <= opt.MaxZoom; z++ {
			zk := zoomKey(z, p.suffix)
			if done, ok := man.Done[zk]; ok {
				w.addDone(z, p, done)
				continue
			}
			// The dispatcher holds one count of every zoom until all of the
			// zoom's tiles are queued; the last tile to finish marks it done.
			one := int64(1)
			w.left[zk], w.zoomStats[zk] = &one, &ZoomStats{}
			man.began(zk)
			if p.look(z).Diameter < 1 {
				if cw == nil {
					cw = &countWalk{w: w, p: p, top: z, write: map[int]bool{}, ncat: len(opt.Colors)}
					walks = append(walks, cw)
				}
				cw.deep = z
				cw.write[z] = true
				cw.zooms = append(cw.zooms, zk)
				w.src.EachTile(z, func(x, y int, _ []uint64) {
					w.noteRead(nil)
					if w.keep(z, x, y) {
						w.st.Planned++
					}
				})
			} else {
				w.src.EachTile(z, func(x, y int, _ []uint64) {
					if w.keep(z, x, y) {
						w.st.Planned++
					}
					w.noteRead(nil)
				})
				disc = append(disc, discZoom{p, z})
			}
			if w.rel != nil {
				w.rel.Release() // the binary searches touched pages all over
			}
		}
	}
	if err := man.save(opt.Dir); err != nil {
		return Stats{}, err
	}
	for _, cw := range walks {
		cw.split = cw.deep
		for z := cw.top; z < cw.deep; z++ {
			n := 0
			w.src.EachTile(z, func(int, int, []uint64) { n++ })
			if n >= 16*workers {
				cw.split = z
				break
			}
		}
		cw.order = make(chan subtree, countWindow*workers)
	}

	ch := make(chan job, 4*workers)
	var wg, iowg sync.WaitGroup
	var failed atomic.Pointer[error]
	// Creating a file costs tens to hundreds of microseconds of kernel time
	// here, and more when the disk is busy; separate writers let the
	// renderers go on meanwhile.
	w.counting.Store(int64(len(walks)))
	w.io = make(chan tileFile, 8*workers)
	// A tile is written in place when nothing is at its path yet (no
	// temporary file, no rename): a kill can then leave part of a tile,
	// which is safe because the zoom is not yet listed as done, and a
	// resumed run keeps only whole tiles (kept).
	put := w.opt.Out.Put
	if fp, ok := w.opt.Out.(sink.FreshPutter); ok {
		put = fp.PutFresh
	}
	for i := 0; i < 2*workers+2; i++ {
		iowg.Add(1)
		go func() {
			defer iowg.Done()
			for f := range w.io {
				if failed.Load() != nil {
					continue
				}
				err := put(ctx, f.path, f.data, "image/png", sink.CacheTiles)
				if err == nil {
					err = w.account(f.j, int64(len(f.data)), false)
				}
				if err != nil {
					failed.CompareAndSwap(nil, &err)
				}
			}
		}()
	}
	for i := 0; i < workers; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			r := newTileRenderer(w, len(opt.Colors))
			for j := range ch {
				if failed.Load() != nil {
					if j.walk != nil {
						j.sub.res <- nil
					}
					continue
				}
				var err error
				if j.walk != nil {
					err = j.walk.run(r, j.sub)
				} else {
					err = w.do(r, j)
				}
				if err != nil {
					failed.CompareAndSwap(nil, &err)
				}
			}
		}()
	}
	stop := func() bool { return ctx.Err() != nil || failed.Load() != nil }
	queue := func(j job) bool {
		if stop() {
			return false
		}
		if j.walk == nil {
			atomic.AddInt64(w.left[zoomKey(j.z, j.p.suffix)], 1)
		}
		ch <- j
		return true
	}
	// release drops the dispatcher's hold on a zoom.
	release := func(zk string) {
		if atomic.AddInt64(w.left[zk], -1) == 0 {
			if err := w.finishZoom(zk); err != nil {
				failed.CompareAndSwap(nil, &err)
			}
		}
	}
	var cwg sync.WaitGroup
	for _, cw := range walks {
		cw.stopped, cw.releaseZoom = stop, release
		cwg.Add(1)
		go func() {
			defer cwg.Done()
			if err := cw.combine(newTileRenderer(w, len(opt.Colors))); err != nil {
				failed.CompareAndSwap(nil, &err)
			}
		}()
		cw.queueJobs(queue)
	}
	for _, d := range disc {
		eachCandidate(w.src, d.z, func() { w.noteRead(nil) }, func(x, y, n int) {
			if w.keep(d.z, x, y) {
				queue(job{p: d.p, z: d.z, x: x, y: y, n: n})
			}
		})
		if !stop() {
			release(zoomKey(d.z, d.p.suffix))
		}
	}
	close(ch)
	wg.Wait()
	cwg.Wait()
	close(w.io)
	iowg.Wait()
	if p := failed.Load(); p != nil {
		return w.st, *p
	}
	if err := ctx.Err(); err != nil {
		return w.st, err
	}
	return w.st, nil
}

// keep reports whether tile (z, x, y) is to be drawn (Options.Keep).
func (w *writer) keep(z, x, y int) bool { return w.opt.Keep == nil || w.opt.Keep(z, x, y) }

func zoomKey(z int, suffix string) string { return strconv.Itoa(z) + suffix }

type writer struct {
	ctx       context.Context
	opt       Options
	src       indexed
	rel       releaser
	man       *manifest
	resuming  bool
	mu        sync.Mutex
	st        Stats
	left      map[string]*int64
	zoomStats map[string]*ZoomStats
	io        chan tileFile
	counting  atomic.Int64 // count walks not yet finished
}

func (w *writer) addDone(z int, p *pass, d ZoomStats) {
	if p.suffix == "" {
		w.st.Tiles += d.Tiles
		w.st.PerZoom[z] += d.Tiles
	} else {
		w.st.Tiles2x += d.Tiles
	}
	w.st.Bytes += d.Bytes
	w.st.Empty += d.Empty
}

// finishZoom records a finished zoom in the manifest; w.mu must not be held.
func (w *writer) finishZoom(zk string) error {
	w.mu.Lock()
	defer w.mu.Unlock()
	w.man.Done[zk] = *w.zoomStats[zk]
	return w.man.save(w.opt.Dir)
}

// do renders and encodes one tile and hands it to the writers (w.io).
func (w *writer) do(r *tileRenderer, j job) error {
	p := TilePath(j.z, j.x, j.y, j.p.suffix)
	if kept, err := w.kept(j, p); err != nil || kept {
		return err
	}
	return w.encode(r, j, p, r.render(j))
}

// kept reports whether tile j (at path p) is kept from an earlier run,
// accounting for it if so. In a folder only a whole PNG is kept (one that
// ends with the IEND chunk): tiles are written in place, so a killed run
// can leave part of one, which is then written again.
func (w *writer) kept(j job, p string) (bool, error) {
	if !w.resuming {
		return false, nil
	}
	size, ok, err := w.opt.Out.Exists(w.ctx, p)
	if err != nil || !ok {
		return false, err
	}
	if d, isDir := w.opt.Out.(*sink.Dir); isDir && !wholePNG(filepath.Join(d.Root(), filepath.FromSlash(p)), size) {
		return false, nil
	}
	return true, w.account(j, size, true)
}

// pngEnd is the IEND chunk that ends every PNG (W3C PNG specification,
// second edition, 11.2.5 and 5.3: length 0, type IEND, its CRC-32).
var pngEnd = []byte{0, 0, 0, 0, 'I', 'E', 'N', 'D', 0xAE, 0x42, 0x60, 0x82}

// wholePNG reports whether the file at full, size bytes long, ends with
// the IEND chunk. A prefix of a tile cut anywhere else ends so only if
// those twelve bytes occur in its compressed data right at the cut.
func wholePNG(full string, size int64) bool {
	if size < int64(len(pngEnd)) {
		return false
	}
	f, err := os.Open(full)
	if err != nil {
		return false
	}
	defer f.Close()
	var tail [12]byte
	if _, err := f.ReadAt(tail[:], size-int64(len(tail))); err != nil {
		return false
	}
	return bytes.Equal(tail[:], pngEnd)
}

// encode encodes tile t (nil: no ink) and hands it to the writers.
func (w *writer) encode(r *tileRenderer, j job, p string, t *render.Tile) error {
	if t == nil {
		return w.account(j, -1, false)
	}
	r.buf.Reset()
	if err := r.enc.EncodeTile(&r.buf, t); err != nil {
		return fmt.Errorf("tiles: %d/%d/%d: %w", j.z, j.x, j.y, err)
	}
	w.io <- tileFile{j: j, path: p, data: bytes.Clone(r.buf.Bytes())}
	return nil
}

// tileFile is an encoded tile on its way to disk.
type tileFile struct {
	j    job
	path string
	data []byte
}

// TilePath is the slash path of tile z/x/y with a file suffix ("" or
// "@2x") under a pyramid's root: "z/x/y.png" or "z/x/y@2x.png".
func TilePath(z, x, y int, suffix string) string {
	return strconv.Itoa(z) + "/" + strconv.Itoa(x) + "/" + strconv.Itoa(y) + suffix + ".png"
}

// account adds one finished tile (size −1: no ink) to the totals and marks
// its zoom done when it was the zoom's last.
func (w *writer) account(j job, size int64, kept bool) error {
	zk := zoomKey(j.z, j.p.suffix)
	w.mu.Lock()
	zs := w.zoomStats[zk]
	if size < 0 {
		w.st.Empty++
		zs.Empty++
	} else {
		if j.p.suffix == "" {
			w.st.Tiles++
			w.st.PerZoom[j.z]++
		} else {
			w.st.Tiles2x++
		}
		w.st.Bytes += size
		zs.Tiles++
		zs.Bytes += size
		if kept {
			w.st.Kept++
		}
	}
	snap := w.st
	w.mu.Unlock()
	snap.Counting = w.counting.Load() > 0
	if w.opt.Progress != nil {
		snap.PerZoom = nil // the live map is not safe to share
		w.opt.Progress(snap)
	}
	if atomic.AddInt64(w.left[zk], -1) == 0 {
		return w.finishZoom(zk)
	}
	return nil
}

// noteRead tells a mapped store that keys (none after a bare search) have
// been read, and releases its pages once the blocks that searches and
// reads have reached since the last release could hold releaseEvery bytes
// (dotstore.Store.Resident). Until 2026-12-05 every search was charged
// 128 KiB and every key read 8 bytes, whether or not its pages were
// already resident; at zoom 14, where neighbouring tiles share pages,
// that released the whole mapping every thousand searches and faulted
// the same pages back (madvise and page faults: 2% of a national z0–14
// run's CPU time).
func (w *writer) noteRead(keys []uint64) {
	if w.rel == nil {
		return
	}
	w.rel.Touched(keys)
	if w.rel.Resident() > releaseEvery {
		w.rel.Release()
	}
}

// eachCandidate calls fn for every tile at zoom z that may have ink: each
// tile holding dots (n of them), and each empty neighbour of one, which a
// dot across the edge may ink. An empty neighbour is named once, by its
// occupied neighbour that comes first in Z-order. Only binary searches in
// the store are used, so memory does not grow with the number of tiles.
// searched, when set, is called after each search (for page accounting).
func eachCandidate(src indexed, z int, searched func(), fn func(x, y, n int)) {
	n := 1 << z
	code := func(x, y int) uint64 { f, _ := dotstore.TileRange(z, x, y); return f }
	has := func(x, y int) bool {
		if searched != nil {
			searched()
		}
		return len(srcTile(src, z, x, y)) > 0
	}
	var near [8][2]int
	neighbours := func(x, y int) [][2]int {
		out := near[:0]
		for dy := -1; dy <= 1; dy++ {
			ny := y + dy
			if ny < 0 || ny >= n {
				continue
			}
			for dx := -1; dx <= 1; dx++ {
				nx := (x + dx + n) % n
				if (nx == x && ny == y) || slices.Contains(out, [2]int{nx, ny}) {
					continue
				}
				out = append(out, [2]int{nx, ny})
			}
		}
		return out
	}
	src.EachTile(z, func(x, y int, k []uint64) {
		fn(x, y, len(k))
		mine := code(x, y)
		for _, e := range slices.Clone(neighbours(x, y)) {
			if has(e[0], e[1]) {
				continue
			}
			first := true
			for _, o := range neighbours(e[0], e[1]) {
				if code(o[0], o[1]) < mine && has(o[0], o[1]) {
					first = false
					break
				}
			}
			if first {
				fn(e[0], e[1], 0)
			}
		}
	})
}

// tileRenderer is one worker's buffers.
type tileRenderer struct {
	w      *writer
	ncat   int
	canvas map[int]*render.Canvas // by tile size
	tile   map[int]*render.Tile
	stamps map[string]*render.Stamp
	enc    *render.Encoder
	buf    bytes.Buffer
}

func newTileRenderer(w *writer, ncat int) *tileRenderer {
	return &tileRenderer{w: w, ncat: ncat, canvas: map[int]*render.Canvas{}, tile: map[int]*render.Tile{},
		stamps: map[string]*render.Stamp{}, enc: render.NewEncoder()}
}

// tileOf returns the worker's tile of edge T.
func (r *tileRenderer) tileOf(T int) *render.Tile {
	if r.tile[T] == nil {
		r.tile[T] = render.NewTile(T, T)
	}
	return r.tile[T]
}

// render draws one disc tile; nil when it has no ink.
func (r *tileRenderer) render(j job) *render.Tile {
	T := j.p.size
	c := r.canvas[T]
	if c == nil {
		c = render.NewCanvas(T, T, r.ncat)
		r.canvas[T] = c
	}
	c.Reset()
	r.tileOf(T)
	look := j.p.look(j.z)
	if look.Diameter > render.MaxStampDiameter {
		look.Diameter = render.MaxStampDiameter
	}
	sk := zoomKey(j.z, j.p.suffix)
	st := r.stamps[sk]
	if st == nil {
		st = render.NewStamp(look)
		r.stamps[sk] = st
	}
	r.discs(c, j, st)
	if c.Empty() {
		return nil
	}
	c.CompositeTile(r.w.opt.Colors, r.tile[T])
	return r.tile[T]
}

// countKeys fills a count canvas for tile (z, x, y) of 2^shift pixels from
// the tile's keys all: one per dot in the pixel holding its centre.
func (r *tileRenderer) countKeys(c *render.Canvas, z, x, y, shift int, all []uint64) {
	r.w.noteRead(nil)
	// Pixel = world coordinate >> s, minus the tile's first pixel.
	s := dotstore.WorldBits - z - shift
	ox, oy := x<<shift, y<<shift
	for keys := range chunks(all) {
		r.w.noteRead(keys)
		if s >= 0 {
			for _, k := range keys {
				wx, wy, cat := dotstore.Split(k)
				c.Count(cat, int(wx>>s)-ox, int(wy>>s)-oy)
			}
			continue
		}
		for _, k := range keys {
			wx, wy, cat := dotstore.Split(k)
			c.Count(cat, int(wx)<<-s-ox, int(wy)<<-s-oy)
		}
	}
}

// chunk is how many keys are read between checks of the mapped store's
// resident pages: a zoom-0 tile may hold every dot of the map.
const chunk = 1 << 20

// chunks yields keys in pieces of at most chunk keys.
func chunks(keys []uint64) func(yield func([]uint64) bool) {
	return func(yield func([]uint64) bool) {
		for len(keys) > 0 {
			n := min(len(keys), chunk)
			if !yield(keys[:n]) {
				return
			}
			keys = keys[n:]
		}
	}
}

// subPixel is the position of a dot's centre at zoom z, in 1/Sub pixels of
// tiles 2^shift pixels wide, from the world's top-left corner: (w + 0.5) ·
// 2^(z+shift+4) / 2^29, computed in integers.
func subPixel(w uint32, z, shift int) int {
	v := 2*uint64(w) + 1
	sh := z + shift + 4 - (dotstore.WorldBits + 1)
	if sh >= 0 {
		return int(v << sh)
	}
	return int(v >> -sh)
}

// discs draws the tile's own dots and those of its neighbours' edge strips.
func (r *tileRenderer) discs(c *render.Canvas, j job, st *render.Stamp) {
	T := j.p.size
	n := 1 << j.z
	margin := st.Reach() + 1 // pixels beyond the edge that can reach in
	draw := func(all []uint64, nx, dx int) {
		ox := (nx - dx) * T * render.Sub
		oy := j.y * T * render.Sub
		for keys := range chunks(all) {
			r.w.noteRead(keys)
			for _, k := range keys {
				wx, wy, cat := dotstore.Split(k)
				c.AddStamp(cat, subPixel(wx, j.z, j.p.shift)-ox, subPixel(wy, j.z, j.p.shift)-oy, st)
			}
		}
	}
	for dy := -1; dy <= 1; dy++ {
		ny := j.y + dy
		if ny < 0 || ny >= n {
			continue
		}
		for dx := -1; dx <= 1; dx++ {
			nx := (j.x + dx + n) % n
			keys := srcTile(r.w.src, j.z, nx, ny)
			r.w.noteRead(nil)
			if len(keys) == 0 {
				continue
			}
			if dx == 0 && dy == 0 {
				draw(keys, nx, 0)
				continue
			}
			r.strip(keys, j.z, nx, ny, T, margin, -dx, -dy, func(k []uint64) { draw(k, nx, dx) })
		}
	}
}

// strip calls fn with the keys of tile (z, x, y) that may lie within margin
// pixels of its side facing (sx, sy) (each −1, 0 or +1: left/top, none,
// right/bottom), by descending into the quadrants along that side until a
// quadrant is no more than twice the margin wide.
func (r *tileRenderer) strip(keys []uint64, z, x, y, size, margin, sx, sy int, fn func([]uint64)) {
	if len(keys) == 0 {
		return
	}
	if size <= 2*margin || z >= dotstore.WorldBits {
		fn(keys)
		return
	}
	for q := 0; q < 4; q++ {
		qx, qy := q&1, q>>1
		if (sx < 0 && qx != 0) || (sx > 0 && qx != 1) || (sy < 0 && qy != 0) || (sy > 0 && qy != 1) {
			continue
		}
		cx, cy := 2*x+qx, 2*y+qy
		r.strip(tileKeys(keys, z+1, cx, cy), z+1, cx, cy, size/2, margin, sx, sy, fn)
	}
}

// srcTile returns the keys of tile (z, x, y) from the source.
func srcTile(src indexed, z, x, y int) []uint64 {
	first, last := dotstore.TileRange(z, x, y)
	return src.Range(first, last)
}

// tileKeys returns the keys of tile (z, x, y) within sorted keys.
func tileKeys(keys []uint64, z, x, y int) []uint64 {
	first, last := dotstore.TileRange(z, x, y)
	return searchRange(keys, first, last)
}

func searchRange(keys []uint64, first, last uint64) []uint64 {
	i := sort.Search(len(keys), func(i int) bool { return keys[i] >= first })
	j := i + sort.Search(len(keys)-i, func(k int) bool { return keys[i+k] > last })
	return keys[i:j]
}

// Candidates lists the tiles at zoom z that may have ink: those holding dots
// and their neighbours (a dot near an edge inks the next tile too), each
// once.
func Candidates(src Source, z int) [][2]int {
	var out [][2]int
	eachCandidate(asIndexed(src), z, nil, func(x, y, _ int) { out = append(out, [2]int{x, y}) })
	return out
}
