package viewertest

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"sort"
)

// shrinkPNG makes a screenshot small enough to commit: the 256 most used
// colours (counted on a 5-bit-per-channel grid, each the mean of its cell),
// every pixel mapped to the nearest, no dithering (dithering a dot map only
// adds noise and bytes), written at the best compression.
func shrinkPNG(b []byte) ([]byte, error) {
	src, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		return nil, err
	}
	r := src.Bounds()
	type cell struct{ n, r, g, b int }
	cells := map[int]*cell{}
	key := func(c color.RGBA) int { return int(c.R>>3)<<10 | int(c.G>>3)<<5 | int(c.B>>3) }
	px := make([]color.RGBA, 0, r.Dx()*r.Dy())
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			c := color.RGBAModel.Convert(src.At(x, y)).(color.RGBA)
			px = append(px, c)
			k := key(c)
			e := cells[k]
			if e == nil {
				e = &cell{}
				cells[k] = e
			}
			e.n++
			e.r += int(c.R)
			e.g += int(c.G)
			e.b += int(c.B)
		}
	}
	keys := make([]int, 0, len(cells))
	for k := range cells {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if cells[keys[i]].n != cells[keys[j]].n {
			return cells[keys[i]].n > cells[keys[j]].n
		}
		return keys[i] < keys[j]
	})
	if len(keys) > 256 {
		keys = keys[:256]
	}
	pal := make(color.Palette, len(keys))
	for i, k := range keys {
		e := cells[k]
		pal[i] = color.RGBA{uint8(e.r / e.n), uint8(e.g / e.n), uint8(e.b / e.n), 255}
	}
	dst := image.NewPaletted(image.Rect(0, 0, r.Dx(), r.Dy()), pal)
	near := map[int]uint8{}
	for i, c := range px {
		k := key(c)
		j, ok := near[k]
		if !ok {
			j = uint8(pal.Index(c))
			near[k] = j
		}
		dst.Pix[i] = j
	}
	var out bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.BestCompression}
	if err := enc.Encode(&out, dst); err != nil {
		return nil, err
	}
	return out.Bytes(), nil
}
