package render

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"github.com/stipple-maps/stipple/geo/reftool"
)

// testImage has exactly ncolors distinct colours (some translucent, one
// transparent) or, with ncolors = 0, thousands.
func testImage(w, h, ncolors int, seed uint64) *image.NRGBA {
	rng := rand.New(rand.NewPCG(seed, 5))
	img := image.NewNRGBA(image.Rect(0, 0, w, h))
	pal := make([]color.NRGBA, ncolors)
	for i := range pal {
		pal[i] = color.NRGBA{uint8(rng.IntN(256)), uint8(rng.IntN(256)), uint8(i), uint8(rng.IntN(256))}
	}
	if ncolors > 0 {
		pal[0] = color.NRGBA{}
	}
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			var c color.NRGBA
			switch {
			case ncolors == 0:
				c = color.NRGBA{uint8(x), uint8(y), uint8(rng.IntN(256)), uint8(rng.IntN(256))}
			case y*w+x < ncolors:
				c = pal[y*w+x] // every colour appears
			case rng.IntN(3) == 0:
				c = pal[rng.IntN(ncolors)]
			}
			img.SetNRGBA(x, y, c)
		}
	}
	return img
}

// TestEncodeDecodesValueForValue encodes images of every bit depth and the
// truecolour path, decodes them with image/png (an independent decoder) and
// compares every pixel's non-premultiplied RGBA.
func TestEncodeDecodesValueForValue(t *testing.T) {
	for _, filter := range []RowFilter{FilterAuto, FilterNone, FilterSub, FilterUp} {
		testEncodeValues(t, &Encoder{Filter: filter})
	}
}

func testEncodeValues(t *testing.T, enc *Encoder) {
	for _, tc := range []struct {
		ncolors, w, h int
		wantType      byte // IHDR colour type
		wantDepth     byte
	}{
		{1, 17, 5, 3, 1}, {2, 9, 9, 3, 1}, {3, 33, 7, 3, 2}, {4, 256, 256, 3, 2},
		{16, 31, 3, 3, 4}, {17, 64, 64, 3, 8}, {256, 256, 256, 3, 8}, {0, 256, 256, 6, 8}, {0, 3, 1, 3, 2}, // 3 pixels: at most 3 colours
	} {
		t.Run(fmt.Sprintf("filter-%d/%d-colours-%dx%d", enc.Filter, tc.ncolors, tc.w, tc.h), func(t *testing.T) {
			img := testImage(tc.w, tc.h, tc.ncolors, uint64(tc.w))
			var buf bytes.Buffer
			if err := enc.Encode(&buf, img); err != nil {
				t.Fatal(err)
			}
			data := buf.Bytes()
			// IHDR: bytes 24 and 25 of the file (PNG spec §11.2.2).
			if data[24] != tc.wantDepth || data[25] != tc.wantType {
				t.Errorf("IHDR depth %d type %d; want %d, %d", data[24], data[25], tc.wantDepth, tc.wantType)
			}
			got, err := png.Decode(bytes.NewReader(data))
			if err != nil {
				t.Fatal(err)
			}
			for y := 0; y < tc.h; y++ {
				for x := 0; x < tc.w; x++ {
					want := img.NRGBAAt(x, y)
					g := color.NRGBAModel.Convert(got.At(x, y)).(color.NRGBA)
					if want.A == 0 {
						want = color.NRGBA{} // colour of a transparent pixel is not kept
						if g.A == 0 {
							g = color.NRGBA{}
						}
					}
					if g != want {
						t.Fatalf("pixel (%d,%d) = %v; want %v", x, y, g, want)
					}
				}
			}
		})
	}
}

func TestEncodeRejectsNothingAndIsDeterministic(t *testing.T) {
	img := testImage(64, 64, 40, 1)
	var a, b bytes.Buffer
	e := NewEncoder()
	e.Encode(&a, img)
	e.Encode(&b, img)
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Error("same image, different bytes")
	}
}

// TestPngcheckAcceptsOutput runs pngcheck (Debian package pngcheck), which
// verifies chunk CRCs, IHDR fields, PLTE/tRNS sizes and the zlib stream.
func TestPngcheckAcceptsOutput(t *testing.T) {
	tool := reftool.Need(t, "pngcheck")
	dir := t.TempDir()
	e := NewEncoder()
	var files []string
	for _, n := range []int{1, 3, 12, 200, 0} {
		var buf bytes.Buffer
		if err := e.Encode(&buf, testImage(100, 60, n, uint64(n))); err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, fmt.Sprintf("c%d.png", n))
		os.WriteFile(p, buf.Bytes(), 0o644)
		files = append(files, p)
	}
	out, err := exec.Command(tool, append([]string{"-q"}, files...)...).CombinedOutput()
	if err != nil {
		t.Fatalf("pngcheck: %v\n%s", err, out)
	}
}

// dotTile is a realistic tile: 2000 3-px dots of 5 categories.
func dotTile(n int) *image.NRGBA {
	c := NewCanvas(256, 256, 5)
	st := NewStamp(Dot{Diameter: 3, Opacity: 0.9})
	rng := rand.New(rand.NewPCG(2, 2))
	for i := 0; i < n; i++ {
		c.AddStamp(rng.IntN(5), rng.IntN(256*Sub), rng.IntN(256*Sub), st)
	}
	img := image.NewNRGBA(image.Rect(0, 0, 256, 256))
	c.Composite(testColors, img)
	return img
}

// BenchmarkEncode compares this encoder with image/png on dot tiles.
func BenchmarkEncode(b *testing.B) {
	for _, n := range []int{200, 2000, 20000} {
		img := dotTile(n)
		run := func(name string, enc func(*bytes.Buffer) error) {
			b.Run(fmt.Sprintf("dots=%d/%s", n, name), func(b *testing.B) {
				var buf bytes.Buffer
				b.ReportAllocs()
				for i := 0; i < b.N; i++ {
					buf.Reset()
					if err := enc(&buf); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(buf.Len()), "bytes")
			})
		}
		e := NewEncoder()
		run("stipple", func(w *bytes.Buffer) error { return e.Encode(w, img) })
		for f, name := range map[RowFilter]string{FilterNone: "none", FilterSub: "sub", FilterUp: "up"} {
			ef := &Encoder{Filter: f}
			run("stipple-filter-"+name, func(w *bytes.Buffer) error { return ef.Encode(w, img) })
		}
		std := &png.Encoder{}
		run("image-png-default", func(w *bytes.Buffer) error { return std.Encode(w, img) })
		fast := &png.Encoder{CompressionLevel: png.BestSpeed}
		run("image-png-bestspeed", func(w *bytes.Buffer) error { return fast.Encode(w, img) })
	}
}

// BenchmarkEncodeTile encodes composited tiles like those of a city's
// zooms 10–12: a few hundred 3-px dots, or thousands of 1.5-px ones.
func BenchmarkEncodeTile(b *testing.B) {
	for _, tc := range []struct {
		dots int
		diam float64
	}{{350, 3}, {1500, 2.1}, {5000, 1.5}} {
		b.Run(fmt.Sprintf("dots=%d", tc.dots), func(b *testing.B) {
			c := NewCanvas(256, 256, 5)
			t := NewTile(256, 256)
			st := NewStamp(Dot{Diameter: tc.diam, Opacity: 0.9})
			rng := rand.New(rand.NewPCG(2, 2))
			for range tc.dots {
				c.AddStamp(rng.IntN(5), rng.IntN(256*Sub), rng.IntN(256*Sub), st)
			}
			c.CompositeTile(testColors, t)
			e := NewEncoder()
			var buf bytes.Buffer
			for b.Loop() {
				buf.Reset()
				e.EncodeTile(&buf, t)
			}
			b.ReportMetric(float64(buf.Len()), "bytes")
			_, ok := t.Colors()
			b.ReportMetric(map[bool]float64{true: 1}[ok], "indexed")
		})
	}
}

// TestEncodeTileMatchesEncode: a Tile, whose palette is gathered while
// compositing, encodes to the bytes Encode writes for the same pixels, for
// every kind of tile (indexed at each bit depth, sparse and dense
// truecolour, count canvases), and decodes to those pixels.
func TestEncodeTileMatchesEncode(t *testing.T) {
	depths := map[[2]byte]bool{} // bit depth, colour type
	defer func() {
		// Every way rows are laid out: indexed at 1, 2, 4 and 8 bits
		// (packed from the tile's ink bitmap below 8), and truecolour.
		for _, d := range [][2]byte{{1, 3}, {2, 3}, {4, 3}, {8, 3}, {8, 6}} {
			if !depths[d] {
				t.Errorf("no case made a tile of bit depth %d, colour type %d", d[0], d[1])
			}
		}
	}()
	for _, tc := range []struct {
		name  string
		dots  int
		diam  float64
		ncat  int
		count bool
	}{
		{"one dot", 1, 3, 5, false},
		{"few dots one category", 30, 3, 1, false},
		{"sparse", 350, 3, 5, false},
		{"small dots", 5000, 1.5, 5, false},
		{"dense", 40000, 3, 5, false},
		{"nine categories", 3000, 2.2, 9, false},
		{"counts", 20000, 0, 5, true},
		{"few counts, one category (1-bit rows)", 40, 0, 1, true},
		{"few counts, three categories (2-bit rows)", 60, 0, 3, true},
		{"few counts, twelve categories (4-bit rows)", 300, 0, 12, true},
		{"empty", 0, 3, 5, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(uint64(tc.dots), 3))
			colors := make([]color.NRGBA, tc.ncat)
			for i := range colors {
				colors[i] = color.NRGBA{uint8(rng.IntN(256)), uint8(rng.IntN(256)), uint8(rng.IntN(256)), 255}
			}
			c := NewCanvas(256, 256, tc.ncat)
			tile := NewTile(256, 256)
			for range 2 { // the second round reuses the drained canvas and the tile
				if tc.count {
					for range tc.dots {
						c.Count(rng.IntN(tc.ncat), rng.IntN(256), rng.IntN(256))
					}
					c.CompositeCountsTile(colors, 0.2, tile)
				} else {
					st := NewStamp(Dot{Diameter: tc.diam, Opacity: 0.85})
					for range tc.dots {
						c.AddStamp(rng.IntN(tc.ncat), rng.IntN(256*Sub), rng.IntN(256*Sub), st)
					}
					c.CompositeTile(colors, tile)
				}
				if !c.Empty() {
					t.Fatal("CompositeTile left the canvas touched")
				}
				e := NewEncoder()
				var a, b bytes.Buffer
				if err := e.EncodeTile(&a, tile); err != nil {
					t.Fatal(err)
				}
				plain := image.NewNRGBA(tile.Image.Rect)
				for y := 0; y < 256; y++ {
					copy(plain.Pix[y*plain.Stride:][:4*256], tile.Image.Pix[y*tile.Image.Stride:])
				}
				if err := e.Encode(&b, plain); err != nil {
					t.Fatal(err)
				}
				if !bytes.Equal(a.Bytes(), b.Bytes()) {
					t.Fatalf("EncodeTile wrote %d bytes, Encode %d: they differ", a.Len(), b.Len())
				}
				// IHDR's bit depth and colour type (PNG spec §11.2.2).
				depths[[2]byte{a.Bytes()[24], a.Bytes()[25]}] = true
				got, err := png.Decode(bytes.NewReader(a.Bytes()))
				if err != nil {
					t.Fatal(err)
				}
				for y := 0; y < 256; y++ {
					for x := 0; x < 256; x++ {
						want := plain.NRGBAAt(x, y)
						if g := color.NRGBAModel.Convert(got.At(x, y)).(color.NRGBA); g != want && !(g.A == 0 && want.A == 0) {
							t.Fatalf("pixel (%d,%d) = %v; want %v", x, y, g, want)
						}
					}
				}
			}
		})
	}
}

// TestSubBytesMatchesPlainLoop compares the word-at-a-time subtraction with
// a byte loop on every pair of byte values and odd lengths.
func TestSubBytesMatchesPlainLoop(t *testing.T) {
	a, b := make([]byte, 256*256+5), make([]byte, 256*256+5)
	for i := range 256 * 256 {
		a[i], b[i] = byte(i>>8), byte(i)
	}
	a[len(a)-1], b[len(b)-1] = 3, 250
	got := make([]byte, len(a))
	subBytes(got, a, b)
	for i := range a {
		if want := a[i] - b[i]; got[i] != want {
			t.Fatalf("byte %d: %d − %d = %d, want %d", i, a[i], b[i], got[i], want)
		}
	}
}
