package render

import (
	"image"
	"image/color"
	"image/png"
	"io"
	"sync"
)

// Encoder writes tiles as PNG: 8-bit paletted when the image has at most 256
// distinct colours (lossless then, and far smaller and faster), 32-bit
// otherwise. It is safe for concurrent use.
type Encoder struct {
	enc  png.Encoder
	pool sync.Pool // *paletteBuf
}

// NewEncoder returns an Encoder tuned for dot tiles.
func NewEncoder() *Encoder {
	e := &Encoder{enc: png.Encoder{CompressionLevel: png.BestSpeed, BufferPool: &bufferPool{}}}
	return e
}

type bufferPool struct{ p sync.Pool }

func (b *bufferPool) Get() *png.EncoderBuffer {
	v, _ := b.p.Get().(*png.EncoderBuffer)
	return v
}
func (b *bufferPool) Put(v *png.EncoderBuffer) { b.p.Put(v) }

type paletteBuf struct {
	index map[uint32]uint8
	img   *image.Paletted
}

// Encode writes img to w.
func (e *Encoder) Encode(w io.Writer, img *image.NRGBA) error {
	pb, _ := e.pool.Get().(*paletteBuf)
	if pb == nil {
		pb = &paletteBuf{index: make(map[uint32]uint8, 256)}
	}
	defer e.pool.Put(pb)
	if p := toPaletted(img, pb); p != nil {
		return e.enc.Encode(w, p)
	}
	return e.enc.Encode(w, img)
}

// toPaletted returns img as a paletted image when it has at most 256
// colours, else nil. Palette order is the order colours first appear in
// scan order, so it depends on the pixels alone.
func toPaletted(img *image.NRGBA, pb *paletteBuf) *image.Paletted {
	clear(pb.index)
	b := img.Bounds()
	w, h := b.Dx(), b.Dy()
	if pb.img == nil || pb.img.Rect.Dx() != w || pb.img.Rect.Dy() != h {
		pb.img = image.NewPaletted(image.Rect(0, 0, w, h), nil)
	}
	pal := make(color.Palette, 0, 16)
	for y := 0; y < h; y++ {
		src := img.Pix[y*img.Stride : y*img.Stride+4*w]
		dst := pb.img.Pix[y*pb.img.Stride : y*pb.img.Stride+w]
		for x := 0; x < w; x++ {
			c := uint32(src[4*x])<<24 | uint32(src[4*x+1])<<16 | uint32(src[4*x+2])<<8 | uint32(src[4*x+3])
			i, ok := pb.index[c]
			if !ok {
				if len(pal) == 256 {
					return nil
				}
				i = uint8(len(pal))
				pb.index[c] = i
				pal = append(pal, color.NRGBA{src[4*x], src[4*x+1], src[4*x+2], src[4*x+3]})
			}
			dst[x] = i
		}
	}
	pb.img.Palette = pal
	return pb.img
}
