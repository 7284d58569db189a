package tiles

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/tiles/sink"
)

// pngFiles lists a pyramid's tile files (relative paths) with their bytes.
func pngFiles(t *testing.T, root string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	err := filepath.WalkDir(root, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && d.Name() == StateDir {
			return filepath.SkipDir
		}
		if !d.IsDir() && strings.HasSuffix(p, ".png") {
			rel, _ := filepath.Rel(root, p)
			b, err := os.ReadFile(p)
			out[filepath.ToSlash(rel)] = b
			return err
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// TestKeepSkipsTiles writes a pyramid (count and disc zooms, 1× and @2x)
// whole, then with a Keep that drops about a third of the tiles, once
// straight through and once interrupted and resumed: the kept writes hold
// exactly the whole write's tiles that Keep accepts, byte for byte, and
// their totals count only those.
func TestKeepSkipsTiles(t *testing.T) {
	src := clusterKeys(21, 21, 30000, 700, 600)
	look := growingLook(11)
	opt := Options{MinZoom: 3, MaxZoom: 11, TileSize: 256, Colors: testColors, Look: look, Workers: 2, HiDPI: true}
	all := opt
	all.Dir = t.TempDir()
	whole, err := Write(context.Background(), src, all)
	if err != nil {
		t.Fatal(err)
	}
	want := pngFiles(t, all.Dir)
	keep := func(z, x, y int) bool { return (x*7+y*3+z)%3 != 0 }
	parse := func(rel string) (z, x, y int) {
		parts := strings.Split(strings.TrimSuffix(rel, ".png"), "/")
		ys, _, _ := strings.Cut(parts[2], "@")
		return atoi(t, parts[0]), atoi(t, parts[1]), atoi(t, ys)
	}
	var wantTiles, wantTiles2x, wantBytes int64
	for rel, b := range want {
		z, x, y := parse(rel)
		if !keep(z, x, y) {
			delete(want, rel)
			continue
		}
		if strings.HasSuffix(rel, "@2x.png") {
			wantTiles2x++
		} else {
			wantTiles++
		}
		wantBytes += int64(len(b))
	}
	if wantTiles == 0 || wantTiles >= whole.Tiles {
		t.Fatalf("keep accepts %d of %d tiles; the test wants some of each", wantTiles, whole.Tiles)
	}

	check := func(name, dir string, got Stats) {
		t.Helper()
		files := pngFiles(t, dir)
		for rel, b := range files {
			w, ok := want[rel]
			if !ok {
				t.Errorf("%s: tile %s written, which Keep rejects", name, rel)
			} else if !bytes.Equal(w, b) {
				t.Errorf("%s: tile %s differs from the whole write's", name, rel)
			}
		}
		for rel := range want {
			if _, ok := files[rel]; !ok {
				t.Errorf("%s: tile %s missing", name, rel)
			}
		}
		if got.Tiles != wantTiles || got.Tiles2x != wantTiles2x || got.Bytes != wantBytes {
			t.Errorf("%s: totals %d + %d @2x tiles, %d bytes; want %d + %d, %d", name, got.Tiles, got.Tiles2x, got.Bytes, wantTiles, wantTiles2x, wantBytes)
		}
		if got.Planned >= whole.Planned || got.Planned == 0 {
			t.Errorf("%s: planned %d tiles (whole write %d)", name, got.Planned, whole.Planned)
		}
	}

	straight := opt
	straight.Dir, straight.Keep = t.TempDir(), keep
	got, err := Write(context.Background(), src, straight)
	if err != nil {
		t.Fatal(err)
	}
	check("straight", straight.Dir, got)

	resumed := straight
	resumed.Dir, resumed.Fingerprint = t.TempDir(), "keep-1"
	for _, stopAfter := range []int64{5, 80} {
		ctx, cancel := context.WithCancel(context.Background())
		resumed.Progress = func(s Stats) {
			if s.Tiles+s.Tiles2x+s.Empty >= stopAfter {
				cancel()
			}
		}
		if _, err := Write(ctx, src, resumed); err == nil {
			t.Fatalf("write stopped after %d tiles reported no error", stopAfter)
		}
		cancel()
	}
	resumed.Progress = nil
	got, err = Write(context.Background(), src, resumed)
	if err != nil {
		t.Fatal(err)
	}
	if got.Kept == 0 {
		t.Error("the resumed run kept no tiles")
	}
	check("resumed", resumed.Dir, got)
}

func atoi(t *testing.T, s string) int {
	t.Helper()
	var v int
	for _, c := range s {
		if c < '0' || c > '9' {
			t.Fatalf("not a number: %q", s)
		}
		v = 10*v + int(c-'0')
	}
	return v
}

// TestNewFingerprintRemovesOnlyKeptTiles: two writers with complementary
// Keep filters share one output folder, each with its own state folder
// (the parts of a sharded render). When one of them runs again with a new
// fingerprint it clears its own old tiles first, and must leave the other's
// alone: the output still holds the whole write's tiles, byte for byte.
func TestNewFingerprintRemovesOnlyKeptTiles(t *testing.T) {
	src := clusterKeys(5, 5, 8000, 500, 400)
	look := growingLook(10)
	opt := Options{MinZoom: 4, MaxZoom: 10, TileSize: 256, Colors: testColors, Look: look, Workers: 2, HiDPI: true}
	whole := opt
	whole.Dir = t.TempDir()
	if _, err := Write(context.Background(), src, whole); err != nil {
		t.Fatal(err)
	}
	want := pngFiles(t, whole.Dir)
	out := t.TempDir()
	keep := func(z, x, y int) bool { return (x+y+z)%2 == 0 }
	part := func(mine bool, fp string) Options {
		o := opt
		o.Out, o.Fingerprint = sink.NewDir(out), fp
		o.Dir = filepath.Join(out, StateDir, fmt.Sprint("part-", mine))
		o.Keep = func(z, x, y int) bool { return keep(z, x, y) == mine }
		return o
	}
	for _, o := range []Options{part(true, "a"), part(false, "a"), part(true, "b")} {
		if _, err := Write(context.Background(), src, o); err != nil {
			t.Fatal(err)
		}
	}
	got := pngFiles(t, out)
	if len(got) != len(want) {
		t.Fatalf("the shared folder holds %d tiles; the whole write %d", len(got), len(want))
	}
	for rel, b := range want {
		if !bytes.Equal(got[rel], b) {
			t.Fatalf("tile %s missing or different", rel)
		}
	}
}
