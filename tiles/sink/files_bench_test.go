package sink

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// benchTrees are the folders the file benchmarks made; TestMain removes
// them when every benchmark has run. On ext4 without a journal (the build
// machines' disk), creating files soon after many were deleted scans the
// freed inodes (the kernel skips inodes deleted in the last minutes),
// which would slow whatever ran after a removal: removing BenchmarkTileFiles'
// trees before BenchmarkTileFilesTwoWriters made its first two modes 3 to
// 8 times slower (BENCHMARKS.md, "Tile files").
var benchTrees []string

func TestMain(m *testing.M) {
	code := m.Run()
	for _, t := range benchTrees {
		os.RemoveAll(t)
	}
	os.Exit(code)
}

// BenchmarkTileFiles measures the file-system cost of writing one tile of
// 4 KiB (a typical sparse tile) six ways, in a fresh z/x/y tree of 64
// tiles per column folder:
//
//   - crossdir: an early Put (CreateTemp in .stipple/put, write, chmod,
//     rename across folders), kept here as the reference;
//   - shared: the previous Put (O_EXCL temporary with mode 0644 in the
//     one shared folder .stipple/put, write, rename across folders);
//   - osput: the Put of 2026-12-05 morning (O_EXCL temporary beside the
//     tile, write, rename within the tile's folder, through package os);
//   - put: Put (the same, making the system calls itself: no fcntl,
//     epoll_ctl or lstat);
//   - inplace: the tile file itself opened, written and closed (no
//     rename), through package os;
//   - fresh: PutFresh, which the tile writer uses (the tile file itself
//     created with O_EXCL, written and closed, system calls made
//     directly).
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
	// The trees are removed when the test binary ends (TestMain), not
	// between modes or benchmarks: see benchTrees.
	for _, mode := range []string{"crossdir", "shared", "osput", "put", "inplace", "fresh"} {
		b.Run(mode, func(b *testing.B) {
			base := os.Getenv("STIPPLE_BENCH_DIR")
			if base == "" {
				base = b.TempDir()
			}
			root, err := os.MkdirTemp(base, "tilefiles-")
			if err != nil {
				b.Fatal(err)
			}
			benchTrees = append(benchTrees, root)
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
				case "osput":
					err = osPut(d, p, data)
				case "fresh":
					err = d.PutFresh(ctx, p, data, "image/png", "")
				case "inplace":
					err = inPlace(d, p, data)
				case "shared":
					err = sharedDirPut(d, p, data)
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

// sharedDirPut is the Put of the previous version: an O_EXCL temporary
// with mode 0644 in the one shared folder .stipple/put, renamed across
// folders into place.
func sharedDirPut(d *Dir, p string, data []byte) error {
	full := filepath.Join(d.root, filepath.FromSlash(p))
	tmp := filepath.Join(d.root, filepath.FromSlash(TempDir), "put-"+strconv.FormatInt(tempSeq.Add(1), 36))
	if err := osWrite(d, tmp, os.O_EXCL, data); err != nil {
		return err
	}
	err := os.Rename(tmp, full)
	if os.IsNotExist(err) {
		if err := d.mkdir(filepath.Dir(full)); err != nil {
			return err
		}
		err = os.Rename(tmp, full)
	}
	return err
}

// osPut is Put through package os (os.OpenFile, os.Rename), as it was
// before Put made the system calls itself.
func osPut(d *Dir, p string, data []byte) error {
	full := filepath.Join(d.root, filepath.FromSlash(p))
	tmp := filepath.Join(filepath.Dir(full), tempToken+strconv.FormatInt(tempSeq.Add(1), 36))
	if err := osWrite(d, tmp, os.O_EXCL, data); err != nil {
		return err
	}
	return os.Rename(tmp, full)
}

// inPlace writes the tile file itself.
func inPlace(d *Dir, p string, data []byte) error {
	return osWrite(d, filepath.Join(d.root, filepath.FromSlash(p)), os.O_TRUNC, data)
}

// osWrite opens name through package os with the extra flag, writes data
// and closes it.
func osWrite(d *Dir, name string, flag int, data []byte) error {
	f, err := d.create(name, flag)
	if err != nil {
		return err
	}
	if _, err := f.Write(data); err != nil {
		return err
	}
	return f.Close()
}

// BenchmarkTileFilesTwoWriters is BenchmarkTileFiles with two goroutines
// writing at once, each into column folders of its own, as the renderer's
// two workers do on a 2-core machine. It shows what the writers cost each
// other: with shared, every file is created in, and renamed out of, the
// one temporary folder, whose lock both take.
func BenchmarkTileFilesTwoWriters(b *testing.B) {
	data := make([]byte, 4096)
	for i := range data {
		data[i] = byte(i * 7)
	}
	ctx := context.Background()
	// The trees are removed when the test binary ends (TestMain), not
	// between modes or benchmarks: see benchTrees.
	for _, mode := range []string{"shared", "osput", "put", "inplace", "fresh"} {
		b.Run(mode, func(b *testing.B) {
			base := os.Getenv("STIPPLE_BENCH_DIR")
			if base == "" {
				base = b.TempDir()
			}
			root, err := os.MkdirTemp(base, "tilefiles-")
			if err != nil {
				b.Fatal(err)
			}
			benchTrees = append(benchTrees, root)
			d := NewDir(root)
			b.SetBytes(int64(len(data)))
			b.ResetTimer()
			errs := make(chan error, 2)
			for w := 0; w < 2; w++ {
				go func() {
					var err error
					for i := w; i < b.N && err == nil; i += 2 {
						// Worker w writes the columns ≡ w mod 2.
						col := 2*(i/128) + w
						p := "12/" + strconv.Itoa(col) + "/" + strconv.Itoa(i%128/2) + ".png"
						switch mode {
						case "put":
							err = d.Put(ctx, p, data, "image/png", "")
						case "osput":
							err = osPut(d, p, data)
						case "fresh":
							err = d.PutFresh(ctx, p, data, "image/png", "")
						case "inplace":
							err = inPlace(d, p, data)
						case "shared":
							err = sharedDirPut(d, p, data)
						}
					}
					errs <- err
				}()
			}
			for w := 0; w < 2; w++ {
				if err := <-errs; err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
