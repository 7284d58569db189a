package main

import (
	"bytes"
	"context"
	"path/filepath"
	"strings"
	"testing"
)

func TestParseShard(t *testing.T) {
	env := func(kv ...string) func(string) string {
		m := map[string]string{}
		for i := 0; i+1 < len(kv); i += 2 {
			m[kv[i]] = kv[i+1]
		}
		return func(k string) string { return m[k] }
	}
	for _, c := range []struct {
		v    string
		env  func(string) string
		want string // spec, or "error: part of the message"
	}{
		{"0/4", env(), "0/4"},
		{"3/4", env(), "3/4"},
		{" 2/16 ", env(), "2/16"},
		{"final/4", env(), "final/4"},
		{"final", env("STIPPLE_SHARDS", "8"), "final/8"},
		// Kubernetes Indexed Job: the index is JOB_COMPLETION_INDEX; the
		// count is the Job's completions, given in the flag.
		{"auto/16", env("JOB_COMPLETION_INDEX", "5"), "5/16"},
		{"auto", env("SLURM_ARRAY_TASK_ID", "2", "SLURM_ARRAY_TASK_COUNT", "3"), "2/3"},
		{"auto/10", env("AWS_BATCH_JOB_ARRAY_INDEX", "9"), "9/10"},
		{"auto/2", env("STIPPLE_SHARD_INDEX", "1"), "1/2"},
		// Kubernetes wins over a stray variable of another scheduler.
		{"auto/4", env("JOB_COMPLETION_INDEX", "0", "SLURM_ARRAY_TASK_ID", "3"), "0/4"},
		{"4/4", env(), "error: outside 0…3"},
		{"-1/4", env(), "error: outside"},
		{"1/0", env(), "error: count"},
		{"x/4", env(), "error: whole number"},
		{"1", env(), "error: no shard count"},
		{"auto/4", env(), "error: JOB_COMPLETION_INDEX"},
		{"auto/4", env("JOB_COMPLETION_INDEX", "4"), "error: JOB_COMPLETION_INDEX=4 is outside 0…3"},
		{"auto/4", env("JOB_COMPLETION_INDEX", "one"), "error: not a shard index"},
	} {
		got, err := parseShard(c.v, c.env)
		if msg, isErr := strings.CutPrefix(c.want, "error: "); isErr {
			if err == nil || !strings.Contains(err.Error(), msg) {
				t.Errorf("parseShard(%q) = %v, %v; want an error with %q", c.v, got, err, msg)
			}
			continue
		}
		if err != nil || got.String() != c.want {
			t.Errorf("parseShard(%q) = %v, %v; want %s", c.v, got, err, c.want)
		}
	}
}

// TestRenderFileURLEqualsFolder: render with --out file:///DIR goes
// through the same one-machine run as --out DIR (no sharded detour) and
// writes the same files, byte for byte.
func TestRenderFileURLEqualsFolder(t *testing.T) {
	if testing.Short() {
		t.Skip("renders the demo twice")
	}
	root := t.TempDir()
	m, err := writeDemoSource(filepath.Join(root, "demo"))
	if err != nil {
		t.Fatal(err)
	}
	folder, viaURL := filepath.Join(root, "folder"), filepath.Join(root, "url")
	for _, out := range []string{folder, "file://" + filepath.ToSlash(viaURL)} {
		var log bytes.Buffer
		if err := cmdRender(context.Background(), []string{m.Path, "--out", out, "--workers", "2"}, &log, &log); err != nil {
			t.Fatalf("--out %s: %v\n%s", out, err, log.String())
		}
		if strings.Contains(log.String(), "shard") {
			t.Errorf("--out %s took the sharded path:\n%s", out, log.String())
		}
	}
	compareTrees(t, publicFiles(t, folder), publicFiles(t, viaURL))
}
