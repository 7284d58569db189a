package page_test

import (
	"bytes"
	"fmt"
	"image/color"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/render/page"
)

// A page for an invented extent: choose the projection, lay out, place
// the dots, write the PNG and the PDF.
func ExampleNewLayout() {
	extent := orb.Bound{Min: orb.Point{10, 45}, Max: orb.Point{11.2, 46}}
	proj, err := page.Projection("auto", extent)
	if err != nil {
		panic(err)
	}
	layout, err := page.NewLayout(page.Spec{
		Size: page.A4, DPI: 300, Margin: 12,
		Title:   "Invented example",
		Entries: []page.Entry{{Label: "Everyone", Color: color.NRGBA{0x00, 0x72, 0xB2, 0xff}, People: 20}},
		Note:    "1 dot = 10 people", Caution: "Dots are placed at random inside each area.",
		Projection: proj, Extent: extent, DotMM: 0.35, Opacity: 0.9,
	})
	if err != nil {
		panic(err)
	}
	p, err := layout.Place(func(yield func(lon, lat float64, cat int) bool) {
		_ = yield(10.5, 45.5, 0) && yield(20, 45.5, 0) // the second is off the page
	})
	if err != nil {
		panic(err)
	}
	var png, pdf bytes.Buffer
	if err := p.WritePNG(&png); err != nil {
		panic(err)
	}
	if err := p.WritePDF(&pdf, page.DotsAuto); err != nil {
		panic(err)
	}
	fmt.Println(page.Describe(proj))
	fmt.Println("frame:", layout.FramePixels())
	fmt.Println("dots on the page:", p.Counts())
	fmt.Println("PDF dots as:", page.DotsAuto.Resolve(p.Len()))
	// Output:
	// Albers equal-area conic, standard parallels 45.17°N and 45.83°N, WGS 84
	// frame: (142,266)-(2338,2851)
	// dots on the page: [1]
	// PDF dots as: vector
}
