// Package sink is where a rendered map goes: a local folder or a bucket of
// an object store (S3, Google Cloud Storage, Azure Blob Storage, or a
// file:// folder through the same blob library).
//
// Paths are slash-separated and relative to the sink's root, the way they
// appear in URLs: "9/261/170.png", "map.json", ".stipple/tiles.json". A path
// is never absolute and never climbs out of the root ("..").
//
// Contract: Put is atomic. A path holds either nothing, its old content, or
// all of the new data, even when the process is killed mid-write: a folder
// writes a temporary file and renames it, an object store makes an object
// visible only when its upload completes. A reader of the sink therefore
// never sees half a tile, and a rerun can trust whatever Exists reports.
//
// The one exception is asked for by name: a folder's PutFresh
// (FreshPutter) writes a file that does not exist yet in place, so until
// the write ends, or after a kill during it, the path can hold part of it.
// The tile writer uses it, because a resumed run keeps a tile of an
// unfinished zoom only when the whole PNG is there and writes the rest
// again.
//
// Content types and cache headers are stored with each object where the
// store keeps them (object stores); a local folder ignores them, since the
// web server that serves it derives them from the file extension. TypeOf
// and CacheOf give the values stipple uses.
//
// Object-storage drivers are large (gocloud.dev/blob alone adds about 14 MB
// to a binary, S3 another 14, Google Cloud Storage 34, Azure 8), so they
// come with build tags: -tags stipple_cloud builds all three, stipple_s3,
// stipple_gcs and stipple_azure one each. Without a tag, local folders and
// file:// URLs work and a bucket URL is a clear error (measurements in
// BENCHMARKS.md, "Sharded renders").
package sink
