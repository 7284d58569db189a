// Package demo makes stipple's built-in example: Quillmere, an invented
// harbour city of about 640,000 invented people in five invented home-language
// groups. Nothing in it is real: the city, its districts, its groups and its
// numbers all come from a seeded procedure in this package, and it is placed
// in the open South Pacific, where no city is.
//
// The city is built to be worth looking at: about 550 areas on a warped grid
// whose vertices are shared (no gaps, no overlaps), a river with no people
// crossing it to a bay on the east coast, a park with a lake (a polygon with
// a hole), a dense centre, and groups that cluster in different districts and
// mix at their edges.
package demo
