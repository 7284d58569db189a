package batch

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestHiDPIExtentMetadata checks that an extent's map.json names the @2x
// tiles exactly when the batch file asks for them (hidpi = true).
func TestHiDPIExtentMetadata(t *testing.T) {
	const extent = `
[[extent]]
slug = "three"
title = "Three areas"
ids = ["QM0369", "QM0370", "QM0371"]
min_zoom = 11
max_zoom = 13
`
	for _, dense := range []bool{false, true} {
		dir := t.TempDir()
		body := extent
		if dense {
			body = "hidpi = true\n" + extent
		}
		f := writeBatch(t, dir, body)
		rep, err := Run(context.Background(), f, Options{Workers: 2})
		if err != nil {
			t.Fatal(err)
		}
		if n := len(rep.Failed()); n != 0 {
			t.Fatalf("%d extents failed: %+v", n, rep.Failed())
		}
		out := filepath.Join(f.Out, "three")
		meta, err := os.ReadFile(filepath.Join(out, "map.json"))
		if err != nil {
			t.Fatal(err)
		}
		if has := strings.Contains(string(meta), `"tiles_2x": "{z}/{x}/{y}@2x.png"`); has != dense || strings.Contains(string(meta), "tiles_2x") != dense {
			t.Errorf("hidpi %v: map.json names the @2x tiles: %v", dense, has)
		}
		twos, _ := filepath.Glob(filepath.Join(out, "13", "*", "*@2x.png"))
		if (len(twos) > 0) != dense {
			t.Errorf("hidpi %v: %d @2x tiles at zoom 13", dense, len(twos))
		}
	}
}
