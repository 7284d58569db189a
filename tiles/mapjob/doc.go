// Package mapjob is the one core behind every command that makes a map:
// render and demo (Run), the parts and final step of a sharded render,
// batch extents, and print pages. It holds the steps they share, each
// defined once:
//
//   - Load reads the areas (geo/read), joins the count table (geo/table),
//     reads the masks, allocates each area's dots by the map's rounding
//     rule, and computes the sampling fingerprint: a hash of everything the
//     dots depend on (areas, counts, id field, seed, people per dot,
//     rounding, category keys and fields, and the masks' contents).
//   - Place puts the dots (package sample) into a sorted dot store
//     (tiles/dotstore; each dot's world cell from the sine of latitude the
//     sampler drew, dotstore.WorldFromSin) under a memory budget, stopping
//     when its context is done, for all areas or a subset, keeping all
//     dots or those a filter picks (a shard's margin). The store is kept
//     in a state folder and reused while the fingerprint matches. Per-area outcomes record dots
//     lost (an area with people but no polygon) and dots beyond Web
//     Mercator's latitude limit, which tiles cannot show.
//   - TallyAreas accounts, per category, for the people of any set of areas:
//     drawn, beyond the tiles' limit, or not drawn with the reason. Every
//     summary (run report, map.json, legend, alt text, batch totals, print
//     legend) comes from it.
//   - Metadata and PutFurniture write map.json, the legends (PNG, @2x, SVG)
//     and the viewer (package tiles) through a sink (tiles/sink), so a
//     folder, a file:// URL and a bucket get the same files.
//   - Print lays out a print page (render/page) from the same store.
//
// Package main (cmd/stipple) only parses flags and prints; tiles/batch
// builds on this package.
//
// Coordinate spaces: areas and print extents are longitude/latitude degrees
// (WGS 84); the store holds dotstore world cells (Web Mercator); tiles are
// XYZ tiles.
package mapjob
