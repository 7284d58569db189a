// Package tiles writes a dot map as an XYZ tile pyramid ({z}/{x}/{y}.png in
// the Web Mercator tiling, EPSG:3857, and optionally {z}/{x}/{y}@2x.png at
// twice the pixels), with the metadata file and the web viewer that sit
// beside it.
//
// Coordinate spaces: tile numbers follow the slippy-map convention (x east
// from 180°W, y south from 85.0511°N, 2^z tiles a side); dots arrive as
// dotstore world coordinates; pixels are those of package render.
//
// Every tile is rendered from the dots that can touch it, its own and those
// within a dot radius of its edges, so a dot that straddles an edge is drawn
// on both tiles with matching pixels. Zooms where a dot is narrower than a
// pixel are count canvases: a dot is one increment, which keeps the low
// zooms, with millions of dots a tile, cheap (see Write). Tiles are
// independent, so the output is the same for any number of workers. A tile
// with no ink is not written.
//
// Interruption: a tile is written to a temporary file and renamed into
// place, and a manifest in {out}/.stipple/tiles.json records the run's
// fingerprint and each finished zoom. A rerun with the same fingerprint skips
// finished zooms and tiles already present, and gives the same files as an
// uninterrupted run; a different fingerprint first removes the old tiles.
package tiles
