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
