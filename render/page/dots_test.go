package page

import (
	"bytes"
	"image"
	"image/color"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/render"
)

// referenceDotLayer is the plain way to draw the frame: one canvas the
// size of the whole frame, every dot added, composited, and laid over
// white pixel by pixel with out = (s·a + 255·(255 − a)) / 255, rounded.
func referenceDotLayer(p *Page) *image.RGBA {
	w, h := p.framePx.Dx(), p.framePx.Dy()
	cv := render.NewCanvas(w, h, len(p.spec.Entries))
	for i := range p.xs {
		cv.Add(int(p.cats[i]), float64(p.xs[i]), float64(p.ys[i]), p.look())
	}
	nrgba := image.NewNRGBA(image.Rect(0, 0, w, h))
	cv.Composite(p.colors(), nrgba)
	out := image.NewRGBA(image.Rect(0, 0, w, h))
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			c := nrgba.NRGBAAt(x, y)
			a := uint32(c.A)
			mix := func(s uint8) uint8 { return uint8((uint32(s)*a + 255*(255-a) + 127) / 255) }
			out.SetRGBA(x, y, color.RGBA{mix(c.R), mix(c.G), mix(c.B), 255})
		}
	}
	return out
}

// Banded drawing gives the same bytes as the plain whole-frame drawing,
// whatever the band height: a dot that straddles bands lands in each.
func TestDotLayerMatchesReference(t *testing.T) {
	for _, dotMM := range []float64{0.35, 0.05, 2} { // a 4-px disc, a sub-pixel splat, a 24-px disc
		spec := testSpec(t, A5, 300)
		spec.DotMM = dotMM
		p := testPage(t, spec, testDots(20000, 5))
		want := referenceDotLayer(p)
		for _, bh := range []int{16, 37, 100, 1 << 30} {
			p.bucket(bh)
			got := p.DotLayer()
			if !bytes.Equal(got.Pix, want.Pix) {
				n := 0
				for i := range got.Pix {
					if got.Pix[i] != want.Pix[i] {
						n++
					}
				}
				t.Errorf("dot %v mm, band %d px (%d bands): %d of %d bytes differ from the reference", dotMM, p.bandH, len(p.bandStart)-1, n, len(got.Pix))
			}
		}
	}
}

// Same dots in another order: the same PNG bytes and, with raster dots,
// the same PDF bytes.
func TestOrderFree(t *testing.T) {
	dots := testDots(30000, 6)
	spec := testSpec(t, A5, 200)
	a := testPage(t, spec, dots)
	shuffled := slices.Clone(dots)
	r := rand.New(rand.NewPCG(6, 6))
	r.Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
	b := testPage(t, spec, shuffled)
	var pa, pb bytes.Buffer
	if err := a.WritePNG(&pa); err != nil {
		t.Fatal(err)
	}
	if err := b.WritePNG(&pb); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(pa.Bytes(), pb.Bytes()) {
		t.Error("PNG differs when the dots come in another order")
	}
	pa.Reset()
	pb.Reset()
	if err := a.WritePDF(&pa, DotsRaster); err != nil {
		t.Fatal(err)
	}
	if err := b.WritePDF(&pb, DotsRaster); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(pa.Bytes(), pb.Bytes()) {
		t.Error("raster PDF differs when the dots come in another order")
	}
}

// The same page written twice gives the same bytes (fixed PDF dates,
// sorted catalogue).
func TestDeterministic(t *testing.T) {
	spec := testSpec(t, A5, 150)
	spec.Outlines = []orb.MultiPolygon{{{{{10.2, 45.2}, {10.8, 45.2}, {10.5, 45.7}, {10.2, 45.2}}}}}
	dots := testDots(3000, 7)
	for _, mode := range []DotMode{DotsRaster, DotsVector} {
		var first []byte
		for i := 0; i < 2; i++ {
			var b bytes.Buffer
			if err := testPage(t, spec, dots).WritePDF(&b, mode); err != nil {
				t.Fatal(err)
			}
			if i == 1 && !bytes.Equal(first, b.Bytes()) {
				t.Errorf("%v PDF differs between two writes", mode)
			}
			first = b.Bytes()
			if !bytes.Contains(first, []byte("D:20000101000000")) {
				t.Errorf("%v PDF lacks the fixed creation date", mode)
			}
		}
	}
	var a, b bytes.Buffer
	testPage(t, spec, dots).WritePNG(&a)
	testPage(t, spec, dots).WritePNG(&b)
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Error("PNG differs between two writes")
	}
}

func TestPlaceCounts(t *testing.T) {
	spec := testSpec(t, A5, 150)
	dots := [][3]float64{
		{10.5, 45.5, 0}, {10.6, 45.5, 0}, {10.5, 45.6, 2}, // inside
		{30, 45.5, 1}, {10.5, 10, 1}, // far outside the frame
		{10.5, 95, 1}, // not a latitude: the projection gives NaN
	}
	p := testPage(t, spec, dots)
	if got := p.Counts(); !slices.Equal(got, []int{2, 0, 1}) {
		t.Errorf("counts %v, want [2 0 1]", got)
	}
	if p.Len() != 3 {
		t.Errorf("Len %d, want 3", p.Len())
	}
	for i := 0; i < p.Len(); i++ {
		x, y, _ := p.Dot(i)
		f := p.Frame()
		if x < f.X || x >= f.X+f.W || y < f.Y || y >= f.Y+f.H {
			t.Errorf("dot %d at %.2f, %.2f mm is outside the frame %+v", i, x, y, f)
		}
	}
	l, err := NewLayout(spec)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := l.Place(source([][3]float64{{10.5, 45.5, 3}})); err == nil || !strings.Contains(err.Error(), "category 3; the legend has 3") {
		t.Errorf("category beyond the legend: error %v", err)
	}
}

func TestDotMode(t *testing.T) {
	for _, c := range []struct {
		in   string
		n    int
		want DotMode
	}{{"auto", VectorLimit, DotsVector}, {"", VectorLimit + 1, DotsRaster}, {"raster", 1, DotsRaster}, {"vector", 1 << 20, DotsVector}} {
		m, err := ParseDotMode(c.in)
		if err != nil {
			t.Fatal(err)
		}
		if got := m.Resolve(c.n); got != c.want {
			t.Errorf("%q with %d dots: %v, want %v", c.in, c.n, got, c.want)
		}
	}
	if _, err := ParseDotMode("svg"); err == nil {
		t.Error("ParseDotMode(svg) gave no error")
	}
}

func BenchmarkDotLayer(b *testing.B) {
	spec := testSpec(b, A4, 300)
	p := testPage(b, spec, testDots(100000, 8))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		p.DotLayer()
	}
}

func BenchmarkReferenceDotLayer(b *testing.B) {
	spec := testSpec(b, A4, 300)
	p := testPage(b, spec, testDots(100000, 8))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		referenceDotLayer(p)
	}
}

// BenchmarkPDF measures writing an A4 page at 300 dpi with dots as a
// raster and as vectors, and reports the file size.
func BenchmarkPDF(b *testing.B) {
	for _, c := range []struct {
		name string
		n    int
		mode DotMode
	}{{"raster-20k", 20000, DotsRaster}, {"vector-20k", 20000, DotsVector}, {"raster-100k", 100000, DotsRaster}} {
		b.Run(c.name, func(b *testing.B) {
			p := testPage(b, testSpec(b, A4, 300), makeDots(c.n, 9, false))
			b.ReportAllocs()
			var size int
			for i := 0; i < b.N; i++ {
				var buf bytes.Buffer
				if err := p.WritePDF(&buf, c.mode); err != nil {
					b.Fatal(err)
				}
				size = buf.Len()
			}
			b.ReportMetric(float64(size), "bytes")
		})
	}
}
