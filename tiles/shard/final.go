package shard

import (
	"bytes"
	"context"
	"fmt"
	"image/color"
	"math"
	"runtime"
	"strconv"
	"sync"
	"sync/atomic"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// LowOptions set how RenderLow draws the zooms above the split zoom.
type LowOptions struct {
	// Colors has one colour per category.
	Colors []color.NRGBA
	// Workers draw tiles at once; 0 means all cores.
	Workers int
}

// lowJob is one tile of the final step: the summary entries in it.
type lowJob struct {
	z, x, y int
	ps      pass
	lo, hi  int // range of summary entries
}

// RenderLow draws every tile of zooms MinZoom … Split−1 (both kinds when
// the pyramid has @2x tiles) from the merged summary of all shards, puts
// each into out as {z}/{x}/{y}.png or {z}/{x}/{y}@2x.png, and returns the
// tiles and bytes per zoom key ("z" or "z@2x", as tiles.Write counts them).
//
// Each tile is drawn as tiles.Write draws a count tile: every dot adds one
// to the pixel holding its centre (here a summary entry adds its count,
// by calling render.Canvas.Count that many times), and the canvas is composited
// with render.Canvas.CompositeCounts at the zoom's dot mass and encoded
// with render.Encoder. So the tiles are byte for byte those of a
// single-machine render, which the end-to-end test checks.
func RenderLow(ctx context.Context, s *Summary, l *Layout, out sink.Sink, opt LowOptions) (map[string]tiles.ZoomStats, error) {
	p := l.Pyramid
	stats := map[string]tiles.ZoomStats{}
	if l.Split <= p.MinZoom {
		return stats, nil
	}
	if s.Level != l.Level() {
		return nil, fmt.Errorf("shard: summary of level %d; the layout needs level %d", s.Level, l.Level())
	}
	if len(opt.Colors) == 0 {
		return nil, fmt.Errorf("shard: no colours")
	}
	var jobs []lowJob
	for _, ps := range p.passes() {
		for z := p.MinZoom; z < l.Split; z++ {
			if d := p.look(z, ps); d.Diameter >= 1 {
				return nil, fmt.Errorf("shard: zoom %d is drawn with discs (%.2f px); the split zoom %d is too deep for the final step", z, d.Diameter, l.Split)
			}
			shift := uint(2*(dotstore.WorldBits-z) + dotstore.CatBits)
			for i := 0; i < len(s.Keys); {
				code := s.Keys[i] >> shift
				j := i + 1
				for j < len(s.Keys) && s.Keys[j]>>shift == code {
					j++
				}
				wx, wy, _ := dotstore.Split(s.Keys[i])
				jobs = append(jobs, lowJob{z: z, x: int(wx >> (dotstore.WorldBits - z)), y: int(wy >> (dotstore.WorldBits - z)), ps: ps, lo: i, hi: j})
				i = j
			}
		}
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	var mu sync.Mutex
	var failed atomic.Pointer[error]
	ch := make(chan lowJob, 4*workers)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			r := &lowRenderer{enc: render.NewEncoder(), ncat: len(opt.Colors), canvas: map[int]*render.Canvas{}, tile: map[int]*render.Tile{}}
			for j := range ch {
				if failed.Load() != nil || ctx.Err() != nil {
					continue
				}
				data, err := r.draw(s, p, j, opt.Colors)
				if err == nil {
					suffix := ""
					if j.ps.scale == 2 {
						suffix = "@2x"
					}
					path := strconv.Itoa(j.z) + "/" + strconv.Itoa(j.x) + "/" + strconv.Itoa(j.y) + suffix + ".png"
					err = sink.PutFile(ctx, out, path, data)
					mu.Lock()
					zs := stats[strconv.Itoa(j.z)+suffix]
					zs.Tiles++
					zs.Bytes += int64(len(data))
					stats[strconv.Itoa(j.z)+suffix] = zs
					mu.Unlock()
				}
				if err != nil {
					failed.CompareAndSwap(nil, &err)
				}
			}
		}()
	}
	for _, j := range jobs {
		if ctx.Err() != nil || failed.Load() != nil {
			break
		}
		ch <- j
	}
	close(ch)
	wg.Wait()
	if e := failed.Load(); e != nil {
		return nil, *e
	}
	return stats, ctx.Err()
}

type lowRenderer struct {
	enc    *render.Encoder
	ncat   int
	canvas map[int]*render.Canvas
	tile   map[int]*render.Tile
	buf    bytes.Buffer
}

func (r *lowRenderer) draw(s *Summary, p Pyramid, j lowJob, colors []color.NRGBA) ([]byte, error) {
	T := p.TileSize * j.ps.scale
	c := r.canvas[T]
	if c == nil {
		c = render.NewCanvas(T, T, r.ncat)
		r.canvas[T] = c
		r.tile[T] = render.NewTile(T, T)
	}
	c.Reset()
	shift := log2(T)
	// Pixel = world coordinate >> (29 − z − shift), as tiles.Write counts.
	ps := uint(dotstore.WorldBits - j.z - shift)
	ox, oy := j.x<<shift, j.y<<shift
	for i := j.lo; i < j.hi; i++ {
		wx, wy, cat := dotstore.Split(s.Keys[i])
		if cat >= r.ncat {
			return nil, fmt.Errorf("shard: summary has category %d; the map has %d", cat, r.ncat)
		}
		px, py := int(wx>>ps)-ox, int(wy>>ps)-oy
		// The summary's count at once: the same pixels as one Count per
		// dot, which is what tiles.Write does.
		c.CountN(cat, px, py, uint32(min(s.Counts[i], math.MaxUint32)))
	}
	c.CompositeCountsTile(colors, p.look(j.z, j.ps).Mass(), r.tile[T])
	r.buf.Reset()
	if err := r.enc.EncodeTile(&r.buf, r.tile[T]); err != nil {
		return nil, fmt.Errorf("shard: %d/%d/%d: %w", j.z, j.x, j.y, err)
	}
	return bytes.Clone(r.buf.Bytes()), nil
}
