package tiles

import (
	"bytes"
	"context"
	"fmt"
	"image"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"sync"
	"sync/atomic"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/sample/dotstore"
)

// Options describe one pyramid.
type Options struct {
	// Dir is the output folder; tiles go to Dir/{z}/{x}/{y}.png.
	Dir              string
	MinZoom, MaxZoom int
	// TileSize is the tile edge in pixels: 256 or 512.
	TileSize int
	// Colors has one colour per category, by category number.
	Colors []color.NRGBA
	// Look gives the dot's look at a zoom.
	Look func(z int) render.Dot
	// Workers is the number of tiles rendered at once; 0 means all cores.
	Workers int
	// Progress, when set, is called after each tile with the running totals.
	Progress func(Stats)
}

// Stats count what a pyramid write did.
type Stats struct {
	Tiles   int64         // tiles written
	Bytes   int64         // bytes of PNG written
	Empty   int64         // candidate tiles with no ink, not written
	PerZoom map[int]int64 // tiles written per zoom
}

// Source is where the dots come from: a sorted dot store.
type Source interface {
	Tiles(z int, fn func(x, y int))
	Range(first, last uint64) []uint64
}

type job struct{ z, x, y int }

// Write renders every tile in the zoom range that has ink and writes it.
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
	st := Stats{PerZoom: map[int]int64{}}
	var mu sync.Mutex
	var failed atomic.Value
	enc := render.NewEncoder()
	for z := opt.MinZoom; z <= opt.MaxZoom; z++ {
		jobs := Candidates(src, z)
		ch := make(chan job)
		var wg sync.WaitGroup
		for w := 0; w < workers; w++ {
			wg.Add(1)
			go func() {
				defer wg.Done()
				r := newTileRenderer(src, opt)
				var buf bytes.Buffer
				for j := range ch {
					if failed.Load() != nil {
						continue
					}
					img := r.render(j.z, j.x, j.y)
					if img == nil {
						mu.Lock()
						st.Empty++
						mu.Unlock()
						continue
					}
					buf.Reset()
					if err := enc.Encode(&buf, img); err != nil {
						failed.Store(err)
						continue
					}
					if err := writeAtomic(opt.Dir, j, buf.Bytes()); err != nil {
						failed.Store(err)
						continue
					}
					mu.Lock()
					st.Tiles++
					st.Bytes += int64(buf.Len())
					st.PerZoom[j.z]++
					snap := st
					mu.Unlock()
					if opt.Progress != nil {
						opt.Progress(snap)
					}
				}
			}()
		}
		for _, j := range jobs {
			if ctx.Err() != nil {
				break
			}
			ch <- job{z, j[0], j[1]}
		}
		close(ch)
		wg.Wait()
		if err, _ := failed.Load().(error); err != nil {
			return st, err
		}
		if err := ctx.Err(); err != nil {
			return st, err
		}
	}
	return st, nil
}

// Candidates lists the tiles at zoom z that may have ink: those holding dots
// and their eight neighbours (a dot near an edge inks the next tile too), in
// row-major order.
func Candidates(src Source, z int) [][2]int {
	n := 1 << z
	seen := map[[2]int]bool{}
	src.Tiles(z, func(x, y int) {
		for dy := -1; dy <= 1; dy++ {
			for dx := -1; dx <= 1; dx++ {
				ny := y + dy
				if ny < 0 || ny >= n {
					continue
				}
				seen[[2]int{(x + dx + n) % n, ny}] = true
			}
		}
	})
	out := make([][2]int, 0, len(seen))
	for k := range seen {
		out = append(out, k)
	}
	slices.SortFunc(out, func(a, b [2]int) int {
		if a[1] != b[1] {
			return a[1] - b[1]
		}
		return a[0] - b[0]
	})
	return out
}

type tileRenderer struct {
	src    Source
	opt    Options
	canvas *render.Canvas
	img    *image.NRGBA
}

func newTileRenderer(src Source, opt Options) *tileRenderer {
	s := opt.TileSize
	return &tileRenderer{
		src:    src,
		opt:    opt,
		canvas: render.NewCanvas(s, s, len(opt.Colors)),
		img:    image.NewNRGBA(image.Rect(0, 0, s, s)),
	}
}

// render draws tile (z, x, y); nil when it has no ink.
func (r *tileRenderer) render(z, x, y int) *image.NRGBA {
	T := r.opt.TileSize
	look := r.opt.Look(z)
	r.canvas.Reset()
	scale := float64(T) * math.Exp2(float64(z)) / dotstore.WorldSize
	n := 1 << z
	margin := look.Diameter/2 + 1
	// Depth of the sub-tiles that cover the margin strip of a neighbour.
	k := 0
	for float64(T)/math.Exp2(float64(k+1)) >= margin && z+k+1 <= dotstore.WorldBits && k < 8 {
		k++
	}
	s := 1 << k
	// draw puts keys from the tile in column nx, which lies dx columns from
	// this one; nx-dx differs from x by the world width across the
	// antimeridian, which shifts those dots to the side they are seen on.
	draw := func(keys []uint64, nx, dx int) {
		ox := float64((nx - dx) * T)
		oy := float64(y * T)
		for _, key := range keys {
			wx, wy, cat := dotstore.Split(key)
			px := (float64(wx)+0.5)*scale - ox
			py := (float64(wy)+0.5)*scale - oy
			if px < -margin || py < -margin || px > float64(T)+margin || py > float64(T)+margin {
				continue
			}
			r.canvas.Add(cat, px, py, look)
		}
	}
	for dy := -1; dy <= 1; dy++ {
		ny := y + dy
		if ny < 0 || ny >= n {
			continue
		}
		for dx := -1; dx <= 1; dx++ {
			nx := (x + dx + n) % n
			if dx == 0 && dy == 0 {
				draw(r.src.Range(dotstore.TileRange(z, x, y)), x, 0)
				continue
			}
			// Only the strip of the neighbour next to this tile can reach it.
			sx0, sx1 := 0, s-1
			if dx < 0 {
				sx0 = s - 1
			} else if dx > 0 {
				sx1 = 0
			}
			sy0, sy1 := 0, s-1
			if dy < 0 {
				sy0 = s - 1
			} else if dy > 0 {
				sy1 = 0
			}
			for sy := sy0; sy <= sy1; sy++ {
				for sx := sx0; sx <= sx1; sx++ {
					keys := r.src.Range(dotstore.TileRange(z+k, nx*s+sx, ny*s+sy))
					if len(keys) > 0 {
						draw(keys, nx, dx)
					}
				}
			}
		}
	}
	if r.canvas.Empty() {
		return nil
	}
	r.canvas.Composite(r.opt.Colors, r.img)
	return r.img
}

var dirMu sync.Mutex
var dirsMade = map[string]bool{}

// writeAtomic writes a tile to a temporary file and renames it into place,
// so a tile path holds either nothing or a whole tile, even after a kill.
func writeAtomic(root string, j job, data []byte) error {
	dir := filepath.Join(root, strconv.Itoa(j.z), strconv.Itoa(j.x))
	dirMu.Lock()
	if !dirsMade[dir] {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			dirMu.Unlock()
			return fmt.Errorf("tiles: %w", err)
		}
		dirsMade[dir] = true
	}
	dirMu.Unlock()
	final := filepath.Join(dir, strconv.Itoa(j.y)+".png")
	tmp := final + ".tmp"
	if err := os.WriteFile(tmp, data, 0o644); err != nil {
		return fmt.Errorf("tiles: %w", err)
	}
	if err := os.Rename(tmp, final); err != nil {
		return fmt.Errorf("tiles: %w", err)
	}
	return nil
}
