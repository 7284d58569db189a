package main

import (
	"bytes"
	"context"
	"io/fs"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/tiles/shard"
)

// TestRatesFileCutsEveryPartAlike: plan --probe measures the output
// folder and saves the rates; the rates move the cut; parts cut by other
// rates than the final step's are refused with a line that names the
// rates; --rates without --shard is refused.
func TestRatesFileCutsEveryPartAlike(t *testing.T) {
	root := t.TempDir()
	m, err := writeDemoSource(filepath.Join(root, "demo"))
	if err != nil {
		t.Fatal(err)
	}
	stipple := func(args ...string) (string, int) {
		var out bytes.Buffer
		rc := run(context.Background(), args, &out, &out)
		return out.String(), rc
	}
	out := filepath.Join(root, "out")
	probed := filepath.Join(root, "probed.json")
	text, rc := stipple("plan", m.Path, "--shards", "3", "--probe", out, "--rates", probed)
	if rc != 0 {
		t.Fatalf("plan --probe: %d\n%s", rc, text)
	}
	r, err := shard.ReadRates(probed)
	if err != nil {
		t.Fatal(err)
	}
	if !(r.FileNs > 0) || !strings.Contains(r.Source, "probed in "+out) || !strings.Contains(text, "rates saved to "+probed) {
		t.Errorf("probed rates %+v; plan said:\n%s", r, text)
	}
	filepath.WalkDir(out, func(p string, d fs.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			t.Errorf("the probe left %s", p)
		}
		return nil
	})
	if text, rc := stipple("plan", m.Path, "--shards", "3", "--probe", out); rc == 0 || !strings.Contains(text, "give --rates FILE too") {
		t.Errorf("--probe without --rates: %d\n%s", rc, text)
	}

	// Rates that make tiles dear and dots free cut the map elsewhere.
	skewed := filepath.Join(root, "skewed.json")
	s := shard.MeasuredRates
	s.Source, s.TileNs, s.FileNs, s.SampleNsPerDot, s.DiscNsPerDot, s.CountNsPerDot = "a test's skewed rates", 5e6, 5e6, 0.01, 0.01, 0.01
	if err := shard.WriteRates(skewed, s); err != nil {
		t.Fatal(err)
	}
	layout := regexp.MustCompile(`layout ([0-9a-f]{12})`)
	plain, _ := stipple("plan", m.Path, "--shards", "3")
	dear, _ := stipple("plan", m.Path, "--shards", "3", "--rates", skewed)
	a, b := layout.FindStringSubmatch(plain), layout.FindStringSubmatch(dear)
	if a == nil || b == nil || a[1] == b[1] || !strings.Contains(dear, "a test's skewed rates") {
		t.Fatalf("the skewed rates did not move the cut:\n%s\n%s", plain, dear)
	}
	parts := filepath.Join(root, "parts")
	for i, rates := range []string{skewed, "", skewed} {
		args := []string{"render", m.Path, "--shard", string(rune('0'+i)) + "/3", "--out", parts}
		if rates != "" {
			args = append(args, "--rates", rates)
		}
		if text, rc := stipple(args...); rc != 0 {
			t.Fatalf("part %d: %d\n%s", i, rc, text)
		}
	}
	text, rc = stipple("render", m.Path, "--shard", "final/3", "--out", parts, "--rates", skewed)
	if rc == 0 || !strings.Contains(text, "shard 1/3 was rendered with another layout") || !strings.Contains(text, "--rates file changed") {
		t.Errorf("final step over parts cut two ways: %d\n%s", rc, text)
	}
	if text, rc := stipple("render", m.Path, "--out", filepath.Join(root, "one"), "--rates", skewed); rc == 0 || !strings.Contains(text, "give it with --shard") {
		t.Errorf("--rates without --shard: %d\n%s", rc, text)
	}
	if text, rc := stipple("plan", m.Path, "--shards", "3", "--rates", filepath.Join(root, "none.json")); rc == 0 || !strings.Contains(text, "none.json") {
		t.Errorf("a missing rates file: %d\n%s", rc, text)
	}
}
