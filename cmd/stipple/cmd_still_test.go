package main

import (
	"bytes"
	"context"
	"image"
	"image/color"
	"image/png"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"testing"

	"github.com/stipple-maps/stipple/render"
)

// TestStillSizesLegendAndBytes renders the small test map and makes a
// still at each preset size and one given as WIDTHxHEIGHT: the PNG has
// exactly that size (read back with image/png, an independent decoder of
// the PNG specification), the legend's box the command reports holds the
// legend's paper and both category colours as swatches (#0072B2, #E69F00
// from testdata/small/map.toml), the map outside the box holds dots
// (pixels off the ground colour), and a second run writes the same bytes.
func TestStillSizesLegendAndBytes(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	mp := writeMap(t, abs(t, "../../testdata/small/areas.geojson"), out, "")
	var so, se bytes.Buffer
	if code := run(context.Background(), []string{"render", mp}, &so, &se); code != 0 {
		t.Fatalf("render: %d %s", code, se.String())
	}
	swatches := []color.NRGBA{{0x00, 0x72, 0xB2, 0xff}, {0xE6, 0x9F, 0x00, 0xff}}
	boxRe := regexp.MustCompile(`legend at (\d+),(\d+) (\d+)×(\d+)`)
	for _, c := range []struct {
		size string
		w, h int
		src  string
	}{
		{"wide", 1200, 675, out},
		{"portrait", 1080, 1350, out},
		{"square", 1080, 1080, mp},
		{"640x360", 640, 360, out},
	} {
		t.Run(c.size, func(t *testing.T) {
			var first []byte
			for i := 0; i < 2; i++ {
				p := filepath.Join(t.TempDir(), "still.png")
				so.Reset()
				se.Reset()
				if code := run(context.Background(), []string{"still", c.src, "--view", "13/-30.02/-140", "--size", c.size, "-o", p}, &so, &se); code != 0 {
					t.Fatalf("still: %d %s", code, se.String())
				}
				b, err := os.ReadFile(p)
				if err != nil {
					t.Fatal(err)
				}
				if i == 1 {
					if !bytes.Equal(b, first) {
						t.Error("a second run wrote other bytes")
					}
					continue
				}
				first = b
				img, err := png.Decode(bytes.NewReader(b))
				if err != nil {
					t.Fatal(err)
				}
				if img.Bounds() != image.Rect(0, 0, c.w, c.h) {
					t.Fatalf("size %v, want %d×%d", img.Bounds(), c.w, c.h)
				}
				m := boxRe.FindStringSubmatch(so.String())
				if m == nil {
					t.Fatalf("no legend box in %q", so.String())
				}
				n := func(s string) int { v, _ := strconv.Atoi(s); return v }
				box := image.Rect(n(m[1]), n(m[2]), n(m[1])+n(m[3]), n(m[2])+n(m[4]))
				if !box.In(img.Bounds()) || box.Dx() < 100 {
					t.Fatalf("legend box %v in %v", box, img.Bounds())
				}
				found := make([]bool, len(swatches))
				paper, dots := 0, 0
				for y := 0; y < c.h; y++ {
					for x := 0; x < c.w; x++ {
						px := color.NRGBAModel.Convert(img.At(x, y)).(color.NRGBA)
						if (image.Point{x, y}).In(box) {
							for k, s := range swatches {
								found[k] = found[k] || px == s
							}
							if px == render.LegendPaper {
								paper++
							}
						} else if px != (color.NRGBA{0xf2, 0xef, 0xe7, 0xff}) && x > box.Max.X+2 {
							dots++
						}
					}
				}
				for k, f := range found {
					if !f {
						t.Errorf("swatch %v not in the legend box", swatches[k])
					}
				}
				if paper < box.Dx()*box.Dy()/2 {
					t.Errorf("legend box %v: %d paper pixels", box, paper)
				}
				if dots < 500 {
					t.Errorf("%d dot pixels outside the legend", dots)
				}
			}
		})
	}
}
