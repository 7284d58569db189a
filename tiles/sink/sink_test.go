package sink

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

func openAll(t *testing.T) map[string]Sink {
	t.Helper()
	ctx := context.Background()
	locs := map[string]string{
		"dir":      filepath.Join(t.TempDir(), "out"),
		"file-url": "file://" + filepath.ToSlash(filepath.Join(t.TempDir(), "bucket")),
	}
	for k, v := range bucketLocations(t) {
		locs[k] = v
	}
	out := map[string]Sink{}
	for name, loc := range locs {
		s, err := Open(ctx, loc)
		if err != nil {
			t.Fatalf("%s: Open(%q): %v", name, loc, err)
		}
		t.Cleanup(func() { s.Close() })
		out[name] = s
	}
	return out
}

// TestSinksRoundTrip runs the same sequence against every kind of sink.
func TestSinksRoundTrip(t *testing.T) {
	ctx := context.Background()
	for name, s := range openAll(t) {
		t.Run(name, func(t *testing.T) {
			files := map[string][]byte{
				"map.json":          []byte(`{"format":"stipple-map/1"}` + "\n"),
				"9/261/170.png":     bytes.Repeat([]byte{0x89, 'P', 'N', 'G'}, 100),
				"9/261/171.png":     {1, 2, 3},
				"9/262/170@2x.png":  {},
				".stipple/tiles.js": []byte("{}"),
			}
			for p, d := range files {
				if err := PutFile(ctx, s, p, d); err != nil {
					t.Fatal(err)
				}
			}
			for p, d := range files {
				got, err := s.Get(ctx, p)
				if err != nil {
					t.Fatal(err)
				}
				if !bytes.Equal(got, d) {
					t.Errorf("%s: got %d bytes, want %d", p, len(got), len(d))
				}
				n, ok, err := s.Exists(ctx, p)
				if err != nil || !ok || n != int64(len(d)) {
					t.Errorf("Exists(%s) = %d, %v, %v; want %d, true", p, n, ok, err, len(d))
				}
			}
			if _, ok, err := s.Exists(ctx, "9/1/1.png"); ok || err != nil {
				t.Errorf("Exists of a missing path = %v, %v", ok, err)
			}
			if _, err := s.Get(ctx, "9/1/1.png"); !errors.Is(err, ErrNotExist) {
				t.Errorf("Get of a missing path: %v; want ErrNotExist", err)
			}
			var listed []string
			if err := s.List(ctx, "9/", func(p string, size int64) error {
				listed = append(listed, fmt.Sprintf("%s:%d", p, size))
				return nil
			}); err != nil {
				t.Fatal(err)
			}
			want := []string{"9/261/170.png:400", "9/261/171.png:3", "9/262/170@2x.png:0"}
			if !slices.Equal(listed, want) {
				t.Errorf("List(9/) = %v; want %v", listed, want)
			}
			// Overwrite, then delete (twice: the second is no error).
			if err := PutFile(ctx, s, "9/261/171.png", []byte("new")); err != nil {
				t.Fatal(err)
			}
			if got, _ := s.Get(ctx, "9/261/171.png"); string(got) != "new" {
				t.Errorf("overwrite: got %q", got)
			}
			for i := 0; i < 2; i++ {
				if err := s.Delete(ctx, "9/261/171.png"); err != nil {
					t.Fatal(err)
				}
			}
			if _, ok, _ := s.Exists(ctx, "9/261/171.png"); ok {
				t.Error("deleted path still exists")
			}
			for _, bad := range []string{"", "/abs.png", "../up.png", "a/../b.png", "a//b.png", `a\b.png`, "./a.png"} {
				if err := s.Put(ctx, bad, nil, "", ""); err == nil {
					t.Errorf("Put(%q) accepted", bad)
				}
			}
		})
	}
}

// TestDirPutIsAtomic: a cancelled Put leaves the old file, and no
// temporary file stays behind; one a killed Put left is never listed.
func TestDirPutIsAtomic(t *testing.T) {
	root := t.TempDir()
	d := NewDir(root)
	ctx := context.Background()
	if err := d.Put(ctx, "1/0/0.png", []byte("old"), "", ""); err != nil {
		t.Fatal(err)
	}
	cctx, cancel := context.WithCancel(ctx)
	cancel()
	if err := d.Put(cctx, "1/0/0.png", []byte("new"), "", ""); err == nil {
		t.Error("Put with a cancelled context succeeded")
	}
	if b, _ := os.ReadFile(filepath.Join(root, "1", "0", "0.png")); string(b) != "old" {
		t.Errorf("file holds %q; want the old content", b)
	}
	entries, _ := os.ReadDir(filepath.Join(root, "1", "0"))
	if len(entries) != 1 {
		t.Errorf("folder holds %d entries; want 1", len(entries))
	}
	// A temporary file left by a killed Put, beside the tile, is not
	// listed.
	planted := filepath.Join(root, "1", "0", TempToken("elsewhere", 123)+"abc-1")
	if err := os.WriteFile(planted, []byte("half"), 0o644); err != nil {
		t.Fatal(err)
	}
	var listed []string
	d.List(ctx, "", func(p string, _ int64) error { listed = append(listed, p); return nil })
	if len(listed) != 1 || listed[0] != "1/0/0.png" {
		t.Errorf("List = %v; want [1/0/0.png]", listed)
	}
	// Put leaves nothing of its own beside the tile, and no shared
	// temporary folder.
	if err := d.Put(ctx, "1/0/0.png", []byte("newer"), "", ""); err != nil {
		t.Fatal(err)
	}
	if entries, _ := os.ReadDir(filepath.Join(root, "1", "0")); len(entries) != 2 {
		t.Errorf("tile folder holds %d entries; want the tile and the planted file", len(entries))
	}
	if _, err := os.Stat(filepath.Join(root, filepath.FromSlash(TempDir))); !os.IsNotExist(err) {
		t.Errorf("Put made %s: %v", TempDir, err)
	}
	if fi, _ := os.Stat(filepath.Join(root, "1", "0", "0.png")); fi.Mode().Perm() != 0o644 {
		t.Errorf("mode %v; want 0644", fi.Mode().Perm())
	}
}

// TestPutFreshWritesNewFilesInPlaceAndReplacesOldOnesWhole: a new path
// gets the file itself (no temporary name is ever made: the folder holds
// one entry, with mode 0644 under umask 022, the folders made on the way);
// an existing file is replaced by a new one (a new inode, as a rename
// gives), never rewritten where it is; a path under a file fails with an
// error naming it.
func TestPutFreshWritesNewFilesInPlaceAndReplacesOldOnesWhole(t *testing.T) {
	root := t.TempDir()
	d := NewDir(root)
	ctx := context.Background()
	tile := filepath.Join(root, "14", "8000", "5000.png")
	if err := d.PutFresh(ctx, "14/8000/5000.png", []byte("first"), "image/png", ""); err != nil {
		t.Fatal(err)
	}
	if b, err := os.ReadFile(tile); err != nil || string(b) != "first" {
		t.Fatalf("file holds %q (%v); want %q", b, err, "first")
	}
	if entries, _ := os.ReadDir(filepath.Dir(tile)); len(entries) != 1 {
		t.Errorf("folder holds %d entries; want 1", len(entries))
	}
	before, _ := os.Stat(tile)
	if before.Mode().Perm()&^0o022 != 0o644&^0o022 || before.Mode().Perm()&0o111 != 0 {
		t.Errorf("mode %v; want 0644 less the umask", before.Mode().Perm())
	}
	if err := d.PutFresh(ctx, "14/8000/5000.png", []byte("second, longer"), "image/png", ""); err != nil {
		t.Fatal(err)
	}
	after, _ := os.Stat(tile)
	if b, _ := os.ReadFile(tile); string(b) != "second, longer" {
		t.Errorf("file holds %q after the second PutFresh", b)
	}
	if os.SameFile(before, after) {
		t.Error("an existing file was rewritten in place; want it replaced by a rename")
	}
	if entries, _ := os.ReadDir(filepath.Dir(tile)); len(entries) != 1 {
		t.Errorf("folder holds %d entries after replacing; want 1", len(entries))
	}
	if err := os.WriteFile(filepath.Join(root, "blocker"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	err := d.PutFresh(ctx, "blocker/0.png", []byte("x"), "image/png", "")
	if err == nil || !strings.Contains(err.Error(), filepath.Join(root, "blocker")) {
		t.Errorf("PutFresh under a file: %v; want an error naming the path", err)
	}
	cctx, cancel := context.WithCancel(ctx)
	cancel()
	if err := d.PutFresh(cctx, "14/8000/5001.png", []byte("x"), "image/png", ""); err == nil {
		t.Error("PutFresh with a cancelled context succeeded")
	}
}

func TestOpenErrors(t *testing.T) {
	ctx := context.Background()
	for _, loc := range []string{"", "nosuch://bucket", "s3://%zz", "file://otherhost/x"} {
		if _, err := Open(ctx, loc); err == nil {
			t.Errorf("Open(%q) succeeded", loc)
		} else if !strings.HasPrefix(err.Error(), "sink: ") {
			t.Errorf("Open(%q): %v; want a sink: error", loc, err)
		}
	}
}

// TestCopyBetweenFoldersLinks: folder to folder, files are hard links
// (same inode), whole at their paths, and a second copy keeps them.
func TestCopyBetweenFoldersLinks(t *testing.T) {
	ctx := context.Background()
	src, dst := NewDir(t.TempDir()), NewDir(t.TempDir())
	PutFile(ctx, src, "5/1/2.png", []byte("tile"))
	PutFile(ctx, src, "map.json", []byte("{}"))
	st, err := Copy(ctx, dst, src, CopyOptions{})
	if err != nil || st.Copied != 2 {
		t.Fatalf("%v, %v", st, err)
	}
	a, _ := os.Stat(filepath.Join(src.Root(), "5", "1", "2.png"))
	b, _ := os.Stat(filepath.Join(dst.Root(), "5", "1", "2.png"))
	if !os.SameFile(a, b) {
		t.Error("folder-to-folder copy is not a hard link")
	}
	if got, _ := dst.Get(ctx, "5/1/2.png"); string(got) != "tile" {
		t.Errorf("got %q", got)
	}
	st, err = Copy(ctx, dst, src, CopyOptions{})
	if err != nil || st.Kept != 2 || st.Copied != 0 {
		t.Errorf("second copy: %v, %v; want 2 kept", st, err)
	}
	st, err = Copy(ctx, dst, src, CopyOptions{Overwrite: true})
	if err != nil || st.Copied != 2 {
		t.Errorf("overwrite: %v, %v; want 2 copied", st, err)
	}
}

// TestSweepTempRemovesOnlyTheDeadProcessFiles: the temporary files of the
// swept process go, wherever they are in the tree; those of another
// process (a live part of a sharded render, say) and the tiles stay.
func TestSweepTempRemovesOnlyTheDeadProcessFiles(t *testing.T) {
	root := t.TempDir()
	d := NewDir(root)
	ctx := context.Background()
	for _, p := range []string{"3/1/2.png", "12/655/1582.png"} {
		if err := d.Put(ctx, p, []byte("tile"), "", ""); err != nil {
			t.Fatal(err)
		}
	}
	dead := []string{
		filepath.Join(root, "3", "1", TempToken("hostA", 4242)+"1f-1"),
		filepath.Join(root, "12", "655", TempToken("hostA", 4242)+"1f-2"),
		filepath.Join(root, ".stipple", "put", "put-old"), // the old shared folder
	}
	alive := []string{
		filepath.Join(root, "3", "1", TempToken("hostA", 4243)+"1f-1"), // another process
		filepath.Join(root, "3", "1", TempToken("hostB", 4242)+"1f-1"), // same pid, other host
	}
	for _, f := range append(append([]string{}, dead...), alive...) {
		os.MkdirAll(filepath.Dir(f), 0o755)
		if err := os.WriteFile(f, []byte("half"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	n, err := d.SweepTemp(ctx, "hostA", 4242)
	if err != nil {
		t.Fatal(err)
	}
	if n != 2 {
		t.Errorf("SweepTemp removed %d files; want 2", n)
	}
	for _, f := range dead {
		if _, err := os.Stat(f); !os.IsNotExist(err) {
			t.Errorf("%s is still there", f)
		}
	}
	for _, f := range append(alive, filepath.Join(root, "3", "1", "2.png"), filepath.Join(root, "12", "655", "1582.png")) {
		if _, err := os.Stat(f); err != nil {
			t.Errorf("%s was removed: %v", f, err)
		}
	}
	if !IsTemp(filepath.Base(alive[0])) || IsTemp("2.png") || IsTemp(".stipple") {
		t.Error("IsTemp misreads names")
	}
}
