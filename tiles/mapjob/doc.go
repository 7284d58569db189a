// Package build runs one map file end to end: read the areas and their
// counts, place the dots, write the tile pyramid, legend, metadata and
// viewer, and account for every person in the input (drawn, or counted as
// not drawn with a reason).
package mapjob
