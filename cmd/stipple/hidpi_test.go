package main

import (
	"bytes"
	"context"
	"path/filepath"
	"strings"
	"testing"
)

// TestHiDPIMetadata renders the demo city (to zoom 13) without and with
// --hidpi: map.json and map-data.js name the @2x tiles exactly when they
// were written. The same render as two parts and the final step must give
// the same files, byte for byte, map.json included.
func TestHiDPIMetadata(t *testing.T) {
	if testing.Short() {
		t.Skip("renders the demo four times")
	}
	root := t.TempDir()
	m, err := writeDemoSource(filepath.Join(root, "demo"))
	if err != nil {
		t.Fatal(err)
	}
	render := func(args ...string) {
		t.Helper()
		var out, errOut bytes.Buffer
		args = append([]string{"render", m.Path, "--max-zoom", "13", "--workers", "2"}, args...)
		if code := run(context.Background(), args, &out, &errOut); code != 0 {
			t.Fatalf("stipple %s: exit %d\n%s%s", strings.Join(args, " "), code, out.String(), errOut.String())
		}
	}
	plain, dense, parts := filepath.Join(root, "plain"), filepath.Join(root, "dense"), filepath.Join(root, "parts")
	render("--out", plain)
	render("--out", dense, "--hidpi")
	for _, c := range []struct {
		dir   string
		dense bool
	}{{plain, false}, {dense, true}} {
		files := publicFiles(t, c.dir)
		n2x := 0
		for p := range files {
			if strings.HasSuffix(p, "@2x.png") && strings.Count(p, "/") == 2 {
				n2x++
			}
		}
		if (n2x > 0) != c.dense {
			t.Fatalf("%s: %d @2x tiles", c.dir, n2x)
		}
		meta := string(files["map.json"])
		if has := strings.Contains(meta, `"tiles_2x": "{z}/{x}/{y}@2x.png"`); has != c.dense || strings.Contains(meta, "tiles_2x") != c.dense {
			t.Errorf("%s: --hidpi %v, map.json names the @2x tiles: %v", c.dir, c.dense, has)
		}
		data := string(files["map-data.js"])
		if has := strings.Contains(data, `"tiles_2x":"{z}/{x}/{y}@2x.png"`); has != c.dense {
			t.Errorf("%s: --hidpi %v, map-data.js names the @2x tiles: %v", c.dir, c.dense, has)
		}
	}

	for _, spec := range []string{"0/2", "1/2", "final/2"} {
		render("--out", parts, "--hidpi", "--shard", spec)
	}
	compareTrees(t, publicFiles(t, dense), publicFiles(t, parts))
}
