package tiles

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestMetadataNamesDenseTilesOnlyWhenSet checks that map.json carries
// tiles_2x exactly when Metadata.Tiles2x is set.
func TestMetadataNamesDenseTilesOnlyWhenSet(t *testing.T) {
	for _, dense := range []bool{false, true} {
		dir := t.TempDir()
		m := evilMeta()
		if dense {
			m.Tiles2x = Tiles2xTemplate
		}
		if err := WriteMetadata(dir, m); err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(filepath.Join(dir, MetadataFile))
		if err != nil {
			t.Fatal(err)
		}
		has := bytes.Contains(b, []byte(`"tiles_2x": "{z}/{x}/{y}@2x.png"`))
		if has != dense || bytes.Contains(b, []byte("tiles_2x")) != dense {
			t.Errorf("Tiles2x set %v: map.json names tiles_2x: %v\n%s", dense, has, b)
		}
		back, err := ReadMetadata(dir)
		if err != nil || back.Tiles2x != m.Tiles2x {
			t.Errorf("read back Tiles2x %q, %v; want %q", back.Tiles2x, err, m.Tiles2x)
		}
	}
}

// readViewerData decodes dir/map-data.js.
func readViewerData(t *testing.T, dir string) (viewerData, string) {
	t.Helper()
	js, err := os.ReadFile(filepath.Join(dir, DataScript))
	if err != nil {
		t.Fatal(err)
	}
	raw, ok := strings.CutPrefix(string(js), "window.stippleMap = ")
	raw, ok2 := strings.CutSuffix(raw, ";\n")
	var d viewerData
	if !ok || !ok2 || json.Unmarshal([]byte(raw), &d) != nil {
		t.Fatalf("map-data.js is not one JSON assignment: %s", js)
	}
	return d, raw
}

// TestViewerDataDenseTiles checks map-data.js: a layer with @2x tiles gets
// their URL template, under its folder; one without gets none; the @2x
// files stay out of the 1× index.
func TestViewerDataDenseTiles(t *testing.T) {
	dir := t.TempDir()
	for _, p := range []string{"a b/1/0/0.png", "a b/1/0/0@2x.png", "a b/1/1/0@2x.png", "plain/1/0/0.png"} {
		full := filepath.Join(dir, filepath.FromSlash(p))
		os.MkdirAll(filepath.Dir(full), 0o755)
		if err := os.WriteFile(full, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	a, b := evilMeta(), evilMeta()
	a.Layer, b.Layer = "a", "b"
	a.Tiles2x = Tiles2xTemplate
	if err := WriteViewerLayers(dir, []ViewerLayer{{Dir: "a b", Meta: a}, {Dir: "plain", Meta: b}}); err != nil {
		t.Fatal(err)
	}
	d, raw := readViewerData(t, dir)
	if len(d.Sets) != 2 || d.Sets[0].Tiles2x != "a%20b/{z}/{x}/{y}@2x.png" || d.Sets[0].Tiles != "a%20b/{z}/{x}/{y}.png" {
		t.Errorf("dense layer's set: %+v", d.Sets)
	}
	if len(d.Sets) == 2 && d.Sets[1].Tiles2x != "" || strings.Count(raw, "tiles_2x") != 1 {
		t.Errorf("plain layer's set names dense tiles: %s", raw)
	}
	idx, err := os.ReadFile(filepath.Join(dir, IndexDir, "0-1.js"))
	if err != nil || string(idx) != `stippleTileIndex(0,1,{"x0":0,"y0":0,"rows":[[0,1]]});`+"\n" {
		t.Errorf("tile index %q, %v; want only the 1× tile", idx, err)
	}

	// A dense template must name files beside the 1× ones: the viewer
	// asks for a dense tile only where the 1× index has one.
	for _, bad := range []string{"hi/{z}/{x}/{y}@2x.png", "{z}/{x}/{y}.png", "{z}/{y}/{x}@2x.png"} {
		c := evilMeta()
		c.Tiles2x = bad
		err := WriteViewerLayers(t.TempDir(), []ViewerLayer{{Meta: c}})
		if err == nil || !strings.Contains(err.Error(), "tiles_2x") || !strings.HasPrefix(err.Error(), "tiles: viewer: layer 1: ") || strings.Contains(err.Error(), "\n") {
			t.Errorf("tiles_2x %q: %v; want a one-line error naming tiles_2x", bad, err)
		}
	}
}
