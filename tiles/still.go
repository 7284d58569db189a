package tiles

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"image"
	"image/color"
	"image/draw"
	"image/png"
	"math"
	"strconv"
	"strings"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/sink"
)

// StillFile is the still a render writes beside the viewer: the map's
// whole extent at 1200 × 675 with the legend, the no-script fallback of
// embed.html.
const StillFile = "still.png"

// StillSizes are the sizes `stipple still` offers by name: a 16:9 card for
// link previews and CMS fallbacks, and a 4:5 portrait and a square for
// social posts (common practice).
var StillSizes = map[string][2]int{
	"wide":     {1200, 675},
	"portrait": {1080, 1350},
	"square":   {1080, 1080},
}

// StillGround is the map's ground colour in a still: the viewer's
// (viewer.css, --paper), so a still looks like the viewer.
var StillGround = color.NRGBA{0xf2, 0xef, 0xe7, 0xff}

// View is the centre and zoom of a still.
type View struct {
	Zoom     int
	Lat, Lon float64
}

// String gives the view as ParseView reads it.
func (v View) String() string {
	return fmt.Sprintf("%d/%s/%s", v.Zoom, strconv.FormatFloat(v.Lat, 'f', -1, 64), strconv.FormatFloat(v.Lon, 'f', -1, 64))
}

// ParseView reads "z/lat/lon": a whole zoom, then the centre's latitude
// and longitude in degrees.
func ParseView(s string) (View, error) {
	parts := strings.Split(s, "/")
	bad := fmt.Errorf("view %q: want zoom/latitude/longitude, e.g. 11/-34.22/-128.41", s)
	if len(parts) != 3 {
		return View{}, bad
	}
	z, err := strconv.Atoi(strings.TrimSpace(parts[0]))
	if err != nil || z < 0 || z > 30 {
		return View{}, fmt.Errorf("view %q: zoom %q: want a whole number 0–30", s, parts[0])
	}
	lat, err1 := strconv.ParseFloat(strings.TrimSpace(parts[1]), 64)
	lon, err2 := strconv.ParseFloat(strings.TrimSpace(parts[2]), 64)
	if err1 != nil || err2 != nil || math.IsNaN(lat) || math.IsNaN(lon) || math.Abs(lat) > MaxLat || math.Abs(lon) > 180 {
		return View{}, bad
	}
	return View{Zoom: z, Lat: lat, Lon: lon}, nil
}

// MaxLat is Web Mercator's latitude limit, atan(sinh π) in degrees.
var MaxLat = math.Atan(math.Sinh(math.Pi)) * 180 / math.Pi

// ParseStillSize reads "WIDTHxHEIGHT" (pixels, 64–4096 each) or a name of
// StillSizes.
func ParseStillSize(s string) (w, h int, err error) {
	if p, ok := StillSizes[strings.ToLower(strings.TrimSpace(s))]; ok {
		return p[0], p[1], nil
	}
	a, b, ok := strings.Cut(strings.ToLower(strings.TrimSpace(s)), "x")
	w, err1 := strconv.Atoi(a)
	h, err2 := strconv.Atoi(b)
	if !ok || err1 != nil || err2 != nil || w < 64 || h < 64 || w > 4096 || h > 4096 {
		return 0, 0, fmt.Errorf("size %q: want WIDTHxHEIGHT in pixels (64–4096), e.g. 1200x675, or wide, portrait, square", s)
	}
	return w, h, nil
}

// LegendScale is the scale a still of w × h pixels draws a legend of
// legendH pixels (at scale 1, 300 wide) at: 1 on a 675-pixel-high card,
// larger on taller stills, smaller when the legend would not fit in the
// height with its margins or would take more than 40% of the width.
func LegendScale(w, h int, legendH float64) float64 {
	s := float64(min(w, h)) / 675
	m := 16 * s
	s = math.Min(s, (float64(h)-2*m)/legendH)
	s = math.Min(s, 0.4*float64(w)/300)
	return math.Round(s*100) / 100
}

// StillOptions describe a still.
type StillOptions struct {
	View          View
	Width, Height int
	// Legend is drawn in the bottom-left corner (render.DrawLegend, 300
	// pixels wide at scale LegendScale).
	Legend render.Legend
}

// Still composes a still of the map md from the tiles in src: the 1×
// tiles of the view's zoom, one tile pixel to one still pixel, centred on
// the view, on the viewer's ground colour, with the legend (its title,
// swatches, dot note, caution and credit) in the bottom-left corner. It
// returns the image and the legend's box. The same tiles and options give
// the same pixels.
func Still(ctx context.Context, src sink.Sink, md *Metadata, opt StillOptions) (*image.NRGBA, image.Rectangle, error) {
	v := opt.View
	if v.Zoom < md.MinZoom || v.Zoom > md.MaxZoom {
		return nil, image.Rectangle{}, fmt.Errorf("still: zoom %d: the map has tiles at zooms %d–%d", v.Zoom, md.MinZoom, md.MaxZoom)
	}
	W, H := opt.Width, opt.Height
	img := image.NewNRGBA(image.Rect(0, 0, W, H))
	draw.Draw(img, img.Bounds(), image.NewUniform(StillGround), image.Point{}, draw.Src)
	ts := md.TileSize
	if ts <= 0 {
		ts = 256
	}
	n := 1 << v.Zoom
	world := float64(ts * n)
	// Web Mercator (EPSG:3857) in pixels of this zoom, y from the north.
	cx := (v.Lon + 180) / 360 * world
	phi := v.Lat * math.Pi / 180
	cy := (1 - math.Log(math.Tan(phi)+1/math.Cos(phi))/math.Pi) / 2 * world
	left, top := int(math.Floor(cx-float64(W)/2+0.5)), int(math.Floor(cy-float64(H)/2+0.5))
	floorDiv := func(a, b int) int {
		q := a / b
		if a%b != 0 && a < 0 {
			q--
		}
		return q
	}
	for ty := floorDiv(top, ts); ty <= floorDiv(top+H-1, ts); ty++ {
		if ty < 0 || ty >= n {
			continue
		}
		for tx := floorDiv(left, ts); tx <= floorDiv(left+W-1, ts); tx++ {
			x := ((tx % n) + n) % n
			p := strings.NewReplacer("{z}", strconv.Itoa(v.Zoom), "{x}", strconv.Itoa(x), "{y}", strconv.Itoa(ty)).Replace(md.Tiles)
			b, err := src.Get(ctx, p)
			if errors.Is(err, sink.ErrNotExist) {
				continue // no ink there
			}
			if err != nil {
				return nil, image.Rectangle{}, err
			}
			t, err := png.Decode(bytes.NewReader(b))
			if err != nil {
				return nil, image.Rectangle{}, fmt.Errorf("still: tile %s: %w", p, err)
			}
			at := image.Pt(tx*ts-left, ty*ts-top)
			draw.Draw(img, t.Bounds().Add(at), t, t.Bounds().Min, draw.Over)
		}
	}
	lh := render.DrawLegend(opt.Legend, 300, 1).Bounds().Dy()
	s := LegendScale(W, H, float64(lh))
	leg := render.DrawLegend(opt.Legend, 300, s)
	m := int(math.Round(16 * s))
	lb := leg.Bounds()
	box := image.Rect(m, H-m-lb.Dy(), m+lb.Dx(), H-m)
	draw.Draw(img, box, leg, lb.Min, draw.Src)
	// A one-pixel line around the card, the swatch ring's colour.
	edge := box.Inset(-1)
	for x := edge.Min.X; x < edge.Max.X; x++ {
		blend(img, x, edge.Min.Y, render.LegendRing)
		blend(img, x, edge.Max.Y-1, render.LegendRing)
	}
	for y := edge.Min.Y + 1; y < edge.Max.Y-1; y++ {
		blend(img, edge.Min.X, y, render.LegendRing)
		blend(img, edge.Max.X-1, y, render.LegendRing)
	}
	return img, box, nil
}

func blend(img *image.NRGBA, x, y int, c color.NRGBA) {
	if !(image.Point{x, y}.In(img.Bounds())) {
		return
	}
	img.SetNRGBA(x, y, render.Over(c, float64(c.A)/255, img.NRGBAAt(x, y)))
}

// FitView is the view that shows md's whole extent in a w × h still: the
// extent's centre at the deepest zoom that holds it.
func FitView(md *Metadata, w, h int) View {
	b := md.Bounds
	lon := (b[0] + b[2]) / 2
	if b[0] > b[2] { // across 180°
		lon = (b[0] + b[2] + 360) / 2
		if lon > 180 {
			lon -= 360
		}
	}
	// Centre in Mercator y, not in degrees.
	y := func(lat float64) float64 {
		p := math.Max(-MaxLat, math.Min(MaxLat, lat)) * math.Pi / 180
		return math.Log(math.Tan(p) + 1/math.Cos(p))
	}
	lat := math.Atan(math.Sinh((y(b[1])+y(b[3]))/2)) * 180 / math.Pi
	ts := float64(max(md.TileSize, 1))
	width := b[2] - b[0]
	if width < 0 {
		width += 360
	}
	z := md.MinZoom
	for zz := md.MaxZoom; zz >= md.MinZoom; zz-- {
		world := ts * math.Exp2(float64(zz))
		if width/360*world <= float64(w) && (y(b[3])-y(b[1]))/(2*math.Pi)*world <= float64(h) {
			z = zz
			break
		}
	}
	return View{Zoom: z, Lat: lat, Lon: lon}
}

// StillPNG encodes a still as PNG (image/png, default compression: the
// same pixels give the same bytes).
func StillPNG(img image.Image) ([]byte, error) {
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		return nil, fmt.Errorf("still: %w", err)
	}
	return buf.Bytes(), nil
}
