//go:build unix

package sink

import (
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"testing"
)

// TestSweepGoneTemp checks that only the temporary files of processes of
// this host that have ended are removed from an unguarded folder: not
// those of this (running) process, not another host's, not other files,
// and nothing in subfolders.
func TestSweepGoneTemp(t *testing.T) {
	// A process that has ended: its pid is free (until reused, which
	// within this test is unlikely and would only keep its file).
	cmd := exec.Command("true")
	if err := cmd.Run(); err != nil {
		t.Skipf("cannot run a child process: %v", err)
	}
	gone := cmd.ProcessState.Pid()
	host := hostName()

	dir := t.TempDir()
	files := map[string]bool{ // name → removed by the sweep
		TempToken(host, gone) + "5a-1.index.html":       true,
		TempToken(host, gone) + "5a-2.summary.csv":      true,
		TempToken(host, os.Getpid()) + "5a-3.index.css": false,
		TempToken("other-host", gone) + "5a-4.x.json":   false,
		"index.html":     false,
		".put-notatoken": false,
	}
	for name := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	sub := filepath.Join(dir, "sub")
	if err := os.Mkdir(sub, 0o755); err != nil {
		t.Fatal(err)
	}
	deep := filepath.Join(sub, TempToken(host, gone)+"5a-5.page.html")
	if err := os.WriteFile(deep, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}

	if n := SweepGoneTemp(dir); n != 2 {
		t.Errorf("removed %d files, want 2", n)
	}
	var left []string
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		left = append(left, e.Name())
	}
	for name, removed := range files {
		if slices.Contains(left, name) == removed {
			t.Errorf("%s: removed %v, want %v", name, !removed, removed)
		}
	}
	if _, err := os.Stat(deep); err != nil {
		t.Errorf("the sweep reached into a subfolder: %v", err)
	}
}
