package mapjob

import (
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

func TestClaimRefusesForeignFolders(t *testing.T) {
	dir := t.TempDir()
	for _, f := range []string{"index.html", "map.json", "notes.txt"} {
		os.WriteFile(filepath.Join(dir, f), []byte("someone's own"), 0o644)
	}
	_, err := Claim(dir, false)
	if err == nil || !strings.Contains(err.Error(), "index.html, map.json, notes.txt") || !strings.Contains(err.Error(), "--force") {
		t.Fatalf("foreign folder: %v; want a refusal listing the files and naming --force", err)
	}
	release, err := Claim(dir, true)
	if err != nil {
		t.Fatalf("--force: %v", err)
	}
	release()
	// Once stipple has written there, the folder is its own.
	release, err = Claim(dir, false)
	if err != nil {
		t.Fatalf("second claim: %v", err)
	}
	release()
	// Absent and empty folders are fine.
	for _, d := range []string{filepath.Join(dir, "new"), t.TempDir()} {
		r, err := Claim(d, false)
		if err != nil {
			t.Errorf("%s: %v", d, err)
			continue
		}
		r()
	}
}

func TestClaimLocksOneRunAtATime(t *testing.T) {
	dir := t.TempDir()
	release, err := Claim(dir, false)
	if err != nil {
		t.Fatal(err)
	}
	_, err = Claim(dir, false)
	if !errors.Is(err, ErrBusy) || !strings.Contains(err.Error(), "pid "+strconv.Itoa(os.Getpid())) {
		t.Fatalf("second run: %v; want ErrBusy naming this process", err)
	}
	release()
	if _, err := os.Stat(filepath.Join(dir, ".stipple", lockFile)); !os.IsNotExist(err) {
		t.Fatalf("release left the lock: %v", err)
	}
	// A lock left by a process that is gone is taken over.
	cmd := exec.Command("true")
	if err := cmd.Run(); err != nil {
		t.Skip("no process to outlive:", err)
	}
	host, _ := os.Hostname()
	stale := strconv.Itoa(cmd.Process.Pid) + " " + host + " 2026-01-01T00:00:00Z\n"
	os.WriteFile(filepath.Join(dir, ".stipple", lockFile), []byte(stale), 0o644)
	release, err = Claim(dir, false)
	if err != nil {
		t.Fatalf("stale lock: %v", err)
	}
	release()
}
