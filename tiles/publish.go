package tiles

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/stipple-maps/stipple/tiles/sink"
)

// PublishOptions set how Publish works.
type PublishOptions struct {
	// BaseURL, when set, is where DEST will be served from; tilejson.json
	// in DEST names the tiles under it.
	BaseURL string
	// Resume keeps files DEST holds with the same size.
	Resume bool
}

// PublishStats count what Publish did: Files and Bytes are what DEST now
// holds of the map (copied or kept), LeftOut what was not copied.
type PublishStats struct {
	Files, Bytes, Kept    int64
	LeftOut, LeftOutBytes int64
}

// WebFile reports whether a web host needs the file at slash path p of a
// rendered folder: not stipple's state, no dot-file or file inside a
// dot-folder (the same rule as stipple serve), no half-written .tmp file.
func WebFile(p string) bool {
	if sink.SkipState(p) {
		return false
	}
	for _, part := range strings.Split(p, "/") {
		if strings.HasPrefix(part, ".") {
			return false
		}
	}
	return true
}

// Publish copies what a web host needs of the rendered map at from (a
// folder or a sink URL) into to (a folder or a bucket URL): the tiles,
// tile index, viewer, legends, map.json, tilejson.json, methods.txt and
// any other file of the folder, but not stipple's state (.stipple/: the
// dot store and the tile manifest), dot-files or half-written files. The
// map's entry points (index.html, embed.html, map.json) go last, so the
// destination never offers the map over missing tiles. A folder that
// holds no map.json is refused, as is a destination inside from.
func Publish(ctx context.Context, from, to string, opt PublishOptions) (PublishStats, error) {
	var st PublishStats
	if !sink.IsBucketURL(from) {
		if !sink.IsBucketURL(to) || strings.HasPrefix(to, "file://") {
			if inside(from, to) {
				return st, fmt.Errorf("publish: %s is inside %s; publish into a folder of its own", to, from)
			}
		}
	}
	src, err := sink.Open(ctx, from)
	if err != nil {
		return st, err
	}
	defer src.Close()
	// A map has map.json; a viewer over several layers or a batch folder
	// has index.html at the top.
	var md *Metadata
	raw, err := src.Get(ctx, MetadataFile)
	switch {
	case err == nil:
		md = new(Metadata)
		if err := json.Unmarshal(raw, md); err != nil {
			return st, fmt.Errorf("publish: %s: %w", filepath.Join(from, MetadataFile), err)
		}
	case errors.Is(err, sink.ErrNotExist):
		if _, ok, err := src.Exists(ctx, ViewerPage); err != nil {
			return st, err
		} else if !ok {
			return st, fmt.Errorf("publish: %s has no %s or %s: not a finished render (render it, or finish the render, first)", from, MetadataFile, ViewerPage)
		}
		if opt.BaseURL != "" {
			return st, fmt.Errorf("publish: %s has no %s to describe in tilejson.json; publish it without a URL", from, MetadataFile)
		}
	default:
		return st, err
	}
	dst, err := sink.Open(ctx, to)
	if err != nil {
		return st, err
	}
	defer dst.Close()
	if err := src.List(ctx, "", func(p string, size int64) error {
		if !WebFile(p) {
			st.LeftOut++
			st.LeftOutBytes += size
		}
		return nil
	}); err != nil {
		return st, err
	}
	// Tiles and everything else first, the entry points last, so DEST
	// never offers the map over files that are not there yet.
	entry := func(p string) bool { return p == ViewerPage || p == EmbedPage || p == MetadataFile }
	for _, pass := range []func(string) bool{
		func(p string) bool { return !WebFile(p) || entry(p) },
		func(p string) bool { return !WebFile(p) || !entry(p) },
	} {
		cs, err := sink.Copy(ctx, dst, src, sink.CopyOptions{Skip: pass, Overwrite: !opt.Resume})
		if err != nil {
			return st, fmt.Errorf("publish: %w", err)
		}
		st.Files += cs.Copied + cs.Kept
		st.Bytes += cs.Bytes
		st.Kept += cs.Kept
	}
	if st.Kept > 0 {
		// Kept files count in the size DEST holds.
		st.Bytes = 0
		if err := src.List(ctx, "", func(p string, size int64) error {
			if WebFile(p) {
				st.Bytes += size
			}
			return nil
		}); err != nil {
			return st, err
		}
	}
	if opt.BaseURL != "" {
		old, _, _ := dst.Exists(ctx, TileJSONFile)
		if err := PutTileJSONAt(ctx, dst, md, opt.BaseURL); err != nil {
			return st, err
		}
		now, _, _ := dst.Exists(ctx, TileJSONFile)
		st.Bytes += now - old
	}
	if d, ok := dst.(*sink.Dir); ok {
		// Copy links a folder's files through .stipple/put; take the emptied
		// folders away (os.Remove leaves a folder that holds anything).
		os.Remove(filepath.Join(d.Root(), filepath.FromSlash(sink.TempDir)))
		os.Remove(filepath.Join(d.Root(), StateDir))
	}
	return st, nil
}

// inside reports whether folder b is a itself or lies inside folder a.
func inside(a, b string) bool {
	b = strings.TrimPrefix(b, "file://")
	aa, err1 := filepath.Abs(a)
	bb, err2 := filepath.Abs(b)
	if err1 != nil || err2 != nil {
		return false
	}
	rel, err := filepath.Rel(aa, bb)
	return err == nil && (rel == "." || !strings.HasPrefix(rel, ".."))
}
