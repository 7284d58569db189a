// Package sample places dots: for each feature and category it decides how
// many dots the count makes (count / people per dot, rounded without bias)
// and puts each one at random inside the feature's polygons.
//
// Coordinate space: input polygons and output points are longitude/latitude
// degrees (WGS 84). Dots are drawn uniformly with respect to area on the
// sphere, by sampling in the cylindrical equal-area plane x = longitude,
// y = sin(latitude) and testing containment there; straight polygon edges are
// taken as straight in that plane, which at the scale of census areas differs
// from any other reading of "straight" by far less than a dot.
//
// Reproducibility: every random number that decides a dot comes from a
// generator seeded by (seed, feature id, category, dot index) alone, so the
// same dot lands in the same place whatever the file order, the number of
// workers, the zoom or the shard.
package sample
