package tiles

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/stipple-maps/stipple/tiles/sink"
)

// TestWriteFileAtomicTempIsSwept checks that WriteFileAtomic leaves only
// the file it was asked for, and that its temporary name is one the sweep
// of a killed process removes: a run killed between the create and the
// rename (an outline tile, a batch index page) must not leave a stray file
// in a published folder.
func TestWriteFileAtomicTempIsSwept(t *testing.T) {
	root := t.TempDir()
	path := filepath.Join(root, "3", "2", "5.png")
	if err := WriteFileAtomic(path, []byte("first")); err != nil {
		t.Fatal(err)
	}
	if err := WriteFileAtomic(path, []byte("second")); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(path); string(b) != "second" {
		t.Fatalf("%s holds %q, want %q", path, b, "second")
	}
	names, _ := os.ReadDir(filepath.Dir(path))
	if len(names) != 1 {
		t.Fatalf("folder holds %d files after two writes, want 1", len(names))
	}

	// What a kill between create and rename leaves: a file at the
	// temporary name WriteFileAtomic would use.
	left := sink.TempPath(filepath.Dir(path), "5.png")
	if !sink.IsTemp(filepath.Base(left)) {
		t.Fatalf("temporary name %s is not one listings skip", filepath.Base(left))
	}
	if err := os.WriteFile(left, []byte("half"), 0o644); err != nil {
		t.Fatal(err)
	}
	host, _ := os.Hostname()
	n, err := sink.NewDir(root).SweepTemp(context.Background(), host, os.Getpid())
	if err != nil {
		t.Fatal(err)
	}
	if n != 1 {
		t.Errorf("sweep removed %d files, want 1", n)
	}
	if _, err := os.Stat(left); !os.IsNotExist(err) {
		t.Errorf("sweep left %s", filepath.Base(left))
	}
	if b, _ := os.ReadFile(path); string(b) != "second" {
		t.Errorf("sweep touched the tile: %q", b)
	}
}
