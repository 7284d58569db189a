package page

import (
	"errors"
	"fmt"
	"image"
	"image/color"
	"math"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/proj"
	"github.com/stipple-maps/stipple/render"
)

// Entry is one legend row: a group, its colour and the people it has in
// the areas the page prints.
type Entry struct {
	Label  string
	Color  color.NRGBA
	People float64
}

// Spec is everything a page shows.
type Spec struct {
	// Size is the page as printed (orientation already applied), mm.
	Size Size
	// DPI is the raster resolution, dots per inch (300 is print quality).
	DPI float64
	// Margin is the blank border on every side, mm.
	Margin float64

	Title, Subtitle string
	// Entries are the legend rows, one per dot category, in order.
	Entries []Entry
	// Note is the "1 dot = N people" line.
	Note string
	// Caution and Credit are printed in the fine print; Footnotes follow
	// the caution, one paragraph each.
	Caution, Credit string
	Footnotes       []string

	// Projection maps longitude/latitude to the page's plane.
	Projection proj.Projection
	// Extent is the longitude/latitude box the map frame must show.
	Extent orb.Bound
	// DotMM is the dot diameter on paper, mm; Opacity its ink share (0–1].
	DotMM, Opacity float64
	// Outlines, when not nil, are drawn as thin lines over the dots
	// (longitude/latitude polygons, e.g. the areas' boundaries).
	Outlines []orb.MultiPolygon
	// References are reference layers (place names, roads, water) drawn
	// under or over the dots; labels are vector text in the PDF.
	References []Reference
	// Font sets the text (nil: render.DefaultFont); the PDF embeds it.
	Font *render.Font
	// Words are the page's own words (column heads, total, scale
	// caption); empty fields are English.
	Words Words
}

// Limits on a Spec, so that a mistyped option fails with a message.
const (
	MinDPI = 36
	MaxDPI = 1200
	// MaxPixels caps the raster page (width × height); an A3 page at
	// 600 dpi is 70 M pixels, an A0 page at 300 dpi 140 M.
	MaxPixels = 150_000_000
	// maxDotMM is the largest dot diameter, mm.
	maxDotMM = 10
)

// Rect is a rectangle on the page in millimetres: top-left X, Y and size.
type Rect struct{ X, Y, W, H float64 }

// Layout is a page whose furniture and map frame are placed; Place adds
// the dots.
type Layout struct {
	spec  Spec
	fs    float64 // font scale for the page size
	ppm   float64 // pixels per millimetre
	frame Rect
	// framePx is the frame in whole pixels.
	framePx image.Rectangle
	// scale is page millimetres per projected metre; cx, cy the projected
	// point at the centre of the frame.
	scale, cx, cy float64
	// geo is the longitude/latitude box the frame shows; lonC the
	// longitude its west and east are unwrapped around.
	geo  orb.Bound
	lonC float64

	head     []item // title and subtitle
	portrait bool   // furniture below the map (else beside it)
	panel    Rect   // where the furniture goes
	colGap   float64

	tf    *typeface // Spec.Font
	words Words     // Spec.Words, English where empty
}

var (
	ink   = color.NRGBA{0x1f, 0x23, 0x28, 0xff}
	muted = color.NRGBA{0x57, 0x60, 0x6a, 0xff}
	white = color.NRGBA{0xff, 0xff, 0xff, 0xff}
	line  = color.NRGBA{0x3d, 0x44, 0x4d, 0xff}
)

// NewLayout checks spec and places the title, the map frame and the room
// for the legend and fine print.
func NewLayout(spec Spec) (*Layout, error) {
	if err := spec.check(); err != nil {
		return nil, err
	}
	s := spec.Size
	l := &Layout{spec: spec, ppm: spec.DPI / mmPerInch, tf: typefaceOf(spec.Font), words: spec.Words.or()}
	// Text grows and shrinks with the page, gently: a poster gets larger
	// type, a postcard smaller (common practice).
	l.fs = math.Max(0.7, math.Min(1.6, math.Min(s.W, s.H)/210))
	M := spec.Margin
	y := M
	l.head, y = l.textBlock(nil, l.tf.wrap(spec.Title, 17*l.fs, true, s.W-2*M), M, y, 17*l.fs, true, ink)
	if spec.Subtitle != "" {
		y += 0.5 * l.fs
		l.head, y = l.textBlock(l.head, l.tf.wrap(spec.Subtitle, 10*l.fs, false, s.W-2*M), M, y, 10*l.fs, false, muted)
	}
	y += 3 * l.fs
	gap := 4 * l.fs
	l.colGap = 8 * l.fs
	var avail Rect
	var panelW, panelH float64
	l.portrait = s.H >= s.W
	if l.portrait {
		panelW = s.W - 2*M
		panelH = l.panelHeight(panelW)
		avail = Rect{M, y, s.W - 2*M, s.H - M - panelH - gap - y}
	} else {
		panelW = math.Max(60*l.fs, math.Min(95*l.fs, 0.3*(s.W-2*M)))
		panelH = l.panelHeight(panelW)
		if panelH > s.H-M-y {
			return nil, fmt.Errorf("page: a %s page is too small for the legend and notes (they need %.0f mm of height, %.0f mm are left)", s, panelH, s.H-M-y)
		}
		avail = Rect{M, y, s.W - 2*M - panelW - l.colGap, s.H - M - y}
	}
	if avail.W < 30 || avail.H < 30 {
		return nil, fmt.Errorf("page: a %s page with %.4g mm margins leaves a map frame of only %.0f × %.0f mm; use a larger page or smaller margins", s, M, math.Max(0, avail.W), math.Max(0, avail.H))
	}
	if err := l.fit(avail); err != nil {
		return nil, err
	}
	if l.portrait {
		l.panel = Rect{M, l.frame.Y + l.frame.H + gap, panelW, panelH}
	} else {
		// Centre frame and panel together across the page.
		group := l.frame.W + l.colGap + panelW
		shift := M + (s.W-2*M-group)/2 - l.frame.X
		l.shift(shift)
		l.panel = Rect{l.frame.X + l.frame.W + l.colGap, l.frame.Y, panelW, panelH}
	}
	l.geo, l.lonC = l.frameBound()
	return l, nil
}

func (s *Spec) check() error {
	if err := s.Size.check(); err != nil {
		return fmt.Errorf("page: size: %v", err)
	}
	if !(s.DPI >= MinDPI && s.DPI <= MaxDPI) {
		return fmt.Errorf("page: %v dpi; want %d to %d", s.DPI, MinDPI, MaxDPI)
	}
	if w, h := s.Size.Pixels(s.DPI); float64(w)*float64(h) > MaxPixels {
		return fmt.Errorf("page: a %s page at %v dpi is %d × %d pixels, more than the %d M pixel limit; lower the dpi", s.Size, s.DPI, w, h, MaxPixels/1_000_000)
	}
	if !(s.Margin >= 0 && s.Margin < math.Min(s.Size.W, s.Size.H)/3) {
		return fmt.Errorf("page: margin %.4g mm; want at least 0 and less than a third of the shorter side", s.Margin)
	}
	if !(s.DotMM > 0 && s.DotMM <= maxDotMM) {
		return fmt.Errorf("page: dot diameter %.4g mm; want above 0 and at most %d mm", s.DotMM, maxDotMM)
	}
	if !(s.Opacity > 0 && s.Opacity <= 1) {
		return fmt.Errorf("page: dot opacity %v; want above 0 and at most 1", s.Opacity)
	}
	if len(s.Entries) == 0 || len(s.Entries) > 63 {
		return fmt.Errorf("page: %d legend entries; want 1 to 63", len(s.Entries))
	}
	if s.Projection == nil {
		return errors.New("page: no projection")
	}
	return nil
}

// fit places the map frame inside avail: the projected extent, padded by
// 2% on each side, scaled to fit, centred across and at the top of avail,
// and snapped to whole pixels.
func (l *Layout) fit(avail Rect) error {
	p := l.spec.Projection
	e := l.spec.Extent
	minX, minY, maxX, maxY := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	west, east := e.Min[0], e.Max[0]
	if east < west {
		east += 360 // crosses the antimeridian
	}
	eachEdgePoint(west, e.Min[1], east, e.Max[1], 128, func(lon, lat float64) {
		x, y := p.Forward(lon, lat)
		if math.IsNaN(x) || math.IsNaN(y) {
			return
		}
		minX, minY = math.Min(minX, x), math.Min(minY, y)
		maxX, maxY = math.Max(maxX, x), math.Max(maxY, y)
	})
	if !(maxX >= minX && maxY >= minY) {
		return fmt.Errorf("page: the extent %v cannot be shown in %s", e, Describe(p))
	}
	// At least 100 m across, so that a single point still makes a map.
	const minSpan = 100
	if d := minSpan - (maxX - minX); d > 0 {
		minX, maxX = minX-d/2, maxX+d/2
	}
	if d := minSpan - (maxY - minY); d > 0 {
		minY, maxY = minY-d/2, maxY+d/2
	}
	pw, ph := (maxX-minX)*1.04, (maxY-minY)*1.04
	l.cx, l.cy = (minX+maxX)/2, (minY+maxY)/2
	sc := math.Min(avail.W/pw, avail.H/ph)
	fw, fh := pw*sc, ph*sc
	x0 := math.Round((avail.X + (avail.W-fw)/2) * l.ppm)
	y0 := math.Round(avail.Y * l.ppm)
	w := math.Min(math.Round(fw*l.ppm), math.Floor((avail.X+avail.W)*l.ppm)-x0)
	h := math.Min(math.Round(fh*l.ppm), math.Floor((avail.Y+avail.H)*l.ppm)-y0)
	l.setFramePx(image.Rect(int(x0), int(y0), int(x0+w), int(y0+h)))
	l.scale = math.Min(l.frame.W/pw, l.frame.H/ph)
	return nil
}

func (l *Layout) setFramePx(r image.Rectangle) {
	l.framePx = r
	l.frame = Rect{float64(r.Min.X) / l.ppm, float64(r.Min.Y) / l.ppm, float64(r.Dx()) / l.ppm, float64(r.Dy()) / l.ppm}
}

// shift moves the frame across by dx mm, rounded to whole pixels.
func (l *Layout) shift(dx float64) {
	d := int(math.Round(dx * l.ppm))
	l.setFramePx(l.framePx.Add(image.Pt(d, 0)))
}

// eachEdgePoint calls fn at n+1 points along each edge of a lon/lat box.
func eachEdgePoint(west, south, east, north float64, n int, fn func(lon, lat float64)) {
	for i := 0; i <= n; i++ {
		t := float64(i) / float64(n)
		lon := west + t*(east-west)
		lat := south + t*(north-south)
		fn(lon, south)
		fn(lon, north)
		fn(west, lat)
		fn(east, lat)
	}
}

// frameBound is the longitude/latitude box the frame shows, found by
// inverse projecting points along the frame's edges (the extremes of
// these projections' graticules over a rectangle lie on its edges or at a
// pole inside it). Longitudes are unwrapped around the centre's, so the
// box's west may be below −180 or its east above 180.
func (l *Layout) frameBound() (orb.Bound, float64) {
	p := l.spec.Projection
	lonC, latC := p.Inverse(l.cx, l.cy)
	if math.IsNaN(lonC) {
		lonC, latC = (l.spec.Extent.Min[0]+l.spec.Extent.Max[0])/2, (l.spec.Extent.Min[1]+l.spec.Extent.Max[1])/2
	}
	b := orb.Bound{Min: orb.Point{lonC, latC}, Max: orb.Point{lonC, latC}}
	f := l.frame
	const n = 256
	for i := 0; i <= n; i++ {
		t := float64(i) / n
		for _, pt := range [][2]float64{{f.X + t*f.W, f.Y}, {f.X + t*f.W, f.Y + f.H}, {f.X, f.Y + t*f.H}, {f.X + f.W, f.Y + t*f.H}} {
			x, y := l.unproject(pt[0], pt[1])
			lon, lat := p.Inverse(x, y)
			if math.IsNaN(lon) || math.IsNaN(lat) {
				continue
			}
			lon = lonC + math.Remainder(lon-lonC, 360)
			b = b.Extend(orb.Point{lon, lat})
		}
	}
	for _, pole := range []float64{90, -90} {
		x, y := p.Forward(lonC, pole)
		if px, py := l.page(x, y); l.inFrame(px, py) {
			b = b.Extend(orb.Point{lonC, pole})
			b.Min[0], b.Max[0] = lonC-180, lonC+180
		}
	}
	return b, lonC
}

// Frame returns the map frame on the page, mm.
func (l *Layout) Frame() Rect { return l.frame }

// FramePixels returns the map frame in pixels at the page's DPI.
func (l *Layout) FramePixels() image.Rectangle { return l.framePx }

// Scale returns the page's scale: millimetres on paper per projected
// metre. For an equal-area projection a projected square metre is a
// square metre of ground, so Scale² is paper mm² per ground m².
func (l *Layout) Scale() float64 { return l.scale }

// Spec returns the spec the layout was made from.
func (l *Layout) Spec() Spec { return l.spec }

// Project returns the page position (mm) of lon, lat. Points the
// projection cannot show give NaN.
func (l *Layout) Project(lon, lat float64) (x, y float64) {
	return l.page(l.spec.Projection.Forward(lon, lat))
}

// page converts projected metres to page mm.
func (l *Layout) page(x, y float64) (float64, float64) {
	f := l.frame
	return f.X + f.W/2 + (x-l.cx)*l.scale, f.Y + f.H/2 - (y-l.cy)*l.scale
}

// unproject converts page mm to projected metres.
func (l *Layout) unproject(px, py float64) (float64, float64) {
	f := l.frame
	return l.cx + (px-f.X-f.W/2)/l.scale, l.cy - (py-f.Y-f.H/2)/l.scale
}

func (l *Layout) inFrame(x, y float64) bool {
	f := l.frame
	return x >= f.X && x < f.X+f.W && y >= f.Y && y < f.Y+f.H
}

// Shows reports whether the frame may show part of the lon/lat box b:
// whether b meets the frame's lon/lat box. It may say yes for a box near
// a corner that the frame just misses; it never says no to one it shows.
func (l *Layout) Shows(b orb.Bound) bool {
	g := l.geo
	if b.Max[1] < g.Min[1] || b.Min[1] > g.Max[1] {
		return false
	}
	for _, k := range []float64{-360, 0, 360} {
		if b.Max[0]+k >= g.Min[0] && b.Min[0]+k <= g.Max[0] {
			return true
		}
	}
	return false
}

// FrameBound returns the longitude/latitude box the map frame shows (see
// Shows); west may be below −180 or east above 180 where the frame
// crosses the antimeridian.
func (l *Layout) FrameBound() orb.Bound { return l.geo }
