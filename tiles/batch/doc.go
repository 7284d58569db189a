// Package batch renders many maps ("extents") from one base map's dots in
// one run: a batch file names the base map file and lists extents (a box in
// degrees, a list of area ids, or the areas whose field holds given values),
// each with a slug, a title and optional overrides (zooms, people per dot,
// margin, print page).
//
// Contract:
//
//   - The input is read once and its dots are placed once per people-per-dot
//     value into a sorted dot store (mapjob.PlaceStore), kept in
//     OUT/.stipple/ for reruns. Every extent draws from that store.
//   - Each tile is rendered once, into a tile cache beside the store, from
//     the whole store: it is the tile a map of the whole input would have.
//     An extent's folder receives (hard links to, or copies of) the cached
//     tiles that meet its box plus margin at each of its zooms. So tiles that
//     cover the same place in two extents are the same bytes.
//   - The dot schedule (mapjob.Look) is the base map's at every zoom, so an
//     extent's own zoom range picks which zooms it gets, not how dots look.
//   - An extent's totals (legend, map.json, summary) are the counts of its
//     own areas: those listed by id, those whose field holds one of the
//     values, or for a box those whose representative point (the planar
//     area centroid of the area's polygons in longitude/latitude degrees,
//     as GEOS and orb compute it) lies in the box, west and south edges
//     included, east and north edges excluded, so boxes that tile the plane
//     count every area once. The tiles also show neighbouring areas' dots
//     inside the margin; the legend does not count those people.
//   - One extent that fails (an id that matches no area, an empty box) is
//     reported with its slug and the reason; the others finish.
//   - A rerun redoes only extents whose fingerprint changed or whose
//     outputs are incomplete. The fingerprint hashes the extent's
//     definition, the base map's sampling and drawing settings, the sizes
//     and modification times of the input files, the stipple version and a
//     probe of the sampler and the tile renderer (so a change in how dots
//     are placed or drawn is noticed).
//
// Coordinate spaces: boxes and bounds are longitude/latitude degrees (WGS 84,
// [west, south, east, north] as in RFC 7946 §5); tiles are XYZ Web Mercator
// tiles; dots are dotstore world cells; thumbnails are pixels at a zoom.
package batch
