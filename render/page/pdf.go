package page

import (
	"bytes"
	"fmt"
	"image/color"
	"image/png"
	"io"
	"time"

	"github.com/go-pdf/fpdf"
)

// DotMode says how a PDF holds the dots.
type DotMode int

const (
	// DotsAuto draws vector circles for pages with at most VectorLimit
	// dots and embeds a raster otherwise.
	DotsAuto DotMode = iota
	// DotsRaster embeds the dots as one RGB image at the page's DPI,
	// composited exactly as in the PNG.
	DotsRaster
	// DotsVector draws each dot as a filled circle. Where dots overlap,
	// the later one is drawn over the earlier with the dot opacity, so
	// overlaps are not order-free as in the raster; the order is fixed
	// (by band, then the order the dots came in), so output is
	// reproducible.
	DotsVector
)

// VectorLimit is the largest number of dots DotsAuto draws as vectors.
// A vector dot (four Bézier arcs) costs about 145 bytes of compressed page
// content, so 20,000 dots make a 2.9 MB A4 PDF, while the 300 dpi raster
// of the same page is 1.6 MB and grows slowly with the dots (5.8 MB for
// 100,000): measured by BenchmarkPDF. Past this many dots, vectors cost
// more than the raster and every viewer redraws each one; below it they
// stay sharp at any zoom and can be edited.
const VectorLimit = 20000

// ParseDotMode reads "auto", "raster" or "vector".
func ParseDotMode(s string) (DotMode, error) {
	switch s {
	case "", "auto":
		return DotsAuto, nil
	case "raster":
		return DotsRaster, nil
	case "vector":
		return DotsVector, nil
	}
	return 0, fmt.Errorf("page: dots as %q; want auto, raster or vector", s)
}

// Resolve returns the mode a page with n dots is drawn in.
func (m DotMode) Resolve(n int) DotMode {
	if m != DotsAuto {
		return m
	}
	if n <= VectorLimit {
		return DotsVector
	}
	return DotsRaster
}

// String names the mode as ParseDotMode reads it.
func (m DotMode) String() string {
	switch m {
	case DotsRaster:
		return "raster"
	case DotsVector:
		return "vector"
	}
	return "auto"
}

// pdfDate is the creation date written into every PDF: fixed, so that the
// same page gives the same bytes.
var pdfDate = time.Date(2000, 1, 1, 0, 0, 0, 0, time.UTC)

// WritePDF writes the page as a one-page PDF of the page's size. Text,
// legend, scale bar, frame and outlines are vector graphics, the text in
// the page's font (Spec.Font), embedded; the dots are a raster at the page's DPI or vector
// circles, as mode says.
func (p *Page) WritePDF(w io.Writer, mode DotMode) error {
	// fpdf writes the MediaBox in points with two decimals but places
	// marks against the unrounded height; a page height rounded to 0.01 pt
	// first (A4: 841.89 pt = 297.0004 mm) keeps the two in step, so that
	// the dot raster lands on whole device pixels and a renderer draws it
	// 1:1 instead of resampling it.
	wpt, hpt := p.spec.Size.Points()
	wpt, hpt = round(wpt, 2), round(hpt, 2)
	pdf := fpdf.NewCustom(&fpdf.InitType{UnitStr: "mm", Size: fpdf.SizeType{Wd: wpt * mmPerPt, Ht: hpt * mmPerPt}})
	pdf.SetCreationDate(pdfDate)
	pdf.SetModificationDate(pdfDate)
	pdf.SetCatalogSort(true)
	pdf.SetProducer("stipple", false)
	pdf.SetTitle(p.spec.Title, true)
	pdf.SetMargins(0, 0, 0)
	pdf.SetAutoPageBreak(false, 0)
	fam := p.tf.pdfFamily()
	pdf.AddUTF8FontFromBytes(fam, "", p.tf.font.Regular)
	pdf.AddUTF8FontFromBytes(fam, "B", p.tf.font.Bold)
	pdf.AddPage()
	setFill := func(c color.NRGBA) { pdf.SetFillColor(int(c.R), int(c.G), int(c.B)) }
	setDraw := func(c color.NRGBA) { pdf.SetDrawColor(int(c.R), int(c.G), int(c.B)) }
	for _, it := range p.items {
		switch it.kind {
		case kDots:
			if err := p.pdfDots(pdf, mode.Resolve(p.Len())); err != nil {
				return err
			}
		case kText:
			style := ""
			if it.bold {
				style = "B"
			}
			pdf.SetFont(fam, style, it.size)
			c := *it.fill
			pdf.SetTextColor(int(c.R), int(c.G), int(c.B))
			pdf.Text(it.x, it.y, it.text)
		case kRect:
			style := ""
			if it.fill != nil {
				setFill(*it.fill)
				style += "F"
			}
			if it.stroke != nil {
				setDraw(*it.stroke)
				pdf.SetLineWidth(it.lineW)
				style += "D"
			}
			pdf.Rect(it.x, it.y, it.w, it.h, style)
		case kCircle:
			setFill(*it.fill)
			pdf.Circle(it.x, it.y, it.r, "F")
		case kArea:
			p.pdfArea(pdf, it)
		case kPath:
			f := p.frame
			pdf.ClipRect(f.X, f.Y, f.W, f.H, false)
			setDraw(*it.stroke)
			pdf.SetLineWidth(it.lineW)
			pdf.SetLineJoinStyle("round")
			for _, ring := range it.rings {
				pdf.MoveTo(ring[0][0], ring[0][1])
				for _, pt := range ring[1:] {
					pdf.LineTo(pt[0], pt[1])
				}
			}
			if len(it.rings) > 0 {
				pdf.DrawPath("D")
			}
			pdf.ClipEnd()
			pdf.SetLineJoinStyle("miter")
		}
	}
	if err := pdf.Error(); err != nil {
		return fmt.Errorf("page: pdf: %w", err)
	}
	return pdf.Output(w)
}

func (p *Page) pdfDots(pdf *fpdf.Fpdf, mode DotMode) error {
	f := p.frame
	if mode == DotsRaster {
		var buf bytes.Buffer
		// An opaque RGB PNG: fpdf passes its compressed rows straight
		// into the PDF (no alpha channel to split off).
		if err := (&png.Encoder{CompressionLevel: png.DefaultCompression}).Encode(&buf, p.DotLayer()); err != nil {
			return fmt.Errorf("page: pdf: dot raster: %w", err)
		}
		opt := fpdf.ImageOptions{ImageType: "PNG"}
		pdf.RegisterImageOptionsReader("dots", opt, &buf)
		pdf.ImageOptions("dots", f.X, f.Y, f.W, f.H, false, opt, 0, "")
		return nil
	}
	pdf.ClipRect(f.X, f.Y, f.W, f.H, false)
	pdf.SetAlpha(p.spec.Opacity, "Normal")
	r := p.spec.DotMM / 2
	last := -1
	for i := range p.xs {
		x, y, cat := p.Dot(i)
		if cat != last {
			c := p.spec.Entries[cat].Color
			pdf.SetFillColor(int(c.R), int(c.G), int(c.B))
			last = cat
		}
		pdf.Circle(x, y, r, "F")
	}
	pdf.SetAlpha(1, "Normal")
	pdf.ClipEnd()
	return nil
}
