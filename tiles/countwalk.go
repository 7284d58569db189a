package tiles

import (
	"fmt"
	"sync"
	"sync/atomic"

	"github.com/stipple-maps/stipple/render"
)

// countWalk draws the count zooms of one pass from one count of the dots.
// A count pixel of zoom z is a 2^(29−z−shift)-cell square of the world, so
// the counts of a tile at zoom z are those of its four children at z+1,
// each shrunk by half (Canvas.AddHalf), exactly: the dots are counted once,
// at the deepest count zoom, and every zoom above is summed from the one
// below. The walk goes down the tile tree in Z-order, so it holds one
// canvas per zoom of the path it is on.
//
// The tree is cut at zoom split: each occupied tile there is a job for the
// workers, which walk its subtree (counting at deep, summing above, writing
// the tiles they own) and hand its canvas back; one combiner takes those
// canvases in Z-order and sums and writes the zooms above split. No
// goroutine ever counts every dot alone.
type countWalk struct {
	w           *writer
	p           *pass
	top, deep   int
	split       int
	write       map[int]bool // count zooms whose tiles are written
	zooms       []string     // their zoom keys, released when the walk ends
	order       chan subtree // jobs at split, in Z-order, for the combiner
	mu          sync.Mutex
	free        []*render.Canvas
	ncat        int
	stopped     func() bool
	releaseZoom func(zk string)
}

// subtree is one job of the walk: the tile at split and where its canvas
// goes.
type subtree struct {
	x, y int
	anc  bool // an ancestor is written, so the canvas is wanted back
	res  chan *render.Canvas
}

// countWindow is how many split-zoom jobs may be queued or done ahead of
// the combiner, per worker: their canvases wait in memory meanwhile.
const countWindow = 4

// want reports whether count tile (z, x, y) is written.
func (cw *countWalk) want(z, x, y int) bool { return cw.write[z] && cw.w.keep(z, x, y) }

// ancWanted reports whether any ancestor of tile (z, x, y) down to zoom
// top is written.
func (cw *countWalk) ancWanted(z, x, y int) bool {
	for a := z - 1; a >= cw.top; a-- {
		if cw.want(a, x>>(z-a), y>>(z-a)) {
			return true
		}
	}
	return false
}

func (cw *countWalk) get() *render.Canvas {
	cw.mu.Lock()
	defer cw.mu.Unlock()
	if n := len(cw.free); n > 0 {
		c := cw.free[n-1]
		cw.free = cw.free[:n-1]
		return c
	}
	return render.NewCanvas(cw.p.size, cw.p.size, cw.ncat)
}

func (cw *countWalk) put(c *render.Canvas) {
	if c == nil {
		return
	}
	c.Reset()
	cw.mu.Lock()
	cw.free = append(cw.free, c)
	cw.mu.Unlock()
}

// node walks the subtree of tile (z, x, y): it writes the tiles of it that
// are wanted and returns the tile's counts when anc (an ancestor wants
// them), else nil.
func (cw *countWalk) node(r *tileRenderer, z, x, y int, anc bool) (*render.Canvas, error) {
	if cw.stopped() {
		return nil, nil
	}
	keys := srcTile(cw.w.src, z, x, y)
	cw.w.noteRead(nil)
	if len(keys) == 0 {
		return nil, nil
	}
	me := cw.want(z, x, y)
	need := me || anc
	var c *render.Canvas
	if z == cw.deep {
		if !need {
			return nil, nil
		}
		c = cw.get()
		r.countKeys(c, z, x, y, cw.p.shift, keys)
	} else {
		if need {
			c = cw.get()
		}
		for q := 0; q < 4; q++ {
			cc, err := cw.node(r, z+1, 2*x+q&1, 2*y+q>>1, need)
			if err != nil {
				cw.put(c)
				return nil, err
			}
			if cc != nil && c != nil {
				c.AddHalf(cc, q&1, q>>1)
			}
			cw.put(cc)
		}
	}
	return cw.finish(r, c, z, x, y, me, anc)
}

// finish writes tile (z, x, y) from its counts c when me, and returns c
// when anc.
func (cw *countWalk) finish(r *tileRenderer, c *render.Canvas, z, x, y int, me, anc bool) (*render.Canvas, error) {
	if me && c != nil {
		if err := cw.emit(r, c, z, x, y); err != nil {
			cw.put(c)
			return nil, err
		}
	}
	if !anc {
		cw.put(c)
		return nil, nil
	}
	return c, nil
}

// emit composites, encodes and queues count tile (z, x, y), leaving c as
// it was.
func (cw *countWalk) emit(r *tileRenderer, c *render.Canvas, z, x, y int) error {
	if cw.stopped() {
		return nil
	}
	w := cw.w
	j := job{p: cw.p, z: z, x: x, y: y}
	atomic.AddInt64(w.left[zoomKey(z, cw.p.suffix)], 1)
	path := TilePath(z, x, y, cw.p.suffix)
	if kept, err := w.kept(j, path); err != nil || kept {
		return err
	}
	if c.Empty() {
		return w.account(j, -1, false)
	}
	t := r.tileOf(cw.p.size)
	c.CompositeCountsKeep(w.opt.Colors, cw.p.look(z).Mass(), t)
	return w.encode(r, j, path, t)
}

// combine walks the zooms above split in Z-order, taking the split jobs'
// canvases as they come, and writes the wanted tiles there; it then
// releases the walk's zooms.
func (cw *countWalk) combine(r *tileRenderer) error {
	var rec func(z, x, y int, anc bool) (*render.Canvas, error)
	rec = func(z, x, y int, anc bool) (*render.Canvas, error) {
		if len(srcTile(cw.w.src, z, x, y)) == 0 {
			return nil, nil
		}
		if z == cw.split {
			s, ok := <-cw.order
			if !ok {
				return nil, nil // stopped before this job was queued
			}
			c := <-s.res
			if s.x != x || s.y != y {
				cw.put(c)
				return nil, fmt.Errorf("tiles: count walk out of step at %d/%d/%d (job %d/%d)", z, x, y, s.x, s.y)
			}
			if !anc {
				cw.put(c)
				return nil, nil
			}
			return c, nil
		}
		me := cw.want(z, x, y)
		need := me || anc
		var c *render.Canvas
		if need {
			c = cw.get()
		}
		for q := 0; q < 4; q++ {
			cc, err := rec(z+1, 2*x+q&1, 2*y+q>>1, need)
			if err != nil {
				cw.put(c)
				return nil, err
			}
			if cc != nil && c != nil {
				c.AddHalf(cc, q&1, q>>1)
			}
			cw.put(cc)
		}
		return cw.finish(r, c, z, x, y, me, anc)
	}
	var err error
	cw.w.src.EachTile(cw.top, func(x, y int, _ []uint64) {
		if err != nil {
			return
		}
		var c *render.Canvas
		c, err = rec(cw.top, x, y, false)
		cw.put(c)
	})
	// Drain what is left (after an error or a stop) so no worker waits.
	for s := range cw.order {
		cw.put(<-s.res)
	}
	cw.w.counting.Add(-1)
	if err != nil {
		return err
	}
	if !cw.stopped() {
		for _, zk := range cw.zooms {
			cw.releaseZoom(zk)
		}
	}
	return nil
}

// queueJobs hands the split zoom's tiles to the workers in Z-order and
// closes the combiner's queue.
func (cw *countWalk) queueJobs(queue func(job) bool) {
	defer close(cw.order)
	cw.w.src.EachTile(cw.split, func(x, y int, _ []uint64) {
		if cw.stopped() {
			return
		}
		s := subtree{x: x, y: y, anc: cw.ancWanted(cw.split, x, y), res: make(chan *render.Canvas, 1)}
		cw.order <- s
		if !queue(job{p: cw.p, z: cw.split, x: x, y: y, walk: cw, sub: s}) {
			s.res <- nil
		}
	})
}

// run is a worker's part: one subtree.
func (cw *countWalk) run(r *tileRenderer, s subtree) error {
	c, err := cw.node(r, cw.split, s.x, s.y, s.anc)
	s.res <- c
	return err
}
