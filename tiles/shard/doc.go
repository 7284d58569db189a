// Package shard splits one tile pyramid into N parts that separate machines
// (or processes) render on their own, and puts the parts back together.
//
// Coordinate spaces: dots and bounds are dotstore world coordinates (Web
// Mercator, 2^29 cells a side, x east from 180°W, y south from 85.0511°N);
// blocks and tiles are XYZ tile numbers (OSM wiki "Slippy map tilenames").
//
// The partition. A Layout cuts the world at a split zoom S into blocks, the
// tiles of zoom S, and gives every block to one shard. Blocks are taken in
// Z-order (the order of the dot store's keys) and cut into N contiguous runs
// of about equal estimated work, so a shard is a compact region. Work is
// counted from the dots, not from the area: each dot's drawing at every
// zoom from S down, the sampling of every dot of each area near the run's
// blocks (a part samples such an area whole, its own dots or not, so an
// area across a cut is charged to both runs), plus each tile the dots are
// expected to ink
// (EstimateTiles: thinly peopled land has many tiles per dot, and a tile
// costs tens of microseconds to composite, encode and write), at
// MeasuredRates or at Rates measured for the job: what a tile file costs
// depends on where the tiles go, and ProbeFiles measures it there
// (stipple plan --probe writes a rates file, ReadRates reads it).
// A tile of zoom z ≥ S belongs to the shard that owns the block above it.
// The layout is computed from the input alone (each area's bound, fill and
// expected dots, plus a few sample points for the areas that span blocks),
// so every shard, the plan command and the final step compute the same
// layout without talking to each other; its Fingerprint is written into
// every shard's report and checked by the final step.
//
// A shard samples only the areas whose bound comes within Margin of its
// blocks, keeps the dots within Margin of its blocks, and renders the tiles
// of zooms S … max that its blocks hold. Margin is the farthest a dot's disc
// reaches beyond its own tile at any zoom ≥ S, so the dots a shard keeps are
// all the dots that can ink its tiles, and its tiles are byte for byte those
// of a single-machine render.
//
// The final step. Zooms below S cover several shards' blocks and need every
// dot. They are rendered by one final step from the shards' summaries
// instead of from the dots: the split zoom is chosen no deeper than the
// first zoom at which a dot is a disc (at least a pixel wide), so every zoom
// below it is a count tile, where a dot only adds one to the pixel holding
// its centre. A shard's Summary is the number of its dots per category in
// every pixel of zoom S−1 (at the finest tile size drawn), which is all a
// count tile of any zoom below S depends on: the pixel of zoom z−1 is the
// pixel of zoom z halved. The summaries hold at most one entry per occupied
// pixel of zoom S−1, far fewer than the dots, and the final step reads
// them, adds them up per pixel and draws 4^(S−min)/3 tiles or fewer, with
// no sampling and no geometry. It also writes the metadata, legend and
// viewer from the shards' reports (tile counts, and what became of the
// dots of areas that did not go plainly onto the tiles).
package shard
