package tiles

import (
	"bytes"
	"context"
	"fmt"
	"image"
	"image/color"
	"math"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"sync"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/proj"
	"github.com/stipple-maps/stipple/render"
)

// Outline tiles sit in their own folder beside the dot tiles.
const (
	OutlineDir      = "outline"
	OutlineTemplate = OutlineDir + "/{z}/{x}/{y}.png"
)

// OutlineOptions set the boundary outline tiles.
type OutlineOptions struct {
	// Dir is the map's output folder; tiles go to Dir/outline/{z}/{x}/{y}.png.
	Dir              string
	MinZoom, MaxZoom int
	// TileSize is the tile edge in pixels: 256 or 512.
	TileSize int
	// Width is the line width in CSS pixels (a 512 tile draws it twice as
	// many pixels wide); 0 means 1. Lines thinner than a pixel are drawn a
	// pixel wide and fainter.
	Width float64
	// Color is the line colour; its alpha is the line's opacity. The zero
	// value means OutlineColor.
	Color color.NRGBA
	// Workers is the number of tiles drawn at once; 0 means all cores.
	Workers int
}

// OutlineColor is the default outline: dark slate at 60 % opacity, which
// shows on the map ground and over dots of every Okabe & Ito colour.
var OutlineColor = color.NRGBA{0x26, 0x2c, 0x33, 0x99}

// WriteOutlines draws the rings of polys (lon/lat degrees, WGS84) as thin
// anti-aliased lines, into tiles of their own that the viewer can lay over
// the dots: Dir/outline/{z}/{x}/{y}.png for every tile a line touches. A
// boundary shared by two areas is drawn once (coverage is combined by
// maximum, not summed), and the output is the same for any number of
// workers. Set Metadata.Outline to OutlineTemplate to show them.
func WriteOutlines(ctx context.Context, polys []orb.MultiPolygon, opt OutlineOptions) (Stats, error) {
	if opt.TileSize != 256 && opt.TileSize != 512 {
		return Stats{}, fmt.Errorf("tiles: outline tile size %d; want 256 or 512", opt.TileSize)
	}
	if opt.MinZoom < 0 || opt.MaxZoom > 24 || opt.MinZoom > opt.MaxZoom {
		return Stats{}, fmt.Errorf("tiles: outline zoom range %d–%d; want 0 ≤ min ≤ max ≤ 24", opt.MinZoom, opt.MaxZoom)
	}
	if opt.Width == 0 {
		opt.Width = 1
	}
	if !(opt.Width > 0 && opt.Width <= 16) {
		return Stats{}, fmt.Errorf("tiles: outline width %v; want above 0 and at most 16 pixels", opt.Width)
	}
	if opt.Color == (color.NRGBA{}) {
		opt.Color = OutlineColor
	}
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	segs := outlineSegments(polys)
	st := Stats{PerZoom: map[int]int64{}}
	pen := newOutlinePen(opt.Width * float64(opt.TileSize) / 256)
	enc := render.NewEncoder()
	root := filepath.Join(opt.Dir, OutlineDir)
	for z := opt.MinZoom; z <= opt.MaxZoom; z++ {
		if err := ctx.Err(); err != nil {
			return st, err
		}
		bins := binSegments(segs, z, opt.TileSize, pen.reach+1)
		keys := make([]uint64, 0, len(bins))
		for k := range bins {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		var (
			mu     sync.Mutex
			wg     sync.WaitGroup
			failed error
		)
		next := make(chan uint64)
		for w := 0; w < workers; w++ {
			wg.Add(1)
			go func() {
				defer wg.Done()
				T := opt.TileSize
				cov := make([]float32, T*T)
				img := image.NewNRGBA(image.Rect(0, 0, T, T))
				var buf bytes.Buffer
				for k := range next {
					x, y := int(k>>32), int(uint32(k))
					clear(cov)
					scale := float64(T) * math.Exp2(float64(z))
					ox, oy := float64(x*T), float64(y*T)
					ink := false
					for _, i := range bins[k] {
						s := segs[i]
						ink = pen.segment(cov, T, T, s[0]*scale-ox, s[1]*scale-oy, s[2]*scale-ox, s[3]*scale-oy) || ink
					}
					if !ink {
						continue
					}
					if !outlineImage(cov, opt.Color, pen.fade, img) {
						continue
					}
					buf.Reset()
					err := enc.Encode(&buf, img)
					if err == nil {
						err = WriteFileAtomic(filepath.Join(root, strconv.Itoa(z), strconv.Itoa(x), strconv.Itoa(y)+".png"), buf.Bytes())
					}
					mu.Lock()
					if err != nil && failed == nil {
						failed = err
					}
					if err == nil {
						st.Tiles++
						st.Bytes += int64(buf.Len())
						st.PerZoom[z]++
					}
					mu.Unlock()
				}
			}()
		}
		for _, k := range keys {
			if ctx.Err() != nil {
				break
			}
			next <- k
		}
		close(next)
		wg.Wait()
		if failed != nil {
			return st, failed
		}
	}
	return st, ctx.Err()
}

// outlineSegments projects every ring edge to Web Mercator world units
// (0–1 east from 180°W and south from 85.0511°N): x0, y0, x1, y1.
// Edges with a coordinate that is not a finite number are left out.
func outlineSegments(polys []orb.MultiPolygon) [][4]float64 {
	var segs [][4]float64
	for _, mp := range polys {
		for _, p := range mp {
			for _, r := range p {
				for i := 0; i+1 < len(r); i++ {
					a, b := r[i], r[i+1]
					s := [4]float64{lonToWorld(a[0]), mercY(a[1]), lonToWorld(b[0]), mercY(b[1])}
					if finite4(s) && (s[0] != s[2] || s[1] != s[3]) {
						segs = append(segs, s)
					}
				}
			}
		}
	}
	return segs
}

func lonToWorld(lon float64) float64 { return (lon + 180) / 360 }

// mercY is the Web Mercator y of a latitude in world units, 0 at
// proj.WebMercatorMaxLat north and 1 at as far south.
func mercY(lat float64) float64 {
	lat = math.Max(-proj.WebMercatorMaxLat, math.Min(proj.WebMercatorMaxLat, lat))
	return 0.5 - proj.MercatorYSin(math.Sin(lat*math.Pi/180))/(2*math.Pi)
}

func finite4(s [4]float64) bool {
	for _, v := range s {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// binSegments lists, for each tile at zoom z (key x<<32 | y), the segments
// that pass within margin pixels of it.
func binSegments(segs [][4]float64, z, T int, margin float64) map[uint64][]int32 {
	n := 1 << z
	scale := float64(T) * math.Exp2(float64(z))
	bins := map[uint64][]int32{}
	add := func(tx, ty int, i int32) {
		if tx < 0 || ty < 0 || tx >= n || ty >= n {
			return
		}
		k := uint64(tx)<<32 | uint64(ty)
		b := bins[k]
		if len(b) > 0 && b[len(b)-1] == i {
			return
		}
		bins[k] = append(b, i)
	}
	for i, s := range segs {
		ax, ay, bx, by := s[0]*scale, s[1]*scale, s[2]*scale, s[3]*scale
		tx0 := int(math.Floor((math.Min(ax, bx) - margin) / float64(T)))
		tx1 := int(math.Floor((math.Max(ax, bx) + margin) / float64(T)))
		ty0 := int(math.Floor((math.Min(ay, by) - margin) / float64(T)))
		ty1 := int(math.Floor((math.Max(ay, by) + margin) / float64(T)))
		if (tx1-tx0+1)*(ty1-ty0+1) <= 6 {
			for ty := ty0; ty <= ty1; ty++ {
				for tx := tx0; tx <= tx1; tx++ {
					add(tx, ty, int32(i))
				}
			}
			continue
		}
		// A long edge: walk it in steps of a quarter tile and take the
		// tiles within the margin of each step.
		steps := int(math.Ceil(math.Hypot(bx-ax, by-ay)/(float64(T)/4))) + 1
		for k := 0; k <= steps; k++ {
			t := float64(k) / float64(steps)
			px, py := ax+(bx-ax)*t, ay+(by-ay)*t
			for _, d := range [4][2]float64{{-1, -1}, {1, -1}, {-1, 1}, {1, 1}} {
				add(int(math.Floor((px+d[0]*margin)/float64(T))), int(math.Floor((py+d[1]*margin)/float64(T))), int32(i))
			}
		}
	}
	for k, b := range bins {
		slices.Sort(b)
		bins[k] = slices.Compact(b)
	}
	return bins
}

// outlinePen draws lines of one width.
type outlinePen struct {
	half  float64 // half the drawn width, at least half a pixel
	reach float64 // half + 0.5: pixels farther from the line get nothing
	fade  float32 // opacity factor for lines thinner than a pixel
}

func newOutlinePen(width float64) outlinePen {
	w := math.Max(width, 1)
	return outlinePen{half: w / 2, reach: w/2 + 0.5, fade: float32(math.Min(width, 1))}
}

// coverage of a pixel whose centre lies d pixels from the line's centre:
// the box-filter ramp clamp(half + 0.5 − d, 0, 1).
func (p outlinePen) coverage(d float64) float32 {
	c := p.half + 0.5 - d
	if c <= 0 {
		return 0
	}
	if c >= 1 {
		return 1
	}
	return float32(c)
}

// segment draws the segment (ax, ay)–(bx, by), in pixels of a w × h
// buffer, into cov by maximum, and reports whether it touched a pixel. It
// clips the segment to the buffer grown by the pen's reach, then visits on
// each row only the span of pixels within reach of the line.
func (p outlinePen) segment(cov []float32, w, h int, ax, ay, bx, by float64) bool {
	R := p.reach
	ok, ax, ay, bx, by := clipSegment(ax, ay, bx, by, -R-1, -R-1, float64(w)+R+1, float64(h)+R+1)
	if !ok {
		return false
	}
	dx, dy := bx-ax, by-ay
	ll := dx*dx + dy*dy
	py0 := max(int(math.Floor(math.Min(ay, by)-R)), 0)
	py1 := min(int(math.Ceil(math.Max(ay, by)+R)), h-1)
	touched := false
	for py := py0; py <= py1; py++ {
		yc := float64(py) + 0.5
		// The part of the segment within R of this row's centre line.
		var xa, xb float64
		if math.Abs(dy) < 1e-12 {
			if math.Abs(ay-yc) > R {
				continue
			}
			xa, xb = ax, bx
		} else {
			t0, t1 := (yc-R-ay)/dy, (yc+R-ay)/dy
			if t0 > t1 {
				t0, t1 = t1, t0
			}
			t0, t1 = math.Max(t0, 0), math.Min(t1, 1)
			if t0 > t1 {
				continue
			}
			xa, xb = ax+t0*dx, ax+t1*dx
		}
		if xa > xb {
			xa, xb = xb, xa
		}
		px0 := max(int(math.Floor(xa-R)), 0)
		px1 := min(int(math.Ceil(xb+R)), w-1)
		row := cov[py*w : py*w+w]
		for px := px0; px <= px1; px++ {
			xc := float64(px) + 0.5
			t := 0.0
			if ll > 0 {
				t = math.Max(0, math.Min(1, ((xc-ax)*dx+(yc-ay)*dy)/ll))
			}
			ex, ey := ax+t*dx-xc, ay+t*dy-yc
			c := p.coverage(math.Sqrt(ex*ex + ey*ey))
			if c > row[px] {
				row[px] = c
				touched = true
			}
		}
	}
	return touched
}

// clipSegment clips a segment to the box [x0, x1] × [y0, y1]
// (Liang–Barsky); ok is false when nothing of it is inside.
func clipSegment(ax, ay, bx, by, x0, y0, x1, y1 float64) (ok bool, cax, cay, cbx, cby float64) {
	dx, dy := bx-ax, by-ay
	t0, t1 := 0.0, 1.0
	for _, e := range [4][2]float64{{-dx, ax - x0}, {dx, x1 - ax}, {-dy, ay - y0}, {dy, y1 - ay}} {
		p, q := e[0], e[1]
		if p == 0 {
			if q < 0 {
				return false, 0, 0, 0, 0
			}
			continue
		}
		r := q / p
		if p < 0 {
			if r > t1 {
				return false, 0, 0, 0, 0
			}
			t0 = math.Max(t0, r)
		} else {
			if r < t0 {
				return false, 0, 0, 0, 0
			}
			t1 = math.Min(t1, r)
		}
	}
	return true, ax + t0*dx, ay + t0*dy, ax + t1*dx, ay + t1*dy
}

// outlineImage turns coverage into pixels of colour c: alpha is coverage ×
// fade × c's alpha, rounded to a byte. It reports whether any pixel has ink.
func outlineImage(cov []float32, c color.NRGBA, fade float32, img *image.NRGBA) bool {
	ink := false
	a := float32(c.A) * fade
	for i, v := range cov {
		o := img.Pix[4*i : 4*i+4 : 4*i+4]
		al := uint8(v*a + 0.5)
		if al == 0 {
			o[0], o[1], o[2], o[3] = 0, 0, 0, 0
			continue
		}
		o[0], o[1], o[2], o[3] = c.R, c.G, c.B, al
		ink = true
	}
	return ink
}
