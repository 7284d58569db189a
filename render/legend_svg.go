package render

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"strconv"
)

// LegendSVG returns the legend as a standalone SVG 1.1 document width CSS
// pixels wide, for print and CMS workflows. It draws the same layout as
// DrawLegend; text stays text (selectable, searchable, restylable), set in
// the legend's font family (Legend.Font; a reader without it sees a
// sans-serif of the same widths for the built-in face). Every string from the map file is XML-escaped.
func LegendSVG(l Legend, width int) []byte {
	items, h := legendLayout(l, width)
	var b bytes.Buffer
	num := func(v float64) string { return strconv.FormatFloat(v, 'f', 2, 64) }
	esc := func(s string) string {
		var e bytes.Buffer
		xml.EscapeText(&e, []byte(s)) // escapes & < > ' " and control characters
		return e.String()
	}
	H := num(h)
	fmt.Fprintf(&b, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n")
	fmt.Fprintf(&b, "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"%d\" height=\"%s\" viewBox=\"0 0 %d %s\" role=\"img\" aria-labelledby=\"legend-title legend-desc\">\n", width, H, width, H)
	fmt.Fprintf(&b, "<title id=\"legend-title\">%s</title>\n", esc(l.Title))
	fmt.Fprintf(&b, "<desc id=\"legend-desc\">%s</desc>\n", esc(l.Note+". "+l.Caution))
	fmt.Fprintf(&b, "<rect width=\"%d\" height=\"%s\" fill=\"%s\"/>\n", width, H, Hex(LegendPaper))
	fmt.Fprintf(&b, "<g font-family=\"%s\">\n", esc(l.Font.CSSFamily()))
	ring := fmt.Sprintf("stroke=\"%s\" stroke-opacity=\"%.2f\" stroke-width=\"1\"", Hex(LegendRing), float64(LegendRing.A)/255)
	for _, it := range items {
		if it.Swatch {
			fmt.Fprintf(&b, "<circle cx=\"%s\" cy=\"%s\" r=\"%s\" fill=\"%s\" %s/>\n", num(it.X), num(it.Y), num(it.R), Hex(it.Color), ring)
			continue
		}
		attrs := ""
		if it.Bold {
			attrs += " font-weight=\"bold\""
		}
		if it.Right {
			attrs += " text-anchor=\"end\""
		}
		fmt.Fprintf(&b, "<text x=\"%s\" y=\"%s\" font-size=\"%s\" fill=\"%s\"%s>%s</text>\n", num(it.X), num(it.Y), num(it.Size), Hex(it.Color), attrs, esc(it.Text))
	}
	b.WriteString("</g>\n</svg>\n")
	return b.Bytes()
}
