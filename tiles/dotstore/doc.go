// Package dotstore holds placed dots compactly, in an order that makes every
// XYZ tile at every zoom one contiguous run.
//
// Coordinate space: a dot is kept as integer Web Mercator "world" coordinates
// of WorldBits bits per axis (x east from 180°W, y south from 85.0511°N; the
// square world of EPSG:3857 split into 2^29 × 2^29 cells, about 7.5 cm at
// the equator) and a category number. Both go into one uint64 key: the Morton
// (Z-order) interleave of x and y in the high 58 bits, the category in the low
// 6. Sorting the keys sorts the dots along the Z-order curve, and the dots of
// tile (z, x, y) for any z ≤ WorldBits are exactly the keys whose top 2z bits
// equal the interleave of the tile's x and y. Placed dots get their cells
// from WorldFromSin (longitude and the sine of latitude the sampler drew);
// World takes longitude and latitude.
//
// Size: a Builder gathers keys from many goroutines within a memory budget
// (16 bytes a dot: the keys and the radix sort's second buffer). Past the
// budget it sorts the buffer (SortKeys, a parallel LSD radix sort) and writes
// it out as a run; Finish k-way merges the runs into one store file, which
// Open maps read-only. A store file is a 4096-byte header (magic "STIPDOT1",
// key count, count per category) followed by the sorted keys, little-endian.
// The keys, and so every tile drawn from them, are the same whether the store
// was built in memory or spilled, and for any number of workers.
package dotstore
