package batch

import (
	"fmt"
	"image"
	"image/color"
	"image/draw"
	"image/png"
	"math"
	"os"

	"github.com/fogleman/gg"
	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// Thumbnail size in pixels.
const (
	ThumbW = 320
	ThumbH = 200
)

// thumbGround is the paper the thumbnail's dots sit on, and thumbLine the
// outline of the extent's areas (or box) drawn over them.
var (
	thumbGround = color.NRGBA{0xf6, 0xf4, 0xef, 0xff}
	thumbLine   = color.NRGBA{0x26, 0x2c, 0x33, 0x80}
)

// Thumbnail draws the extent as a ThumbW × ThumbH picture at the deepest
// zoom whose view holds its box, from the same dots and with the same dot
// look as the tiles, with its areas' outlines (or its box) over the dots.
func Thumbnail(store *dotstore.Store, p *Picked, layer *geo.Layer, e *Extent, colors []color.NRGBA, look func(int) render.Dot, tileSize int) *image.RGBA {
	pad := 8
	scale := tileSize / 256 // a 512 map's pixel is half a 256 map's
	z := mapjob.FitZoom(p.Bound, (ThumbW-2*pad)/scale, (ThumbH-2*pad)/scale, 0, max(e.MaxZoom, 0))
	worldPx := float64(tileSize) * math.Exp2(float64(z)) // pixels across the world at z
	centre := mapjob.ExtentOfBound(p.Bound).Centre()
	// Longitudes are taken within 180° of the centre's, so a view across
	// the antimeridian is one piece.
	toPx := func(lon, lat float64) (float64, float64) {
		lon = centre[0] + math.Remainder(lon-centre[0], 360)
		_, y := dotstore.World(0, lat)
		return (lon + 180) / 360 * worldPx, (float64(y) + 0.5) / dotstore.WorldSize * worldPx
	}
	cx, cy := toPx(centre[0], centre[1])
	ox, oy := cx-ThumbW/2, cy-ThumbH/2

	d := look(z)
	canvas := render.NewCanvas(ThumbW, ThumbH, len(colors))
	hist := d.Diameter < 1
	var st *render.Stamp
	reach := 1
	if !hist {
		if d.Diameter > render.MaxStampDiameter {
			d.Diameter = render.MaxStampDiameter
		}
		st = render.NewStamp(d)
		reach = st.Reach() + 1
	}
	// The tiles at z under the view, one tile more where a dot's disc can
	// reach in.
	n := 1 << z
	tx0 := int(math.Floor((ox - float64(reach)) / float64(tileSize)))
	tx1 := int(math.Floor((ox + ThumbW + float64(reach)) / float64(tileSize)))
	ty0 := max(0, int(math.Floor((oy-float64(reach))/float64(tileSize))))
	ty1 := min(n-1, int(math.Floor((oy+ThumbH+float64(reach))/float64(tileSize))))
	keys := store.Keys()
	cellPx := worldPx / dotstore.WorldSize
	for ty := ty0; ty <= ty1; ty++ {
		for tx := max(tx0, tx1-n+1); tx <= tx1; tx++ {
			// Tile columns past either edge of the world are those of the
			// other side, shifted by a world's width.
			wrapped := ((tx % n) + n) % n
			shift := float64(tx-wrapped) * float64(tileSize)
			first, last := dotstore.TileRange(z, wrapped, ty)
			for _, k := range rangeOf(keys, first, last) {
				wx, wy, cat := dotstore.Split(k)
				px := (float64(wx)+0.5)*cellPx + shift - ox
				py := (float64(wy)+0.5)*cellPx - oy
				if hist {
					ix, iy := int(math.Floor(px)), int(math.Floor(py))
					if ix >= 0 && iy >= 0 && ix < ThumbW && iy < ThumbH {
						canvas.Count(cat, ix, iy)
					}
					continue
				}
				canvas.AddStamp(cat, int(math.Floor(px*render.Sub)), int(math.Floor(py*render.Sub)), st)
			}
		}
	}
	dots := image.NewNRGBA(image.Rect(0, 0, ThumbW, ThumbH))
	if hist {
		canvas.CompositeCounts(colors, d.Mass(), dots)
	} else {
		canvas.Composite(colors, dots)
	}
	ground := image.NewRGBA(image.Rect(0, 0, ThumbW, ThumbH))
	draw.Draw(ground, ground.Bounds(), &image.Uniform{thumbGround}, image.Point{}, draw.Src)
	draw.Draw(ground, ground.Bounds(), dots, image.Point{}, draw.Over)

	dc := gg.NewContextForRGBA(ground)
	dc.SetColor(thumbLine)
	dc.SetLineWidth(0.75)
	ring := func(r orb.Ring) {
		for i, pt := range r {
			x, y := toPx(pt[0], pt[1])
			if i == 0 {
				dc.MoveTo(x-ox, y-oy)
			} else {
				dc.LineTo(x-ox, y-oy)
			}
		}
		dc.ClosePath()
	}
	if e.Select == ByBox {
		b := p.Bound
		east := b.Max[0]
		if east < b.Min[0] {
			east += 360 // across the antimeridian
		}
		ring(orb.Ring{{b.Min[0], b.Min[1]}, {east, b.Min[1]}, {east, b.Max[1]}, {b.Min[0], b.Max[1]}})
	} else {
		for _, i := range p.Features {
			for _, poly := range layer.Features[i].Geometry {
				for _, r := range poly {
					ring(r)
				}
			}
		}
	}
	dc.Stroke()
	return ground
}

func writeThumb(path string, store *dotstore.Store, p *Picked, layer *geo.Layer, e *Extent, colors []color.NRGBA, look func(int) render.Dot, tileSize int) error {
	img := Thumbnail(store, p, layer, e, colors, look, tileSize)
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("output: %w", err)
	}
	if err := png.Encode(f, img); err != nil {
		f.Close()
		return fmt.Errorf("output: %s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("output: %w", err)
	}
	return nil
}
