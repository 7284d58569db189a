package render_test

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/png"

	"github.com/stipple-maps/stipple/render"
)

// Three dots in one pixel, one orange and two blue: the colour is the
// count-weighted mean, the alpha the dots' ink (3 × 0.1 of full cover).
func ExampleCanvas_CompositeCounts() {
	c := render.NewCanvas(2, 1, 2)
	c.Count(0, 0, 0)
	c.Count(1, 0, 0)
	c.Count(1, 0, 0)
	img := image.NewNRGBA(image.Rect(0, 0, 2, 1))
	c.CompositeCounts([]color.NRGBA{{240, 120, 0, 255}, {0, 90, 240, 255}}, 0.1, img)
	fmt.Println(img.NRGBAAt(0, 0), img.NRGBAAt(1, 0))
	// Output: {80 100 160 77} {0 0 0 0}
}

// A 3-pixel disc drawn from a stamp, encoded: transparent, the full colour
// and a few alpha levels along the anti-aliased edge make under 16 colours,
// so the tile is written as a 4-bit indexed PNG.
func ExampleEncoder() {
	c := render.NewCanvas(16, 16, 1)
	c.AddStamp(0, 8*render.Sub, 8*render.Sub, render.NewStamp(render.Dot{Diameter: 3, Opacity: 1}))
	img := image.NewNRGBA(image.Rect(0, 0, 16, 16))
	c.Composite([]color.NRGBA{{0, 114, 178, 255}}, img)
	var buf bytes.Buffer
	if err := render.NewEncoder().Encode(&buf, img); err != nil {
		fmt.Println(err)
		return
	}
	cfg, _ := png.DecodeConfig(bytes.NewReader(buf.Bytes()))
	fmt.Println(cfg.Width, cfg.Height, "bit depth", buf.Bytes()[24], "colour type", buf.Bytes()[25])
	// Output: 16 16 bit depth 4 colour type 3
}

// The tile path: dots composite straight into a Tile, which gathers its
// palette on the way and leaves the canvas empty for the next tile;
// EncodeTile writes the bytes Encode would write for the same pixels.
func ExampleCanvas_CompositeTile() {
	colors := []color.NRGBA{{0, 114, 178, 255}, {230, 159, 0, 255}}
	c := render.NewCanvas(64, 64, 2)
	t := render.NewTile(64, 64)
	st := render.NewStamp(render.Dot{Diameter: 3, Opacity: 0.9})
	for i := 0; i < 40; i++ {
		c.AddStamp(i%2, (3+i*37%58)*render.Sub, (3+i*23%58)*render.Sub, st)
	}
	c.CompositeTile(colors, t)
	pal, indexed := t.Colors()
	var a, b bytes.Buffer
	e := render.NewEncoder()
	e.EncodeTile(&a, t)
	e.Encode(&b, t.Image)
	fmt.Println("indexed:", indexed, "colours:", len(pal), "first:", pal[0])
	fmt.Println("canvas empty:", c.Empty(), "same bytes as Encode:", bytes.Equal(a.Bytes(), b.Bytes()))
	// Output:
	// indexed: true colours: 11 first: {0 0 0 0}
	// canvas empty: true same bytes as Encode: true
}
