// Package page lays out and draws a printed map page: title, subtitle, the
// map frame with its dots (and optional area outlines), a legend with
// counts, the "1 dot = N people" note, a scale bar true at the map's
// centre, the caution and the source credit. It writes the page as a PNG
// that records its physical resolution (a pHYs chunk) and as a PDF whose
// text, legend and furniture are vector graphics.
//
// Coordinate spaces:
//
//   - Input geometry and dots are longitude/latitude degrees (WGS 84).
//   - They are projected with a proj.Projection (metres) and scaled onto
//     the page.
//   - The page itself is measured in millimetres from its top-left corner,
//     x right and y down. Raster output is pixels at the page's DPI, pixel
//     (i, j) covering [i, i+1) × [j, j+1); mm → px is mm / 25.4 × dpi.
//     The map frame is snapped to whole pixels, so the dot raster embedded
//     in the PDF lines up with the pixels of the PNG.
//
// Contract: the same Spec and the same dots give byte-identical PNG and
// PDF files, whatever order the dots come in (dots are accumulated as
// integer coverage by render.Canvas, which does not depend on order; in a
// PDF with vector dots the drawing order is the order the dots come in).
// Layout and both outputs share one display list, so the PNG and the PDF
// put every mark in the same place.
package page
