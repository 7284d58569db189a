package main

import (
	"bytes"
	"context"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// writeMap writes a copy of testdata/small/map.toml with its input replaced
// by input (absolute) and its output sent to out, plus extra lines.
func writeMap(t *testing.T, input, out, extra string) string {
	t.Helper()
	b, err := os.ReadFile("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	s := strings.Replace(string(b), `file = "areas.geojson"`, "file = "+quote(input), 1)
	s = strings.Replace(s, `out = "out"`, "out = "+quote(out), 1)
	s = extra + s
	p := filepath.Join(t.TempDir(), "map.toml")
	if err := os.WriteFile(p, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func quote(s string) string { return `"` + strings.ReplaceAll(s, `\`, `\\`) + `"` }

func abs(t *testing.T, p string) string {
	a, err := filepath.Abs(p)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

func TestBadInputGivesOneLineErrors(t *testing.T) {
	cases := []struct {
		file string
		want []string // parts the one line must contain
	}{
		{"malformed.geojson", []string{"malformed.geojson", "line 4, column 49", "malformed JSON"}},
		{"point.geojson", []string{"point.geojson", `feature 1 (id "2")`, `field "geometry"`, "Point is not Polygon or MultiPolygon"}},
		{"missing-field.geojson", []string{"missing-field.geojson", `feature 0 (id "1")`, `field "south"`, "count field is missing"}},
		{"negative.geojson", []string{"negative.geojson", `feature 1 (id "2")`, `field "north"`, "value -3 is negative"}},
		{"not-a-number.geojson", []string{"not-a-number.geojson", `feature 0 (id "1")`, `field "south"`, `value "lots" is not a number`}},
		{"infinite.geojson", []string{"infinite.geojson", `feature 0 (id "1")`, `field "north"`, "1e999 is out of range"}},
		{"not-a-collection.geojson", []string{"not-a-collection.geojson", `type is "Feature"; want "FeatureCollection"`}},
		{"duplicate-id.geojson", []string{"duplicate-id.geojson", `feature 1 (id "A1")`, `field "code"`, "also the id of feature 0"}},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			m := writeMap(t, abs(t, "../../testdata/bad/geojson/"+c.file), t.TempDir(), "")
			var stdout, stderr bytes.Buffer
			code := run(context.Background(), []string{"render", m}, &stdout, &stderr)
			if code != 1 {
				t.Fatalf("exit %d; want 1 (stderr %q)", code, stderr.String())
			}
			msg := stderr.String()
			if strings.Count(msg, "\n") != 1 || !strings.HasPrefix(msg, "stipple: ") {
				t.Fatalf("want one line starting \"stipple: \"; got %q", msg)
			}
			for _, w := range c.want {
				if !strings.Contains(msg, w) {
					t.Errorf("error %q lacks %q", msg, w)
				}
			}
		})
	}
}

func TestMapFileErrorsNameFileLineAndKey(t *testing.T) {
	input := abs(t, "../../testdata/small/areas.geojson")
	cases := []struct {
		name, old, new, want string
	}{
		{"unknown key", "seed = 3\n", "seed = 3\ncolour = \"red\"\n", ":6: key colour: unknown key"},
		{"wrong type", "seed = 3\n", "seed = \"three\"\n", ":5: key seed: incompatible types: TOML value has type string; destination has type integer"},
		{"unknown table key", "max_zoom = 14\n", "max_zoom = 14\nzooms = 3\n", ":15: key tiles.zooms: unknown key"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m := writeMap(t, input, t.TempDir(), "")
			b, _ := os.ReadFile(m)
			os.WriteFile(m, []byte(strings.Replace(string(b), c.old, c.new, 1)), 0o644)
			var stderr bytes.Buffer
			if code := run(context.Background(), []string{"render", m}, new(bytes.Buffer), &stderr); code != 1 {
				t.Fatalf("exit %d; want 1", code)
			}
			if !strings.Contains(stderr.String(), m+c.want) {
				t.Errorf("got %q; want it to contain %q", stderr.String(), m+c.want)
			}
		})
	}
	t.Run("bad colour and missing field", func(t *testing.T) {
		m := writeMap(t, input, t.TempDir(), "")
		b, _ := os.ReadFile(m)
		s := strings.Replace(string(b), `color = "#E69F00"`, `color = "orange"`, 1)
		os.WriteFile(m, []byte(s), 0o644)
		var stderr bytes.Buffer
		run(context.Background(), []string{"render", m}, new(bytes.Buffer), &stderr)
		line := 1 + strings.Count(s[:strings.Index(s, `color = "orange"`)], "\n")
		want := m + ":" + strconv.Itoa(line) + `: key category[2].color: "orange" is not a colour; want #rrggbb`
		if strings.TrimSpace(stderr.String()) != "stipple: "+want {
			t.Errorf("got %q\nwant %q", stderr.String(), "stipple: "+want)
		}
		s = strings.Replace(string(b), "fields = [\"south\"]\n", "", 1)
		os.WriteFile(m, []byte(s), 0o644)
		stderr.Reset()
		run(context.Background(), []string{"render", m}, new(bytes.Buffer), &stderr)
		if !strings.Contains(stderr.String(), "key category[2].fields: missing") {
			t.Errorf("got %q; want category[2].fields missing", stderr.String())
		}
	})
	// @2x tiles draw dots at twice the pixels, and stamps stop at 64: a
	// wider dot is refused with the key named, from the file or the flag.
	t.Run("wide dots with hidpi", func(t *testing.T) {
		for _, tc := range []struct{ hidpiKey, flag string }{{"hidpi = true\n", ""}, {"", "--hidpi"}} {
			m := writeMap(t, input, t.TempDir(), "")
			b, _ := os.ReadFile(m)
			s := strings.Replace(string(b), "max_zoom = 14\n", "max_zoom = 14\n"+tc.hidpiKey+"\n[dots]\ndiameter = 40\n", 1)
			os.WriteFile(m, []byte(s), 0o644)
			args := []string{"render", m}
			if tc.flag != "" {
				args = append(args, tc.flag)
			}
			var stderr bytes.Buffer
			if code := run(context.Background(), args, new(bytes.Buffer), &stderr); code != 1 {
				t.Fatalf("%v: exit %d; want 1 (%s)", args, code, stderr.String())
			}
			if !strings.Contains(stderr.String(), "key dots.diameter: is 40") || !strings.Contains(stderr.String(), "at most 32") || strings.Count(strings.TrimSpace(stderr.String()), "\n") != 0 {
				t.Errorf("%v: got %q", args, stderr.String())
			}
		}
	})
	t.Run("no input", func(t *testing.T) {
		p := filepath.Join(t.TempDir(), "m.toml")
		os.WriteFile(p, []byte("title = \"x\"\n"), 0o644)
		var stderr bytes.Buffer
		run(context.Background(), []string{"render", p}, new(bytes.Buffer), &stderr)
		if !strings.Contains(stderr.String(), p+": key input.file: missing") {
			t.Errorf("got %q", stderr.String())
		}
	})
}

func TestUsageErrorsExit2(t *testing.T) {
	for _, args := range [][]string{{}, {"paint"}, {"render"}, {"render", "a.toml", "b.toml"}, {"render", "--max-zoom", "x", "a.toml"}} {
		var stderr bytes.Buffer
		if code := run(context.Background(), args, new(bytes.Buffer), &stderr); code != 2 {
			t.Errorf("%q: exit %d; want 2 (%s)", args, code, stderr.String())
		}
	}
}

// tree reads every file under dir into a map keyed by relative path.
func tree(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		b, err := os.ReadFile(p)
		rel, _ := filepath.Rel(dir, p)
		out[rel] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func TestWorkerCountDoesNotChangeBytes(t *testing.T) {
	input := abs(t, "../../testdata/small/areas.geojson")
	var trees []map[string][]byte
	for _, w := range []string{"1", "4"} {
		out := t.TempDir()
		m := writeMap(t, input, out, "")
		var stderr bytes.Buffer
		if code := run(context.Background(), []string{"render", m, "--workers", w}, new(bytes.Buffer), &stderr); code != 0 {
			t.Fatalf("workers %s: exit %d: %s", w, code, stderr.String())
		}
		trees = append(trees, tree(t, out))
	}
	a, b := trees[0], trees[1]
	if len(a) != len(b) || len(a) < 10 {
		t.Fatalf("1 worker wrote %d files, 4 workers %d", len(a), len(b))
	}
	for k, v := range a {
		if !bytes.Equal(v, b[k]) {
			t.Errorf("%s differs between 1 and 4 workers", k)
		}
	}
}

func TestDemoWritesAMap(t *testing.T) {
	if testing.Short() {
		t.Skip("renders the whole demo")
	}
	dir := t.TempDir()
	var stdout, stderr bytes.Buffer
	if code := run(context.Background(), []string{"demo", dir}, &stdout, &stderr); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr.String())
	}
	for _, f := range []string{"index.html", "legend.png", "map.json", "viewer.js", "source/quillmere.geojson", "source/quillmere.toml", "12"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Errorf("demo did not write %s", f)
		}
	}
	if !strings.Contains(stdout.String(), "invented") {
		t.Errorf("demo output does not say the data is invented:\n%s", stdout.String())
	}
}

// TestCategoryOrderDoesNotChangePixels: listing the map's categories in
// another order must give byte-identical tiles: dots are seeded by category
// key, and colours are composited from integer coverage shares.
func TestCategoryOrderDoesNotChangePixels(t *testing.T) {
	input := abs(t, "../../testdata/small/areas.geojson")
	var trees []map[string][]byte
	for _, swap := range []bool{false, true} {
		out := t.TempDir()
		m := writeMap(t, input, out, "")
		if swap {
			b, _ := os.ReadFile(m)
			s := string(b)
			i := strings.Index(s, "[[category]]")
			cats := strings.SplitAfter(s[i:], "\n\n")
			if len(cats) != 2 {
				t.Fatalf("want two category tables, got %q", s[i:])
			}
			s = s[:i] + strings.TrimRight(cats[1], "\n") + "\n\n" + strings.TrimRight(cats[0], "\n") + "\n"
			os.WriteFile(m, []byte(s), 0o644)
		}
		var stderr bytes.Buffer
		if code := run(context.Background(), []string{"render", m}, new(bytes.Buffer), &stderr); code != 0 {
			t.Fatalf("swap=%v: exit %d: %s", swap, code, stderr.String())
		}
		trees = append(trees, tree(t, out))
	}
	n := 0
	for k, v := range trees[0] {
		// The legends and the still (which holds the legend) list the
		// categories in the map file's order.
		if !strings.HasSuffix(k, ".png") || strings.HasPrefix(k, "legend") || k == "still.png" || strings.Contains(k, ".stipple") {
			continue
		}
		n++
		if !bytes.Equal(v, trees[1][k]) {
			t.Errorf("tile %s differs when the categories are listed the other way round", k)
		}
	}
	if n < 10 {
		t.Fatalf("compared only %d tiles", n)
	}
}
