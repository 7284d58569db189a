// Package tiles writes a dot map as an XYZ tile pyramid ({z}/{x}/{y}.png in
// the Web Mercator tiling, EPSG:3857), with the metadata file and the web
// viewer that sit beside it.
//
// Coordinate spaces: tile numbers follow the slippy-map convention (x east
// from 180°W, y south from 85.0511°N, 2^z tiles a side); dots arrive as
// dotstore world coordinates; pixels are those of package render.
//
// Every tile is rendered from the dots that can touch it, its own and those
// within a dot radius of its edges, so a dot that straddles an edge is drawn
// on both tiles with matching pixels. Tiles are independent, so the output is
// the same for any number of workers. A tile with no ink is not written.
package tiles
