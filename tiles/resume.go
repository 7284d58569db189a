package tiles

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/stipple-maps/stipple/tiles/sink"
)

// StateDir is the folder inside the output folder where stipple keeps what a
// rerun needs: the dot store, the tile manifest and temporary files.
const StateDir = ".stipple"

const manifestName = "tiles.json"

// manifest records which zooms of a pyramid are complete, for the run
// fingerprint that made them. It is rewritten atomically after each zoom.
type manifest struct {
	Fingerprint string `json:"fingerprint"`
	// Done maps "z" (or "z@2x") to the totals of a finished zoom.
	Done map[string]ZoomStats `json:"done"`
	// Zooms lists every zoom key a run with this fingerprint began, so a
	// run with another fingerprint knows which folders to clear.
	Zooms []string `json:"zooms"`
}

// ZoomStats are the totals of one zoom of one pass.
type ZoomStats struct {
	Tiles int64 `json:"tiles"`
	Bytes int64 `json:"bytes"`
	Empty int64 `json:"empty"`
}

func manifestPath(dir string) string { return filepath.Join(dir, StateDir, manifestName) }

// openManifest loads the manifest for fingerprint fp. It reports resuming =
// true when an earlier run with the same fingerprint left tiles to keep. A
// manifest with another fingerprint has its zooms' tiles removed first, so
// no tile of an old look survives beside the new ones; with keep set, only
// the tiles keep accepts (a part of a sharded render removes its own
// tiles, never those of the other parts sharing the output).
func openManifest(ctx context.Context, dir string, out sink.Sink, fp string, keep func(z, x, y int) bool) (man *manifest, resuming bool, err error) {
	man = &manifest{Fingerprint: fp, Done: map[string]ZoomStats{}}
	// A run killed while it saved the manifest leaves WriteFileAtomic's
	// temporary file; this run is the only writer of this manifest.
	stale, _ := filepath.Glob(filepath.Join(dir, StateDir, "*."+manifestName))
	for _, f := range stale {
		if sink.IsTemp(filepath.Base(f)) {
			os.Remove(f)
		}
	}
	data, err := os.ReadFile(manifestPath(dir))
	if err == nil {
		var old manifest
		if json.Unmarshal(data, &old) == nil && old.Fingerprint == fp && fp != "" {
			if old.Done == nil {
				old.Done = map[string]ZoomStats{}
			}
			return &old, true, nil
		}
		if json.Unmarshal(data, &old) == nil {
			for _, zk := range old.Zooms {
				if err := removeZoom(ctx, out, zk, keep); err != nil {
					return nil, false, err
				}
			}
		}
	} else if !os.IsNotExist(err) {
		return nil, false, fmt.Errorf("tiles: %w", err)
	}
	return man, false, man.save(dir)
}

// removeZoom deletes the tiles of zoom key zk ("z" or "z@2x") from out and
// nothing else: the other pass's files in the same folders are kept, and
// so are the tiles keep (when set) rejects.
func removeZoom(ctx context.Context, out sink.Sink, zk string, keep func(z, x, y int) bool) error {
	z, suffix, _ := strings.Cut(zk, "@")
	zi, err := strconv.Atoi(z)
	if err != nil {
		return nil // not ours
	}
	ours := func(name string) bool { return strings.HasSuffix(name, ".png") && !strings.Contains(name, "@") }
	if suffix != "" {
		ours = func(name string) bool { return strings.HasSuffix(name, "@"+suffix+".png") }
	}
	// match takes a tile's column folder and file name.
	match := func(col, name string) bool {
		if !ours(name) {
			return false
		}
		if keep == nil {
			return true
		}
		x, errX := strconv.Atoi(col)
		y, errY := strconv.Atoi(strings.TrimSuffix(strings.TrimSuffix(name, ".png"), "@"+suffix))
		return errX == nil && errY == nil && keep(zi, x, y)
	}
	if d, ok := out.(*sink.Dir); ok {
		return walkRemove(filepath.Join(d.Root(), z), match)
	}
	var old []string
	if err := out.List(ctx, z+"/", func(p string, _ int64) error {
		parts := strings.Split(p, "/")
		if len(parts) == 3 && match(parts[1], parts[2]) {
			old = append(old, p)
		}
		return nil
	}); err != nil {
		return err
	}
	for _, p := range old {
		if err := out.Delete(ctx, p); err != nil {
			return err
		}
	}
	return nil
}

func walkRemove(zdir string, match func(col, name string) bool) error {
	cols, err := os.ReadDir(zdir)
	if os.IsNotExist(err) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("tiles: %w", err)
	}
	for _, c := range cols {
		if !c.IsDir() {
			continue
		}
		cdir := filepath.Join(zdir, c.Name())
		files, err := os.ReadDir(cdir)
		if err != nil {
			return fmt.Errorf("tiles: %w", err)
		}
		for _, f := range files {
			if match(c.Name(), f.Name()) {
				if err := os.Remove(filepath.Join(cdir, f.Name())); err != nil {
					return fmt.Errorf("tiles: %w", err)
				}
			}
		}
		os.Remove(cdir) // only if now empty
	}
	os.Remove(zdir)
	return nil
}

func (m *manifest) save(dir string) error {
	data, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return fmt.Errorf("tiles: %w", err)
	}
	return WriteFileAtomic(manifestPath(dir), append(data, '\n'))
}

func (m *manifest) began(zk string) bool {
	for _, z := range m.Zooms {
		if z == zk {
			return true
		}
	}
	m.Zooms = append(m.Zooms, zk)
	return false
}

// WriteFileAtomic writes data to a temporary file beside path (a name of
// its own, so two writers never share one) and renames it into place, so
// path holds either its old content or all of data, even if the process is
// killed (rename is atomic within a file system, POSIX rename(2)).
func WriteFileAtomic(path string, data []byte) error {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("tiles: %w", err)
	}
	// The temporary name carries this process's token: a run killed
	// between the create and the rename leaves a file that the next run
	// taking over the folder removes (sink.Dir.SweepTemp) and that no
	// listing or publish step counts as output (sink.IsTemp).
	var f *os.File
	var err error
	for try := 0; ; try++ {
		f, err = os.OpenFile(sink.TempPath(dir, filepath.Base(path)), os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if err == nil || !os.IsExist(err) || try == 9 {
			break
		}
	}
	if err != nil {
		return fmt.Errorf("tiles: %w", err)
	}
	tmp := f.Name()
	_, werr := f.Write(data)
	if cerr := f.Close(); werr == nil {
		werr = cerr
	}
	if werr == nil {
		werr = os.Rename(tmp, path)
	}
	if werr != nil {
		os.Remove(tmp)
		return fmt.Errorf("tiles: %w", werr)
	}
	return nil
}

// Resumable reports whether a Write into state folder dir with fingerprint
// fp would keep the tiles an earlier run left (the same fingerprint);
// false means those tiles are about to be replaced.
func Resumable(dir, fp string) bool {
	data, err := os.ReadFile(manifestPath(dir))
	if err != nil {
		return false
	}
	var old manifest
	return json.Unmarshal(data, &old) == nil && old.Fingerprint == fp && fp != ""
}

// dropOutside removes the tiles of zooms an earlier run with the same
// fingerprint wrote but this run's range (or @2x setting) leaves out, and
// forgets them, so a folder holds only the zooms its metadata names.
func (m *manifest) dropOutside(ctx context.Context, opt Options) error {
	var kept []string
	changed := false
	for _, zk := range m.Zooms {
		z, suffix, _ := strings.Cut(zk, "@")
		n, err := strconv.Atoi(z)
		if err != nil || (n >= opt.MinZoom && n <= opt.MaxZoom && (suffix == "" || opt.HiDPI)) {
			kept = append(kept, zk)
			continue
		}
		if err := removeZoom(ctx, opt.Out, zk, opt.Keep); err != nil {
			return err
		}
		delete(m.Done, zk)
		changed = true
	}
	if !changed {
		return nil
	}
	m.Zooms = kept
	return m.save(opt.Dir)
}
