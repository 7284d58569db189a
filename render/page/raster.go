package page

import (
	"image"
	"math"

	"github.com/fogleman/gg"
	"golang.org/x/image/font"
)

// Raster draws the whole page at its DPI: white paper, the dots in the
// frame, and the furniture (anti-aliased by gg's rasteriser).
func (p *Page) Raster() *image.RGBA {
	w, h := p.spec.Size.Pixels(p.spec.DPI)
	img := image.NewRGBA(image.Rect(0, 0, w, h))
	for i := range img.Pix {
		img.Pix[i] = 0xff
	}
	dc := gg.NewContextForRGBA(img)
	k := p.ppm
	faces := map[[2]float64]font.Face{}
	for _, it := range p.items {
		switch it.kind {
		case kDots:
			p.drawDots(img, p.framePx.Min.X, p.framePx.Min.Y)
		case kText:
			key := [2]float64{it.size, 0}
			if it.bold {
				key[1] = 1
			}
			f, ok := faces[key]
			if !ok {
				f = p.tf.rasterFace(it.size, p.spec.DPI, it.bold)
				faces[key] = f
			}
			dc.SetFontFace(f)
			dc.SetColor(*it.fill)
			dc.DrawString(it.text, it.x*k, it.y*k)
		case kRect:
			if it.fill != nil {
				dc.DrawRectangle(it.x*k, it.y*k, it.w*k, it.h*k)
				dc.SetColor(*it.fill)
				dc.Fill()
			}
			if it.stroke != nil {
				// Keep the stroke inside the rectangle, as the PDF's
				// stroke is centred on the same path.
				dc.DrawRectangle(it.x*k, it.y*k, it.w*k, it.h*k)
				dc.SetColor(*it.stroke)
				dc.SetLineWidth(math.Max(it.lineW*k, 0.5))
				dc.Stroke()
			}
		case kCircle:
			dc.DrawCircle(it.x*k, it.y*k, it.r*k)
			dc.SetColor(*it.fill)
			dc.Fill()
		case kArea:
			p.rasterShape(dc, it, k, 0, 0)
		case kPath:
			f := p.frame
			dc.DrawRectangle(f.X*k, f.Y*k, f.W*k, f.H*k)
			dc.Clip()
			for _, ring := range it.rings {
				dc.MoveTo(ring[0][0]*k, ring[0][1]*k)
				for _, pt := range ring[1:] {
					dc.LineTo(pt[0]*k, pt[1]*k)
				}
			}
			dc.SetColor(*it.stroke)
			dc.SetLineWidth(math.Max(it.lineW*k, 0.5))
			dc.SetLineJoinRound()
			dc.Stroke()
			dc.ResetClip()
		}
	}
	return img
}

// DotLayer draws the map frame alone at the page's DPI: the dots over
// white paper (with the reference layers under the dots), nothing else.
// The PDF embeds it as the map's raster.
func (p *Page) DotLayer() *image.RGBA {
	img := image.NewRGBA(image.Rect(0, 0, p.framePx.Dx(), p.framePx.Dy()))
	for i := range img.Pix {
		img.Pix[i] = 0xff
	}
	p.drawUnder(img)
	p.drawDots(img, 0, 0)
	return img
}
