package sink

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"net/url"
	"path"
	"path/filepath"
	"strings"
)

// Sink is a place that holds a map's files by slash-separated path.
// Implementations are safe for concurrent use.
type Sink interface {
	// Put stores data at path atomically (see the package doc), with the
	// content type and Cache-Control value the store should serve it with.
	Put(ctx context.Context, path string, data []byte, contentType, cacheControl string) error
	// Exists reports whether path holds a complete object, and its size.
	Exists(ctx context.Context, path string) (size int64, ok bool, err error)
	// Get returns the content at path; the error wraps fs.ErrNotExist when
	// there is none.
	Get(ctx context.Context, path string) ([]byte, error)
	// List calls fn for every object whose path starts with prefix, in
	// lexical order of path.
	List(ctx context.Context, prefix string, fn func(path string, size int64) error) error
	// Delete removes path; removing a path that holds nothing is no error.
	Delete(ctx context.Context, path string) error
	// Close releases the sink's connections.
	Close() error
	// String names the sink for messages: the folder or the bucket URL.
	String() string
}

// FreshPutter is implemented by sinks that can skip Put's temporary file
// for a path that holds nothing yet (Dir).
type FreshPutter interface {
	// PutFresh stores data at path like Put, except that when path holds
	// nothing yet the file is written there directly, with no temporary
	// name and no rename: while the write runs, and after a kill during
	// it, the path may hold part of data. A path that holds a file is
	// replaced atomically, as by Put. Only for files whose writer redoes
	// every one it did not record as finished: the tiles of a zoom the
	// resume manifest does not list as done.
	PutFresh(ctx context.Context, path string, data []byte, contentType, cacheControl string) error
}

// ErrNotExist is returned (wrapped) by Get for a path that holds nothing.
var ErrNotExist = fs.ErrNotExist

// Open returns the sink a location names. A location with a scheme is a
// bucket URL of the blob library: s3://bucket/prefix?region=…,
// gs://bucket/prefix, azblob://container/prefix, file:///abs/folder or
// mem://; file:// names a local folder. The bucket's path, if any, becomes a prefix under which every path
// lives, so several maps can share one bucket. A location without a scheme
// is a local folder, created on the first Put.
func Open(ctx context.Context, location string) (Sink, error) {
	if location == "" {
		return nil, errors.New("sink: empty output location")
	}
	if !strings.Contains(location, "://") {
		return NewDir(location), nil
	}
	u, err := url.Parse(location)
	if err != nil {
		return nil, fmt.Errorf("sink: %q: %w", location, err)
	}
	if u.Scheme == "file" {
		// A file:// URL is a local folder; a Dir writes it without the
		// blob library's attribute side files.
		if u.Host != "" && u.Host != "localhost" {
			return nil, fmt.Errorf("sink: %s: a file:// URL names a folder on this machine (file:///path)", location)
		}
		return NewDir(filepath.FromSlash(u.Path)), nil
	}
	return openBucket(ctx, u)
}

// IsBucketURL reports whether location names a bucket rather than a local
// folder.
func IsBucketURL(location string) bool { return strings.Contains(location, "://") }

// CheckPath returns an error unless p is a clean relative slash path
// inside the root.
func CheckPath(p string) error {
	if p == "" || strings.HasPrefix(p, "/") || strings.Contains(p, "\\") || path.Clean(p) != p || p == ".." || strings.HasPrefix(p, "../") {
		return fmt.Errorf("sink: path %q is not a clean relative path", p)
	}
	return nil
}

// TypeOf is the media type stipple serves a file with, by extension (IANA
// media types registry; text/javascript per RFC 9239 §6, application/json
// per RFC 8259 §11). Text types carry charset=utf-8. Unknown extensions get
// application/octet-stream (RFC 2046 §4.5.1).
func TypeOf(name string) string {
	switch strings.ToLower(path.Ext(name)) {
	case ".png":
		return "image/png"
	case ".json":
		return "application/json"
	case ".html":
		return "text/html; charset=utf-8"
	case ".js":
		return "text/javascript; charset=utf-8"
	case ".css":
		return "text/css; charset=utf-8"
	case ".svg":
		return "image/svg+xml"
	case ".pdf":
		return "application/pdf"
	case ".ttf":
		return "font/ttf" // RFC 8081 §4.4.2
	case ".txt", ".md":
		return "text/plain; charset=utf-8"
	}
	return "application/octet-stream"
}

// Cache-Control values (RFC 9111 §5.2.2). Tiles of a finished render do not
// change unless the map is rendered again, so browsers and CDNs may keep
// them a day (common practice for tile sets that are replaced rarely);
// the metadata, viewer and legends are small and say which tiles exist, so
// they are revalidated on every load ("no-cache": store, but ask first).
const (
	CacheTiles = "public, max-age=86400"
	CacheFresh = "no-cache"
	// CacheState is for stipple's own bookkeeping under .stipple/, which
	// no browser needs.
	CacheState = "private, no-store"
)

// CacheOf is the Cache-Control value stipple serves a file with.
func CacheOf(name string) string {
	if strings.HasPrefix(name, ".stipple/") {
		return CacheState
	}
	if strings.HasSuffix(name, ".png") && !strings.Contains(name, "/") {
		return CacheFresh // legend.png and friends at the root
	}
	if strings.HasSuffix(name, ".png") {
		return CacheTiles
	}
	return CacheFresh
}

// PutFile is Put with the content type and cache header TypeOf and CacheOf
// give for path.
func PutFile(ctx context.Context, s Sink, path string, data []byte) error {
	return s.Put(ctx, path, data, TypeOf(path), CacheOf(path))
}
