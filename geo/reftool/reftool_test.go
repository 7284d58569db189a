package reftool

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// recorder is a testing.TB that records Skip and Fatalf instead of
// stopping the test, so the two outcomes can be checked.
type recorder struct {
	testing.TB
	skipped, failed string
}

func (r *recorder) Helper() {}
func (r *recorder) Skip(args ...any) {
	r.skipped = fmt.Sprint(args...)
}
func (r *recorder) Fatalf(format string, args ...any) {
	r.failed = fmt.Sprintf(format, args...)
}

func TestMissingSkipsOrFails(t *testing.T) {
	const absent = "stipple-no-such-tool-here"
	for _, c := range []struct {
		name, env         string
		wantSkip, wantErr bool
		call              func(tb testing.TB) string
	}{
		{"tool, not required", "", true, false, func(tb testing.TB) string { return Need(tb, absent) }},
		{"tool, required", "1", false, true, func(tb testing.TB) string { return Need(tb, absent) }},
		{"tool, other value", "0", true, false, func(tb testing.TB) string { return Need(tb, absent) }},
		{"data, not required", "", true, false, func(tb testing.TB) string { return SharedData(tb, absent+".geojson") }},
		{"data, required", "1", false, true, func(tb testing.TB) string { return SharedData(tb, absent+".geojson") }},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Setenv(RequireEnv, c.env)
			r := &recorder{TB: t}
			c.call(r)
			if (r.skipped != "") != c.wantSkip || (r.failed != "") != c.wantErr {
				t.Fatalf("skipped %q, failed %q; want skip %v, fail %v", r.skipped, r.failed, c.wantSkip, c.wantErr)
			}
			msg := r.skipped + r.failed
			if !strings.Contains(msg, absent) {
				t.Errorf("message %q does not name %s", msg, absent)
			}
			if c.wantErr && !strings.Contains(msg, RequireEnv+"=1") {
				t.Errorf("message %q does not say why it is required", msg)
			}
		})
	}
}

func TestNeedFindsAProgram(t *testing.T) {
	// go test runs with the go command's own folder on PATH or not; the
	// test binary itself always exists, so put its folder on PATH.
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	t.Setenv("PATH", filepath.Dir(exe))
	r := &recorder{TB: t}
	got := Need(r, filepath.Base(exe))
	if r.skipped != "" || r.failed != "" || got != exe {
		t.Fatalf("Need = %q (skipped %q, failed %q), want %s", got, r.skipped, r.failed, exe)
	}
}

func TestRootAndSharedPath(t *testing.T) {
	root, err := Root()
	if err != nil {
		t.Fatal(err)
	}
	// This package lives at geo/reftool under the root.
	wd, _ := os.Getwd()
	if want := filepath.Dir(filepath.Dir(wd)); root != want {
		t.Fatalf("Root = %s, want %s", root, want)
	}
	mod, err := os.ReadFile(filepath.Join(root, "go.mod"))
	if err != nil || !strings.HasPrefix(string(mod), "module github.com/stipple-maps/stipple\n") {
		t.Fatalf("go.mod at %s: %v %.40q", root, err, mod)
	}

	// A made-up tree: root/repo/go.mod, root/shared/data/x.csv, tested from
	// root/repo/a/b.
	tmp := t.TempDir()
	for _, d := range []string{"repo/a/b", "shared/data/sub"} {
		if err := os.MkdirAll(filepath.Join(tmp, d), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	for _, f := range []string{"repo/go.mod", "shared/data/sub/x.csv"} {
		if err := os.WriteFile(filepath.Join(tmp, f), nil, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	t.Chdir(filepath.Join(tmp, "repo", "a", "b"))
	p, err := SharedPath("sub/x.csv")
	if want := filepath.Join(tmp, "shared", "data", "sub", "x.csv"); err != nil || !sameFile(p, want) {
		t.Errorf("SharedPath = %q, %v; want %s", p, err, want)
	}
	if _, err := SharedPath("y.csv"); err == nil || !strings.Contains(err.Error(), "y.csv") {
		t.Errorf("SharedPath(absent) error %v, want one naming y.csv", err)
	}
}

func sameFile(a, b string) bool {
	fa, err1 := os.Stat(a)
	fb, err2 := os.Stat(b)
	return err1 == nil && err2 == nil && os.SameFile(fa, fb)
}
