package sink

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// BenchmarkTileFiles measures the file-system cost of writing one tile of
// 4 KiB (a typical sparse tile) three ways, in a fresh z/x/y tree of 64
// tiles per column folder:
//
//   - crossdir: the earlier Put (CreateTemp in .stipple/put, write, chmod,
//     rename across folders), kept here as the reference;
//   - put: Put (O_EXCL temporary in .stipple/put with mode 0644, write,
//     rename across folders: no chmod);
//   - samedir: an O_EXCL temporary beside the tile, renamed within the
//     tile's folder;
//   - inplace: the tile file itself opened, written and closed (no
//     rename).
//
// STIPPLE_BENCH_DIR picks the file system (for example a folder on disk
// and one under /dev/shm); the default is the test's temporary folder.
// BENCHMARKS.md, "Tile files", records the figures.
func BenchmarkTileFiles(b *testing.B) {
	data := make([]byte, 4096)
	for i := range data {
		data[i] = byte(i * 7)
	}
	ctx := context.Background()
	for _, mode := range []string{"crossdir", "put", "inplace", "samedir"} {
		b.Run(mode, func(b *testing.B) {
			base := os.Getenv("STIPPLE_BENCH_DIR")
			if base == "" {
				base = b.TempDir()
			}
			root, err := os.MkdirTemp(base, "tilefiles-")
			if err != nil {
				b.Fatal(err)
			}
			defer os.RemoveAll(root)
			d := NewDir(root)
			b.SetBytes(int64(len(data)))
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				p := "12/" + strconv.Itoa(i/64) + "/" + strconv.Itoa(i%64) + ".png"
				switch mode {
				case "crossdir":
					err = crossDirPut(d, p, data)
				case "put":
					err = d.Put(ctx, p, data, "image/png", "")
				case "inplace":
					err = inPlace(d, p, data)
				case "samedir":
					err = sameDirPut(d, p, data)
				}
				if err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// crossDirPut is the Put of earlier versions: a temporary file in the
// state folder, chmod, and a rename across folders.
func crossDirPut(d *Dir, p string, data []byte) error {
	full := filepath.Join(d.root, filepath.FromSlash(p))
	tmpDir := filepath.Join(d.root, filepath.FromSlash(TempDir))
	for _, m := range []string{filepath.Dir(full), tmpDir} {
		if _, ok := d.made.Load(m); !ok {
			if err := os.MkdirAll(m, 0o755); err != nil {
				return err
			}
			d.made.Store(m, true)
		}
	}
	f, err := os.CreateTemp(tmpDir, "put-*")
	if err != nil {
		return err
	}
	if _, err := f.Write(data); err != nil {
		return err
	}
	if err := f.Close(); err != nil {
		return err
	}
	if err := os.Chmod(f.Name(), 0o644); err != nil {
		return err
	}
	if err := os.Rename(f.Name(), full); err != nil {
		return fmt.Errorf("rename: %w", err)
	}
	return nil
}

// sameDirPut writes under a temporary name in the tile's own folder and
// renames it within that folder.
func sameDirPut(d *Dir, p string, data []byte) error {
	full := filepath.Join(d.root, filepath.FromSlash(p))
	dir, base := filepath.Split(full)
	tmp := dir + "." + base + "." + tempToken + "-" + strconv.FormatInt(tempSeq.Add(1), 36) + ".tmp"
	f, err := d.create(tmp, os.O_EXCL)
	if err != nil {
		return err
	}
	if _, err := f.Write(data); err != nil {
		return err
	}
	if err := f.Close(); err != nil {
		return err
	}
	return os.Rename(tmp, full)
}

// inPlace writes the tile file itself.
func inPlace(d *Dir, p string, data []byte) error {
	f, err := d.create(filepath.Join(d.root, filepath.FromSlash(p)), os.O_TRUNC)
	if err != nil {
		return err
	}
	if _, err := f.Write(data); err != nil {
		return err
	}
	return f.Close()
}
