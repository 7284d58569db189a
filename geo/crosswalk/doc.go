// Package crosswalk carries counts from one set of areas onto another: an
// older count on older boundaries put onto the newer boundaries, so two
// counts can be drawn, and compared, on one geography.
//
// # Relationship table
//
// A crosswalk is a list of pairs (source id, target id, weight), as
// statistics offices publish relationship files between two sets of
// boundaries: the weight is the share of the source area's people (or
// area) that lies in the target. Read reads such a CSV file; AreaWeights
// makes one from the two sets of polygons when none is given, weighting by
// the share of each source area's area inside each target (areal
// interpolation: the people of an area are taken to be spread evenly over
// it, a common first assumption with known error where they are not).
//
// Areas are measured on the sphere through the cylindrical equal-area
// plane x = longitude, y = sin(latitude) (Lambert's cylindrical equal-area
// projection): equal areas of the plane are equal areas of the sphere,
// since the zone between latitudes a < b covers 2πR²(sin b − sin a)
// (Archimedes' hat-box theorem; ../shared/CHECKS.md, "Sphere geometry").
// Edges are straight lines in that plane, the same reading of a polygon as
// package sample's, which places the dots.
//
// # Weights that do not sum to 1
//
// A source's weights should sum to 1. Published tables round their
// weights (three thirds of 0.333), and area weights miss the slivers of a
// source that no target covers (a coast drawn differently). The rule here:
// each source's weights are divided by their sum (normalised per source),
// so every person of a listed source lands somewhere; a source whose sum
// is off by more than Tolerance is named in the report. A source whose
// weights are all zero, or that the table does not list, is unmatched: its
// people are reported as lost, not spread. People sent to a target id that
// is not among the targets are lost too, and reported.
//
// Totals are kept exactly apart from rounding: people before = people
// after + people lost (Report.Before, After, Lost).
package crosswalk
