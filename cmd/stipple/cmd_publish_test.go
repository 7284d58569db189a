package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"io/fs"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/tiles"
)

// indexedTiles reads the viewer's tile index scripts
// (tile-index/SET-Z.js: stippleTileIndex(set, z, {x0, y0, rows}), each
// row alternating a gap and a run of present columns) and returns the
// 1× tile paths they name.
func indexedTiles(t *testing.T, dir string) []string {
	t.Helper()
	re := regexp.MustCompile(`^stippleTileIndex\((\d+),(\d+),(.*)\);\s*$`)
	ents, err := os.ReadDir(filepath.Join(dir, tiles.IndexDir))
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	for _, e := range ents {
		if !strings.HasPrefix(e.Name(), "0-") {
			continue // set 0 is the 1× tiles of the only layer
		}
		b, err := os.ReadFile(filepath.Join(dir, tiles.IndexDir, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		m := re.FindStringSubmatch(string(b))
		if m == nil {
			t.Fatalf("%s: %q is not a tile index call", e.Name(), b)
		}
		var idx struct {
			X0, Y0 int
			Rows   [][]int
		}
		if err := json.Unmarshal([]byte(m[3]), &idx); err != nil {
			t.Fatal(err)
		}
		z, _ := strconv.Atoi(m[2])
		for r, runs := range idx.Rows {
			x := idx.X0
			for i := 0; i+1 < len(runs); i += 2 {
				x += runs[i]
				for k := 0; k < runs[i+1]; k++ {
					out = append(out, fmt.Sprintf("%d/%d/%d.png", z, x, idx.Y0+r))
					x++
				}
			}
		}
	}
	return out
}

// TestPublishCopiesWhatTheWebNeeds renders the small test map, publishes
// it, and checks the published folder: no state folder, the report's file
// count and size are the folder's own, and the serve handler (as stipple
// serve DIR) serves the viewer, tilejson.json and every tile the tile
// index names, byte for byte as the render wrote them.
func TestPublishCopiesWhatTheWebNeeds(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	mp := writeMap(t, abs(t, "../../testdata/small/areas.geojson"), out, "")
	var so, se bytes.Buffer
	if code := run(context.Background(), []string{"render", mp}, &so, &se); code != 0 {
		t.Fatalf("render: %d %s", code, se.String())
	}
	if _, err := os.Stat(filepath.Join(out, tiles.StateDir, "dots.bin")); err != nil {
		t.Fatalf("the render kept no dot store to leave out: %v", err)
	}
	dest := filepath.Join(t.TempDir(), "site")
	so.Reset()
	if code := run(context.Background(), []string{"publish", out, dest, "--url", "https://maps.example.org/small"}, &so, &se); code != 0 {
		t.Fatalf("publish: %d %s", code, se.String())
	}
	var files, size int64
	err := filepath.WalkDir(dest, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if strings.HasPrefix(d.Name(), ".") {
			t.Errorf("published %s", p)
		}
		if !d.IsDir() {
			info, err := d.Info()
			if err != nil {
				return err
			}
			files++
			size += info.Size()
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	want := fmt.Sprintf("%d files, %.1f MB", files, float64(size)/1e6)
	if !strings.Contains(so.String(), want) {
		t.Errorf("report %q; the folder holds %s", so.String(), want)
	}
	root, err := os.OpenRoot(dest)
	if err != nil {
		t.Fatal(err)
	}
	defer root.Close()
	srv := httptest.NewServer(folderHandler(root))
	defer srv.Close()
	get := func(p string) ([]byte, int) {
		resp, err := http.Get(srv.URL + "/" + p)
		if err != nil {
			t.Fatal(err)
		}
		defer resp.Body.Close()
		b, _ := io.ReadAll(resp.Body)
		return b, resp.StatusCode
	}
	named := indexedTiles(t, dest)
	if len(named) < 4 {
		t.Fatalf("tile index names %d tiles", len(named))
	}
	for _, p := range named {
		body, code := get(p)
		orig, err := os.ReadFile(filepath.Join(out, filepath.FromSlash(p)))
		if code != 200 || err != nil || !bytes.Equal(body, orig) {
			t.Errorf("%s: HTTP %d, %d bytes; the render wrote %d (%v)", p, code, len(body), len(orig), err)
		}
	}
	for _, p := range []string{"", tiles.EmbedPage, tiles.MetadataFile, tiles.MethodsFile, "legend.png", "viewer.js", tiles.DataScript, tiles.StillFile} {
		if _, code := get(p); code != 200 {
			t.Errorf("/%s: HTTP %d", p, code)
		}
	}
	// embed.html falls back to the still without JavaScript.
	if page, _ := get(tiles.EmbedPage); !bytes.Contains(page, []byte(`<noscript><img src="still.png"`)) {
		t.Error("embed.html has no still in a noscript element")
	}
	tj, _ := get(tiles.TileJSONFile)
	var j tiles.TileJSON
	if err := json.Unmarshal(tj, &j); err != nil || len(j.Tiles) != 1 || j.Tiles[0] != "https://maps.example.org/small/{z}/{x}/{y}.png" {
		t.Errorf("tilejson.json tiles %v (%v)", j.Tiles, err)
	}
	if _, err := os.Stat(filepath.Join(dest, tiles.StateDir)); err == nil {
		t.Error("the state folder was published")
	}
}

func TestPublishRefuses(t *testing.T) {
	out := t.TempDir()
	if err := os.WriteFile(filepath.Join(out, "legend.png"), []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"publish", out, filepath.Join(t.TempDir(), "d")}, 1, "has no map.json or index.html: not a finished render"},
		{[]string{"publish", out, filepath.Join(out, "site")}, 1, "is inside"},
		{[]string{"publish", out}, 2, "publish takes"},
		{[]string{"publish", out, t.TempDir(), "--url", "ftp://x/"}, 2, "want an http:// or https:// address"},
	} {
		var so, se bytes.Buffer
		if code := run(context.Background(), c.args, &so, &se); code != c.code || !strings.Contains(se.String(), c.want) {
			t.Errorf("%v: exit %d, %q; want %d and %q", c.args[1:], code, se.String(), c.code, c.want)
		}
	}
}
