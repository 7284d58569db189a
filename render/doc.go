// Package render turns dots into pixels: it accumulates each category's dot
// coverage per pixel, then composites a colour from the categories' shares,
// so the result does not depend on the order the dots or categories come in.
// It also draws the legend.
//
// Coordinate space: pixels, x right and y down from the top-left corner of
// the canvas, with pixel (i, j) covering [i, i+1) × [j, j+1). Dot centres are
// given in the same space as float64.
package render
