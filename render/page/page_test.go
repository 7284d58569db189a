package page

import (
	"bytes"
	"encoding/binary"
	"hash/crc32"
	"image"
	"image/color"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo/reftool"
	"github.com/stipple-maps/stipple/render"
)

// Okabe & Ito (2008) colours.
var testColors = []color.NRGBA{{0x00, 0x72, 0xB2, 0xff}, {0xE6, 0x9F, 0x00, 0xff}, {0x00, 0x9E, 0x73, 0xff}}

var testExtent = orb.Bound{Min: orb.Point{10, 45}, Max: orb.Point{11.2, 46}}

func testSpec(t testing.TB, size Size, dpi float64) Spec {
	t.Helper()
	p, err := Projection("auto", testExtent)
	if err != nil {
		t.Fatal(err)
	}
	return Spec{
		Size: size, DPI: dpi, Margin: 12,
		Title: "Invented test map: three groups", Subtitle: "Made-up dots for a test",
		Entries: []Entry{{"Group one", testColors[0], 100000}, {"Group two", testColors[1], 50000}, {"Group three", testColors[2], 25000}},
		Note:    render.DotNote(10), Caution: render.Caution, Credit: "Invented data; no real place.",
		Projection: p, Extent: testExtent, DotMM: 0.35, Opacity: 0.9,
	}
}

// testDots are n dots uniform in lon/lat over the test extent, with a
// cluster in the north-east so that some overlap.
func testDots(n int, seed uint64) [][3]float64 { return makeDots(n, seed, true) }

func makeDots(n int, seed uint64, cluster bool) [][3]float64 {
	r := rand.New(rand.NewPCG(seed, 7))
	out := make([][3]float64, n)
	for i := range out {
		lon := testExtent.Min[0] + r.Float64()*(testExtent.Max[0]-testExtent.Min[0])
		lat := testExtent.Min[1] + r.Float64()*(testExtent.Max[1]-testExtent.Min[1])
		if cluster && i%4 == 0 {
			lon, lat = 10.9+r.NormFloat64()*0.03, 45.8+r.NormFloat64()*0.02
		}
		out[i] = [3]float64{lon, lat, float64(r.IntN(3))}
	}
	return out
}

func source(d [][3]float64) DotSource {
	return func(yield func(lon, lat float64, cat int) bool) {
		for _, p := range d {
			if !yield(p[0], p[1], int(p[2])) {
				return
			}
		}
	}
}

func testPage(t testing.TB, spec Spec, dots [][3]float64) *Page {
	t.Helper()
	l, err := NewLayout(spec)
	if err != nil {
		t.Fatal(err)
	}
	p, err := l.Place(source(dots))
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// pngChunk is one chunk read back from PNG bytes.
type pngChunk struct {
	typ  string
	data []byte
}

// readChunks parses PNG bytes by the PNG specification (W3C, §5.2
// signature, §5.3 chunk layout: length, type, data, CRC-32 of type and
// data), independently of the writer, and checks every CRC.
func readChunks(t *testing.T, b []byte) []pngChunk {
	t.Helper()
	if !bytes.HasPrefix(b, []byte{0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n'}) {
		t.Fatal("no PNG signature")
	}
	var out []pngChunk
	for i := 8; i < len(b); {
		if i+12 > len(b) {
			t.Fatalf("truncated chunk at %d", i)
		}
		n := int(binary.BigEndian.Uint32(b[i:]))
		typ := string(b[i+4 : i+8])
		data := b[i+8 : i+8+n]
		crc := binary.BigEndian.Uint32(b[i+8+n:])
		if got := crc32.ChecksumIEEE(b[i+4 : i+8+n]); got != crc {
			t.Fatalf("chunk %s: CRC %08x, computed %08x", typ, crc, got)
		}
		out = append(out, pngChunk{typ, data})
		i += 12 + n
	}
	return out
}

// The PNG of an A4 page at 300 dpi is 2480 × 3508 px (CHECKS.md "Print")
// with a pHYs chunk of 11811 pixels per metre on both axes, unit 1 =
// metre (W3C PNG specification §11.3.5.3), placed before the first IDAT
// (§5.6).
func TestPNGSizeAndPHYs(t *testing.T) {
	p := testPage(t, testSpec(t, A4, 300), testDots(20000, 1))
	var buf bytes.Buffer
	if err := p.WritePNG(&buf); err != nil {
		t.Fatal(err)
	}
	chunks := readChunks(t, buf.Bytes())
	if chunks[0].typ != "IHDR" || len(chunks[0].data) != 13 {
		t.Fatalf("first chunk %s", chunks[0].typ)
	}
	w, h := binary.BigEndian.Uint32(chunks[0].data), binary.BigEndian.Uint32(chunks[0].data[4:])
	if w != 2480 || h != 3508 {
		t.Errorf("IHDR %d × %d, want 2480 × 3508", w, h)
	}
	phys, idat := -1, -1
	for i, c := range chunks {
		switch c.typ {
		case "pHYs":
			if phys >= 0 {
				t.Error("two pHYs chunks")
			}
			phys = i
			if len(c.data) != 9 {
				t.Fatalf("pHYs length %d, want 9", len(c.data))
			}
			x, y, unit := binary.BigEndian.Uint32(c.data), binary.BigEndian.Uint32(c.data[4:]), c.data[8]
			if x != 11811 || y != 11811 || unit != 1 {
				t.Errorf("pHYs = %d, %d, unit %d; want 11811, 11811, unit 1 (metre)", x, y, unit)
			}
		case "IDAT":
			if idat < 0 {
				idat = i
			}
		}
	}
	if phys < 0 || idat < 0 || phys > idat {
		t.Errorf("pHYs at chunk %d, first IDAT at %d; pHYs must come before IDAT", phys, idat)
	}
	if last := chunks[len(chunks)-1]; last.typ != "IEND" {
		t.Errorf("last chunk %s", last.typ)
	}
	img, err := png.Decode(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	if img.Bounds().Dx() != 2480 || img.Bounds().Dy() != 3508 {
		t.Errorf("decoded %v", img.Bounds())
	}
}

// pngcheck (Debian pngcheck) reads the file on its own and prints the
// resolution it finds.
func TestPNGCheck(t *testing.T) {
	tool := reftool.Need(t, "pngcheck")
	spec := testSpec(t, A5, 150)
	p := testPage(t, spec, testDots(2000, 2))
	path := filepath.Join(t.TempDir(), "page.png")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := p.WritePNG(f); err != nil {
		t.Fatal(err)
	}
	f.Close()
	out, err := exec.Command(tool, "-v", path).CombinedOutput()
	if err != nil {
		t.Fatalf("pngcheck: %v\n%s", err, out)
	}
	// A5 at 150 dpi: 148 mm → 874 px, 210 mm → 1240 px; 150/0.0254 = 5905.5 → 5906.
	for _, want := range []string{"874 x 1240 image", "5906x5906 pixels/meter (150 dpi)", "No errors detected"} {
		if !strings.Contains(string(out), want) {
			t.Errorf("pngcheck output lacks %q:\n%s", want, out)
		}
	}
}

func writeTemp(t *testing.T, name string, write func(*os.File) error) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), name)
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := write(f); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
	return path
}

// pdfinfo (Debian poppler-utils) reads the page size in points, 1/72 inch
// (ISO 32000-1 §8.3.2): A4 = 595.28 × 841.89 pt, US Letter = 612 × 792,
// A3 landscape = 1190.55 × 841.89.
func TestPDFPageSize(t *testing.T) {
	tool := reftool.Need(t, "pdfinfo")
	for _, c := range []struct {
		size Size
		w, h float64
		name string
	}{
		{A4, 595.28, 841.89, "(A4)"},
		{Letter, 612, 792, "(letter)"},
		{A3.Landscape(), 1190.55, 841.89, "(A3)"},
	} {
		p := testPage(t, testSpec(t, c.size, 72), testDots(500, 3))
		path := writeTemp(t, "page.pdf", func(f *os.File) error { return p.WritePDF(f, DotsAuto) })
		out, err := exec.Command(tool, path).CombinedOutput()
		if err != nil {
			t.Fatalf("pdfinfo: %v\n%s", err, out)
		}
		var line string
		for _, l := range strings.Split(string(out), "\n") {
			if strings.HasPrefix(l, "Page size:") {
				line = l
			}
		}
		f := strings.Fields(line) // Page size: W x H pts (name)
		if len(f) < 6 {
			t.Fatalf("no page size in pdfinfo output:\n%s", out)
		}
		w, _ := strconv.ParseFloat(f[2], 64)
		h, _ := strconv.ParseFloat(f[4], 64)
		if math.Abs(w-c.w) > 0.01 || math.Abs(h-c.h) > 0.01 {
			t.Errorf("%s: pdfinfo page size %v × %v pt, want %v × %v", c.size, w, h, c.w, c.h)
		}
		if !strings.Contains(line, c.name) {
			t.Errorf("%s: pdfinfo does not name the size %s: %q", c.size, c.name, line)
		}
		if !strings.Contains(string(out), "Pages:           1") {
			t.Errorf("not one page:\n%s", out)
		}
	}
}

func decodePNGFile(t *testing.T, path string) *image.RGBA {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatal(err)
	}
	return toRGBA(img)
}

func toRGBA(img image.Image) *image.RGBA {
	if r, ok := img.(*image.RGBA); ok {
		return r
	}
	b := img.Bounds()
	out := image.NewRGBA(image.Rect(0, 0, b.Dx(), b.Dy()))
	for y := 0; y < b.Dy(); y++ {
		for x := 0; x < b.Dx(); x++ {
			out.Set(x, y, img.At(b.Min.X+x, b.Min.Y+y))
		}
	}
	return out
}

// compare returns the mean absolute difference per channel (R, G, B, on
// 0–255) over the whole images, the same over blocks of bs × bs pixels
// (block means compared: blind to sub-pixel blur, not to a mark that is
// missing, extra or moved by a pixel or more), and the ink in rectangle r
// of each: the sum over its pixels of 765 − (R + G + B), how much darker
// than white.
func compare(a, b *image.RGBA, r image.Rectangle, bs int) (mad, blockMAD, inkA, inkB float64) {
	w, h := a.Rect.Dx(), a.Rect.Dy()
	bw, bh := (w+bs-1)/bs, (h+bs-1)/bs
	blockA := make([]float64, bw*bh*3)
	blockB := make([]float64, bw*bh*3)
	var sum float64
	for y := 0; y < h; y++ {
		pa := a.Pix[y*a.Stride : y*a.Stride+4*w]
		pb := b.Pix[y*b.Stride : y*b.Stride+4*w]
		in := y >= r.Min.Y && y < r.Max.Y
		for x := 0; x < w; x++ {
			k := ((y/bs)*bw + x/bs) * 3
			for c := 0; c < 3; c++ {
				va, vb := float64(pa[4*x+c]), float64(pb[4*x+c])
				sum += math.Abs(va - vb)
				blockA[k+c] += va
				blockB[k+c] += vb
			}
			if in && x >= r.Min.X && x < r.Max.X {
				inkA += float64(765 - int(pa[4*x]) - int(pa[4*x+1]) - int(pa[4*x+2]))
				inkB += float64(765 - int(pb[4*x]) - int(pb[4*x+1]) - int(pb[4*x+2]))
			}
		}
	}
	var bsum float64
	for i := range blockA {
		bsum += math.Abs(blockA[i]-blockB[i]) / float64(bs*bs)
	}
	return sum / float64(3*w*h), bsum / float64(len(blockA)), inkA, inkB
}

// renderPDF runs a poppler renderer (pdftoppm or pdftocairo, Debian
// poppler-utils) on the PDF at dpi, cropped to the page's whole pixels:
// poppler rounds the page's pixel size up (A4 at 300 dpi is 2480.3 px
// wide, so 2481).
func renderPDF(t *testing.T, tool, pdfPath string, size Size, dpi float64) *image.RGBA {
	t.Helper()
	w, h := size.Pixels(dpi)
	out := filepath.Join(t.TempDir(), "render")
	msg, err := exec.Command(tool, "-r", strconv.FormatFloat(dpi, 'f', -1, 64), "-x", "0", "-y", "0", "-W", strconv.Itoa(w), "-H", strconv.Itoa(h),
		"-png", "-singlefile", pdfPath, out).CombinedOutput()
	if err != nil {
		t.Fatalf("%s: %v\n%s", tool, err, msg)
	}
	return decodePNGFile(t, out+".png")
}

// The PDF rendered by poppler (pdftoppm and pdftocairo, Debian
// poppler-utils) at the page's DPI must match the PNG. Metrics, with the
// bounds set from measurement (the measured values are logged):
//
//   - mean absolute difference per channel of 16 × 16 pixel block means
//     at most 1.0 level of 255, for both renderers and both dot modes:
//     text and line anti-aliasing differ between the renderers and gg,
//     but a missing, extra or moved mark fails it (measured 0.07–0.83);
//   - raster dots: pdftocairo draws a 1:1 image exactly, so its frame
//     must match the PNG to 0.5 level per pixel (measured 0.005 at
//     300 dpi, 0.16 at 150 dpi) and its frame ink to 1.5%; pdftoppm's
//     Splash renderer smooths images even at 1:1 (about half a pixel of
//     blur, measured 4–9 levels per pixel) but keeps their ink: within 5%
//     (measured +0.01% at 300 dpi, +3.8% at 150 dpi);
//   - vector dots: each renderer anti-aliases 4-pixel discs its own way
//     and overlapping dots blend by drawing order instead of by coverage
//     share, so the frame ink is within 8% (pdftocairo, measured −4.8% at
//     300 dpi, −5.6% at 150 dpi) and 20% (pdftoppm, measured −15% at
//     300 dpi, −5.5% at 150 dpi) of render.Canvas's, which gives a
//     disc π(r² + 1/12) px² of ink (computed: the integral of its edge
//     ramp clamp(r + 0.5 − d, 0, 1) over the plane).
func TestPDFRenderMatchesPNG(t *testing.T) {
	ppm := reftool.Need(t, "pdftoppm")
	for _, c := range []struct {
		name    string
		size    Size
		dpi     float64
		dots    int
		cluster bool
		mode    DotMode
	}{
		{"A4 300 dpi raster", A4, 300, 40000, true, DotsRaster},
		{"A4 150 dpi vector", A4, 150, 8000, false, DotsVector},
		{"Letter landscape 150 dpi raster", Letter.Landscape(), 150, 30000, true, DotsRaster},
	} {
		t.Run(c.name, func(t *testing.T) {
			spec := testSpec(t, c.size, c.dpi)
			spec.Outlines = []orb.MultiPolygon{{{{{10.2, 45.2}, {10.8, 45.2}, {10.8, 45.7}, {10.2, 45.7}, {10.2, 45.2}}}}}
			p := testPage(t, spec, makeDots(c.dots, 4, c.cluster))
			if got := c.mode.Resolve(p.Len()); got != c.mode {
				t.Fatalf("mode %v resolves to %v", c.mode, got)
			}
			pdfPath := writeTemp(t, "page.pdf", func(f *os.File) error { return p.WritePDF(f, c.mode) })
			want := p.Raster()
			for _, tool := range []string{ppm, reftool.Need(t, "pdftocairo")} {
				name := filepath.Base(tool)
				got := renderPDF(t, tool, pdfPath, c.size, c.dpi)
				if got.Rect.Size() != want.Rect.Size() {
					t.Fatalf("%s page %v, PNG page %v", name, got.Rect.Size(), want.Rect.Size())
				}
				if d := os.Getenv("STIPPLE_KEEP"); d != "" {
					var b bytes.Buffer
					png.Encode(&b, got)
					os.WriteFile(filepath.Join(d, name+".png"), b.Bytes(), 0o644)
					b.Reset()
					png.Encode(&b, want)
					os.WriteFile(filepath.Join(d, "png.png"), b.Bytes(), 0o644)
				}
				mad, bmad, inkPDF, inkPNG := compare(got, want, p.FramePixels(), 16)
				rel := math.Abs(inkPDF-inkPNG) / inkPNG
				f := p.FramePixels().Inset(2) // inside the frame's stroke
				fmad, _, _, _ := compare(got.SubImage(f).(*image.RGBA), want.SubImage(f).(*image.RGBA), image.Rectangle{}, 16)
				t.Logf("%s: %d dots; mean abs difference per channel %.3f (page), %.3f (frame), %.3f (16×16 blocks); frame ink PDF %.4g, PNG %.4g (%+.2f%%)",
					name, p.Len(), mad, fmad, bmad, inkPDF, inkPNG, 100*(inkPDF-inkPNG)/inkPNG)
				if bmad > 1.0 {
					t.Errorf("%s: mean absolute difference of 16×16 blocks %.3f per channel, want ≤ 1.0", name, bmad)
				}
				maxInk := map[[2]string]float64{
					{"raster", "pdftoppm"}: 0.05, {"raster", "pdftocairo"}: 0.015,
					{"vector", "pdftoppm"}: 0.20, {"vector", "pdftocairo"}: 0.08,
				}[[2]string{c.mode.String(), name}]
				if c.mode == DotsRaster && name == "pdftocairo" && fmad > 0.5 {
					t.Errorf("%s: frame mean absolute difference %.3f per channel, want ≤ 0.5", name, fmad)
				}
				if rel > maxInk {
					t.Errorf("%s: frame ink differs by %.2f%%, want ≤ %.1f%%", name, 100*rel, 100*maxInk)
				}
			}
		})
	}
}

func must[T any](v T, err error) T {
	if err != nil {
		panic(err)
	}
	return v
}
