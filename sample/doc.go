// Package sample places dots: for each feature and category it decides how
// many dots the count makes and puts each one at random inside the
// feature's polygons, uniformly by true area on the sphere.
//
// # Counts
//
// Feature rounds count/N without bias (DotCount: the floor, plus one more
// with probability equal to the remainder), so the expected total equals
// the table's. Allocate does the same for a whole table, or, in exact mode,
// gives every category exactly round(total/N) dots by largest remainders
// with ties broken by a seeded hash of the feature id; FeatureN then places
// a given number of dots. Exact mode needs every feature's counts (not
// geometry), also in a shard that draws only some of the features.
//
// # Coordinate space
//
// Input polygons and output points are longitude/latitude degrees (WGS 84);
// output longitudes are in [-180, 180]. Polygon edges are straight lines in
// longitude/latitude (RFC 7946 §3.1.1, as GIS readers take them). Dots are
// drawn in the cylindrical equal-area plane x = longitude (degrees),
// y = sin(latitude), where equal areas of the plane are equal areas of the
// sphere; there an edge is a curve, which the proposals follow by
// densification to within EdgeTolerance. Containment is decided by one
// exact rule: even-odd ray casting with half-open edges (see contain.go) on
// the lon/lat rings, which is ray casting in the plane against the edges'
// curved images, since a horizontal ray of the plane is a parallel. Every
// test the sampler makes (for the feature, for masks, in every method) is
// that rule, so no dot falls outside the lon/lat polygon.
//
// A part whose ring jumps by more than 180° of longitude between vertices
// is taken to cross the antimeridian: its rings are unwrapped (longitudes
// shifted by 360°) before sampling and dots are wrapped back. Parts already
// cut at ±180 (RFC 7946 §3.1.9) are simply separate parts.
//
// # Methods
//
// Each polygon (part) gets the cheapest method whose cost per dot does not
// depend on how much of its box it fills:
//
//   - box: uniform proposals in the bounding box, kept when inside; used for
//     simple parts that fill at least half their box and have at most 2048
//     edges (measured, see shape.go);
//   - triangles: the part is cut into triangles by ear clipping with hole
//     bridging, a triangle is chosen by area (alias table) and a point drawn
//     uniformly in it; every proposal is kept;
//   - grid: for parts whose rings cross, touch or nest, or that fail to
//     triangulate: cells of the box classified inside/outside/boundary, a
//     cell drawn uniformly among inside and boundary cells, the point tested
//     only in boundary cells; the grid is refined until at least half the
//     proposals are kept. Such parts are filled by the even-odd rule and
//     Result.EvenOdd reports crossing or nesting rings.
//
// A feature's parts are chosen by proposal area and a rejected proposal
// starts again from the choice of part, which is uniform over the union of
// the parts whatever mix of methods they use. Containment tests on big
// rings read an index of horizontal slabs, so they are not linear in the
// number of vertices.
//
// # Masks
//
// Options.Masks (NewMask) are areas where nobody lives; dots are redrawn
// until they fall outside them, at most Options.MaxAttempts times per dot.
// When a feature's dots find no room outside the masks, all its dots are
// placed ignoring the masks and Result.MaskIgnored says so: people are never
// lost to masks.
//
// # Reproducibility
//
// Every random number that decides a dot comes from a generator seeded by
// (seed, feature id, category, dot index) alone, so the same dot lands in
// the same place whatever the file order, the number of workers, the zoom
// or the shard; given the feature's geometry and the masks, dot i of a
// category does not depend on how many dots follow it. Only the all-or-
// nothing mask fallback looks at the feature's other dots.
//
// # Problems
//
// Bad geometry never panics or hangs: every loop is bounded. A feature with
// people but no area gets its dots along its outline (Result.NoArea), or
// loses them when it has no vertex at all (Result.Lost); Result.Problem
// describes what happened in one line.
package sample
