// Package render turns dots into pixels: it accumulates each category's dot
// coverage per pixel, then composites a colour from the categories' shares,
// so the result does not depend on the order the dots or categories come in.
// It also draws the legend and encodes tiles as PNG.
//
// Coordinate space: pixels, x right and y down from the top-left corner of
// the canvas, with pixel (i, j) covering [i, i+1) × [j, j+1). Dot centres are
// given in the same space as float64 (Add) or in integer 1/Sub pixels
// (AddStamp), and a count canvas takes whole pixels (Count).
//
// Two ways to draw: a dot a pixel or more wide is an anti-aliased disc whose
// coverage per sub-pixel offset is precomputed (Stamp), so drawing is a few
// integer additions; a dot narrower than a pixel only adds one to its pixel's
// count for its category, and CompositeCounts turns counts into ink (count ×
// the dot's mass). Both sum integers, so any drawing order gives the same
// bytes.
//
// Tiles skip the general image path: Canvas.CompositeTile writes the
// colours straight into PNG scanlines of a Tile, gathers the palette while
// the tile has at most 256 colours, marks the inked pixels and empties the
// canvas as it reads it; Encoder.EncodeTile then writes indexed PNG, or
// truecolour coded as literal pixels and runs of empty ones, through
// render/deflate. Encoder.Encode writes the same bytes for a plain image.
package render
