package main

import (
	"bytes"
	"context"
	"encoding/json"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
)

// pathsMap writes an invented map into dir: testdata/small's three areas
// (one, "010", with null geometry, here given 40 + 15 people), a mask over
// half of area "007", two categories, and a batch file with one extent
// holding every area.
func pathsMap(t *testing.T, dir string) (mapPath, batchPath string) {
	t.Helper()
	areas, err := os.ReadFile("../../testdata/small/areas.geojson")
	if err != nil {
		t.Fatal(err)
	}
	var fc map[string]any
	if err := json.Unmarshal(areas, &fc); err != nil {
		t.Fatal(err)
	}
	for _, f := range fc["features"].([]any) {
		props := f.(map[string]any)["properties"].(map[string]any)
		if props["code"] == "010" {
			props["north"], props["south"] = 40, 15
		}
	}
	areas, _ = json.Marshal(fc)
	water, err := os.ReadFile("../../testdata/small/water.geojson")
	if err != nil {
		t.Fatal(err)
	}
	src, err := os.ReadFile("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	text := strings.Replace(string(src), `id = "code"`, "id = \"code\"\nmask = [\"water.geojson\"]", 1)
	// Zooms deep enough that the 2 km wide map spans several blocks of
	// tiles, so three shard parts each get some.
	text = strings.Replace(text, "min_zoom = 11\nmax_zoom = 14", "min_zoom = 15\nmax_zoom = 16", 1)
	for name, b := range map[string][]byte{"areas.geojson": areas, "water.geojson": water, "map.toml": []byte(text),
		"batch.toml": []byte("map = \"map.toml\"\nout = \"batch-out\"\nmargin = 0.1\n\n[[extent]]\nslug = \"all\"\ntitle = " +
			strings.SplitN(strings.SplitN(text, "title = ", 2)[1], "\n", 2)[0] + "\nids = [\"007\", \"008\", \"009\", \"010\"]\n")} {
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return filepath.Join(dir, "map.toml"), filepath.Join(dir, "batch.toml")
}

// publishedFiles reads every published file of a map folder (all but the
// state folder) as slash path → bytes.
func publishedFiles(t *testing.T, root string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(root, p)
		rel = filepath.ToSlash(rel)
		if d.IsDir() {
			if rel == tiles.StateDir {
				return filepath.SkipDir
			}
			return nil
		}
		b, err := os.ReadFile(p)
		out[rel] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func mustRun(t *testing.T, args ...string) string {
	t.Helper()
	var out, errOut bytes.Buffer
	if code := run(context.Background(), args, &out, &errOut); code != 0 {
		t.Fatalf("stipple %s: exit %d\n%s%s", strings.Join(args, " "), code, out.String(), errOut.String())
	}
	return out.String()
}

// TestEveryPathMakesTheSameMap renders one map (a null-geometry area with
// people, a mask, two categories) by every command that makes it: render
// into a folder, render --out file://, three shard parts and the final
// step, batch with one extent over every area, and print. The published
// files are byte-identical (the batch extent's folder too, whose title is
// the map's); every path reports the same not-drawn people; print draws
// the dots of the render's store. After an in-place edit of the mask
// file, every path places the dots again.
func TestEveryPathMakesTheSameMap(t *testing.T) {
	dir := t.TempDir()
	mapPath, batchPath := pathsMap(t, dir)
	folder := filepath.Join(dir, "render")
	viaURL := filepath.Join(dir, "url")
	sharded := filepath.Join(dir, "sharded")

	renderAll := func() (reports map[string]string) {
		reports = map[string]string{}
		reports["render"] = mustRun(t, "render", mapPath, "--out", folder, "--workers", "2")
		reports["file://"] = mustRun(t, "render", mapPath, "--out", "file://"+filepath.ToSlash(viaURL), "--workers", "1")
		for _, part := range []string{"0/3", "1/3", "2/3", "final/3"} {
			reports["shard "+part] = mustRun(t, "render", mapPath, "--out", sharded, "--shard", part)
		}
		reports["batch"] = mustRun(t, "batch", batchPath, "--workers", "2")
		return reports
	}
	reports := renderAll()
	want := publishedFiles(t, folder)
	for _, name := range []string{"map.json", "legend.png", "legend@2x.png", "legend.svg", "alt.txt", "index.html", "embed.html"} {
		if want[name] == nil {
			t.Fatalf("render wrote no %s", name)
		}
	}
	tileCount := 0
	for p := range want {
		if strings.HasSuffix(p, ".png") && strings.Count(p, "/") == 2 {
			tileCount++
		}
	}
	if tileCount < 10 {
		t.Fatalf("only %d tiles", tileCount)
	}
	same := func(label string, got map[string][]byte, skip func(string) bool) {
		t.Helper()
		for p, b := range want {
			if skip != nil && skip(p) {
				continue
			}
			if !bytes.Equal(got[p], b) {
				t.Errorf("%s: %s differs from the folder render's (%d bytes vs %d)", label, p, len(got[p]), len(b))
			}
		}
		for p := range got {
			if _, ok := want[p]; !ok && (skip == nil || !skip(p)) {
				t.Errorf("%s: extra file %s", label, p)
			}
		}
	}
	same("render --out file://", publishedFiles(t, viaURL), nil)
	same("shards 0–2/3 + final/3", publishedFiles(t, sharded), nil)
	batchFolder := filepath.Join(dir, "batch-out", "all")
	same("batch extent", publishedFiles(t, batchFolder), func(p string) bool {
		// A batch extent holds the tiles of its box plus margin, which
		// here are all of them; its folder adds extent.json, a thumbnail,
		// and a print page when asked.
		return strings.HasPrefix(p, "thumb") || strings.HasPrefix(p, "print.") || p == "extent.json"
	})

	// Every path reports the area without geometry: 55 people, 11 dots.
	for label, rep := range reports {
		if strings.HasPrefix(label, "shard ") && label != "shard final/3" {
			continue // parts report their own areas only
		}
		if label == "batch" {
			continue // batch prints per-extent lines; its map.json is compared above
		}
		if !strings.Contains(rep, "not drawn: 55 people in 1 areas") || !strings.Contains(rep, `"010"`) {
			t.Errorf("%s: the report does not name the 55 people of area 010:\n%s", label, rep)
		}
	}
	var md tiles.Metadata
	if err := json.Unmarshal(want["map.json"], &md); err != nil {
		t.Fatal(err)
	}
	if md.NotDrawn.People != 55 {
		t.Errorf("map.json not drawn %v; want 55", md.NotDrawn.People)
	}

	// Print draws the dots of the render's store, and its legend counts the
	// render's people.
	printOut := mustRun(t, "print", mapPath, "--out", filepath.Join(dir, "page"), "--dpi", "80", "--page", "A5", "--format", "png")
	store, err := dotstore.Open(filepath.Join(folder, tiles.StateDir, "dots.bin"))
	if err != nil {
		t.Fatal(err)
	}
	n := store.Len()
	store.Close()
	if !strings.Contains(printOut, strings.TrimSpace(itoa(n))+" dots from 4 areas") || !strings.Contains(printOut, "not drawn: 55 people") {
		t.Errorf("print: %q; want the %d dots of the render's store and 55 people not drawn", printOut, n)
	}

	// Edit the mask in place: every path places again.
	pond := `{"type": "FeatureCollection", "features": [{"type": "Feature", "properties": {},
 "geometry": {"type": "Polygon", "coordinates": [[[-140.02, -30.02], [-140.01, -30.02], [-140.01, -30.0], [-140.02, -30.0], [-140.02, -30.02]]]}}]}`
	if err := os.WriteFile(filepath.Join(dir, "water.geojson"), []byte(pond), 0o644); err != nil {
		t.Fatal(err)
	}
	reports = renderAll()
	for label, rep := range reports {
		if strings.Contains(rep, "reusing") || strings.Contains(rep, "already complete") {
			t.Errorf("%s after the mask edit kept old dots:\n%s", label, rep)
		}
	}
	after := publishedFiles(t, folder)
	changed := 0
	for p, b := range want {
		if strings.Count(p, "/") == 2 && !bytes.Equal(after[p], b) {
			changed++
		}
	}
	if changed == 0 {
		t.Error("no tile changed after the mask moved")
	}
	want = after
	same("render --out file:// after the edit", publishedFiles(t, viaURL), nil)
	same("shards after the edit", publishedFiles(t, sharded), nil)
	same("batch after the edit", publishedFiles(t, batchFolder), func(p string) bool {
		return strings.HasPrefix(p, "thumb") || strings.HasPrefix(p, "print.") || p == "extent.json"
	})
}

func itoa(n int) string {
	b, _ := json.Marshal(n)
	return string(b)
}
