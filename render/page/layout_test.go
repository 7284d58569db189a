package page

import (
	"math"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/proj"
)

// Every mark stays inside the margins, the frame holds the whole extent,
// the furniture does not overlap the frame, and the frame sits on whole
// pixels, for portrait and landscape pages of several sizes.
func TestLayoutFits(t *testing.T) {
	tabloid := Tabloid
	for _, size := range []Size{A5, A4, A3, A2, Letter, tabloid, A4.Landscape(), Letter.Landscape(), {300, 200}, {200, 200}, Tabloid.Landscape()} {
		spec := testSpec(t, size, 150)
		spec.Footnotes = []string{"A footnote long enough to wrap onto a second line when the column is narrow, as footnotes often are."}
		p := testPage(t, spec, testDots(2000, 10))
		M := spec.Margin
		const eps = 0.01
		for _, it := range p.items {
			var x0, y0, x1, y1 float64
			switch it.kind {
			case kText:
				x0, x1 = it.x, it.x+p.tf.textWidth(it.text, it.size, it.bold)
				y0, y1 = it.y-p.tf.ascentMM(it.size), it.y
			case kRect, kDots:
				x0, y0, x1, y1 = it.x, it.y, it.x+it.w, it.y+it.h
			case kCircle:
				x0, y0, x1, y1 = it.x-it.r, it.y-it.r, it.x+it.r, it.y+it.r
			default:
				continue
			}
			if x0 < M-eps || y0 < M-eps || x1 > size.W-M+eps || y1 > size.H-M+eps {
				t.Errorf("%s: %v item %q at [%.1f, %.1f]–[%.1f, %.1f] mm leaves the margins", size, it.kind, it.text, x0, y0, x1, y1)
			}
			f := p.Frame()
			if it.kind == kText && x1 > f.X && x0 < f.X+f.W && y1 > f.Y && y0 < f.Y+f.H {
				t.Errorf("%s: text %q overlaps the map frame", size, it.text)
			}
		}
		f := p.Frame()
		eachEdgePoint(testExtent.Min[0], testExtent.Min[1], testExtent.Max[0], testExtent.Max[1], 32, func(lon, lat float64) {
			if x, y := p.Project(lon, lat); !p.inFrame(x, y) {
				t.Errorf("%s: extent point %v, %v at %.2f, %.2f mm is outside the frame %+v", size, lon, lat, x, y, f)
			}
		})
		for _, v := range []float64{f.X, f.Y, f.W, f.H} {
			if px := v * 150 / 25.4; math.Abs(px-math.Round(px)) > 1e-6 {
				t.Errorf("%s: frame %+v mm is not on whole pixels at 150 dpi", size, f)
			}
		}
	}
}

// Frame scale: an equal-area map fills the frame's long side; the
// projected extent's width or height, times Scale, is the frame's minus
// the 2% padding on each side.
func TestScaleFillsFrame(t *testing.T) {
	p := testPage(t, testSpec(t, A4, 300), nil)
	minX, minY, maxX, maxY := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	eachEdgePoint(testExtent.Min[0], testExtent.Min[1], testExtent.Max[0], testExtent.Max[1], 128, func(lon, lat float64) {
		x, y := p.Project(lon, lat)
		minX, minY, maxX, maxY = math.Min(minX, x), math.Min(minY, y), math.Max(maxX, x), math.Max(maxY, y)
	})
	f := p.Frame()
	fill := math.Max((maxX-minX)/f.W, (maxY-minY)/f.H)
	if math.Abs(fill-1/1.04) > 0.002 {
		t.Errorf("the extent fills %.4f of the frame's tighter side, want 1/1.04 = %.4f", fill, 1/1.04)
	}
}

// The scale bar is true at the map centre: its page length over the
// ground distance it stands for equals the page distance between two
// points on the centre's parallel over their ground distance along the
// parallel, N·cos φ·Δλ with N = a/√(1 − e² sin²φ), the radius of
// curvature in the prime vertical (Snyder 1987, eq. 4-20 and §4: the
// scale along a parallel is the ratio of these lengths).
func TestScaleBar(t *testing.T) {
	for _, name := range []string{"auto", "laea", "mercator", "platecarree"} {
		spec := testSpec(t, A4, 300)
		pr, err := Projection(name, testExtent)
		if err != nil {
			t.Fatal(err)
		}
		spec.Projection = pr
		l, err := NewLayout(spec)
		if err != nil {
			t.Fatal(err)
		}
		const maxLen = 55
		bar := l.scaleBar(maxLen)
		if !bar.ok {
			t.Fatalf("%s: no scale bar: %s", name, bar.caption)
		}
		lon, lat := pr.Inverse(l.cx, l.cy)
		const dl = 0.01 // degrees either side
		x0, y0 := l.Project(lon-dl, lat)
		x1, y1 := l.Project(lon+dl, lat)
		e2 := proj.WGS84.E2()
		s := math.Sin(lat * math.Pi / 180)
		ground := proj.WGS84.A / math.Sqrt(1-e2*s*s) * math.Cos(lat*math.Pi/180) * (2 * dl * math.Pi / 180)
		want := math.Hypot(x1-x0, y1-y0) / ground // page mm per ground metre
		got := bar.length / bar.ground
		if math.Abs(got/want-1) > 1e-5 {
			t.Errorf("%s: bar %.4g mm for %v m = %.6g mm/m; along the parallel %.6g mm/m", name, bar.length, bar.ground, got, want)
		}
		if math.Abs(bar.denominator*want/1000-1) > 1e-5 {
			t.Errorf("%s: scale 1 : %.0f, want 1 : %.0f", name, bar.denominator, 1000/want)
		}
		// A round length: 1, 2 or 5 × 10^n metres, as long as fits.
		m := bar.ground / math.Pow(10, math.Floor(math.Log10(bar.ground)))
		if math.Abs(m-1) > 1e-9 && math.Abs(m-2) > 1e-9 && math.Abs(m-5) > 1e-9 {
			t.Errorf("%s: bar of %v m is not 1, 2 or 5 × 10^n", name, bar.ground)
		}
		if bar.length > maxLen || bar.length < maxLen/2.5 {
			t.Errorf("%s: bar %.1f mm; want between %.0f and %d mm", name, bar.length, maxLen/2.5, maxLen)
		}
		if !strings.Contains(bar.caption, "true at the map centre") || !strings.HasSuffix(bar.ticks[2], " km") {
			t.Errorf("%s: caption %q, ticks %q", name, bar.caption, bar.ticks)
		}
	}
}

func TestProjection(t *testing.T) {
	for _, c := range []struct {
		name   string
		extent orb.Bound
		want   string
	}{
		// One-sixth rule (common practice): 45 + 1/6, 46 − 1/6.
		{"auto", testExtent, "Albers equal-area conic, standard parallels 45.17°N and 45.83°N, WGS 84"},
		{"albers", testExtent, "Albers equal-area conic, standard parallels 45.17°N and 45.83°N, WGS 84"},
		{"laea", testExtent, "Lambert azimuthal equal-area, centred at 45.5°N 10.6°E, WGS 84"},
		{"mercator", testExtent, "Web Mercator (EPSG:3857), not equal-area"},
		{"platecarree", testExtent, "Plate carrée (equirectangular), not equal-area"},
		{"auto", orb.Bound{Min: orb.Point{-180, 60}, Max: orb.Point{180, 90}}, "Lambert azimuthal equal-area, centred at 90°N"},
		{"auto", orb.Bound{Min: orb.Point{-128.6, -34.4}, Max: orb.Point{-128.2, -34.1}}, "standard parallels 34.35°S and 34.15°S"},
	} {
		p, err := Projection(c.name, c.extent)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if got := Describe(p); !strings.HasPrefix(got, c.want) && !strings.Contains(got, c.want) {
			t.Errorf("Projection(%q, %v) = %q, want %q", c.name, c.extent, got, c.want)
		}
	}
	if _, err := Projection("robinson", testExtent); err == nil || !strings.Contains(err.Error(), "unknown projection") {
		t.Errorf("unknown projection: error %v", err)
	}
	if _, err := Projection("albers", orb.Bound{Min: orb.Point{0, -10}, Max: orb.Point{10, 10}}); err == nil {
		t.Error("albers symmetric about the equator: no error")
	}
}

func TestShows(t *testing.T) {
	l, err := NewLayout(testSpec(t, A4, 150))
	if err != nil {
		t.Fatal(err)
	}
	g := l.FrameBound()
	if !(g.Min[0] <= testExtent.Min[0] && g.Max[0] >= testExtent.Max[0] && g.Min[1] <= testExtent.Min[1] && g.Max[1] >= testExtent.Max[1]) {
		t.Errorf("frame bound %v does not hold the extent %v", g, testExtent)
	}
	for _, c := range []struct {
		b    orb.Bound
		want bool
	}{
		{orb.Bound{Min: orb.Point{10.4, 45.4}, Max: orb.Point{10.5, 45.5}}, true},
		{orb.Bound{Min: orb.Point{9, 44}, Max: orb.Point{12, 47}}, true}, // around it
		{orb.Bound{Min: orb.Point{20, 45}, Max: orb.Point{21, 46}}, false},
		{orb.Bound{Min: orb.Point{10, 50}, Max: orb.Point{11, 51}}, false},
		{orb.Bound{Min: orb.Point{370, 45}, Max: orb.Point{370.5, 45.5}}, true}, // same place, unwrapped
	} {
		if got := l.Shows(c.b); got != c.want {
			t.Errorf("Shows(%v) = %v, want %v (frame bound %v)", c.b, got, c.want, g)
		}
	}
}

func TestSpecErrors(t *testing.T) {
	for _, c := range []struct {
		name   string
		change func(*Spec)
		want   string
	}{
		{"dpi", func(s *Spec) { s.DPI = 10 }, "10 dpi; want 36 to 1200"},
		{"pixels", func(s *Spec) { s.Size, s.DPI = A2, 1200 }, "more than the 150 M pixel limit"},
		{"margin", func(s *Spec) { s.Margin = 80 }, "margin 80 mm"},
		{"negative margin", func(s *Spec) { s.Margin = -1 }, "margin -1 mm"},
		{"dot", func(s *Spec) { s.DotMM = 0 }, "dot diameter 0 mm"},
		{"big dot", func(s *Spec) { s.DotMM = 11 }, "dot diameter 11 mm"},
		{"opacity", func(s *Spec) { s.Opacity = 1.5 }, "dot opacity 1.5"},
		{"entries", func(s *Spec) { s.Entries = nil }, "0 legend entries"},
		{"projection", func(s *Spec) { s.Projection = nil }, "no projection"},
		{"size", func(s *Spec) { s.Size = Size{20, 20} }, "each side must be between 50 and 1500 mm"},
		{"room", func(s *Spec) { s.Size, s.Margin = Size{300, 55}, 5 }, "too small for the legend"},
		{"frame", func(s *Spec) { s.Size, s.Margin = Size{55, 80}, 12 }, "leaves a map frame of only"},
	} {
		spec := testSpec(t, A4, 150)
		c.change(&spec)
		_, err := NewLayout(spec)
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "page: ") {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.want)
		}
	}
}
