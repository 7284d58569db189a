// Package batch renders many maps ("extents") from one base map's dots in
// one run: a batch file names the base map file and lists extents (a box in
// degrees, a list of area ids, or the areas whose field holds given values),
// each with a slug, a title and optional overrides (zooms, people per dot,
// margin, print page).
//
// Contract:
//
//   - The input is read once (mapjob.Load) and its dots are placed once per
//     people-per-dot value into a sorted dot store (mapjob.Place), kept in
//     OUT/.stipple/ for reruns and reused while the input's sampling
//     fingerprint (areas, counts, mask contents, categories, seed, people
//     per dot) is the same. Every extent draws from that store.
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
//   - An extent's totals, legend, map.json, viewer and print page come from
//     the same code as "stipple render" and "stipple print"
//     (mapjob.TallyAreas, mapjob.Metadata, mapjob.PutFurniture,
//     mapjob.Print), so they carry the same wording and are counted alike.
//   - A rerun redoes only extents whose fingerprint changed or whose
//     outputs are incomplete. The fingerprint hashes the extent's
//     definition, the map's look (mapjob.LookFingerprint, which holds the
//     input's sampling fingerprint), the legend's words and the stipple
//     version: editing a mask or a count in place redoes the extents.
//
// Coordinate spaces: boxes and bounds are longitude/latitude degrees (WGS 84,
// [west, south, east, north] as in RFC 7946 §5); tiles are XYZ Web Mercator
// tiles; dots are dotstore world cells; thumbnails are pixels at a zoom.
package batch
