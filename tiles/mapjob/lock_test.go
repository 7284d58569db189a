package mapjob

import (
	"context"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/tiles/sink"
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
	// The killed run left a half-written tile beside a whole one.
	half := filepath.Join(dir, "4", "3", sink.TempToken(host, cmd.Process.Pid)+"9-1")
	os.MkdirAll(filepath.Dir(half), 0o755)
	os.WriteFile(half, []byte("half"), 0o644)
	os.WriteFile(filepath.Join(dir, "4", "3", "5.png"), []byte("whole"), 0o644)
	release, err = Claim(dir, false)
	if err != nil {
		t.Fatalf("stale lock: %v", err)
	}
	release()
	if _, err := os.Stat(half); !os.IsNotExist(err) {
		t.Errorf("taking over the stale lock left the dead run's temporary file: %v", err)
	}
	if _, err := os.Stat(filepath.Join(dir, "4", "3", "5.png")); err != nil {
		t.Errorf("taking over the stale lock removed a tile: %v", err)
	}
}

// TestMarkWriterSweepsAKilledPartsFiles: a part's writer note left by a
// killed process makes the next start remove that process's temporary
// files (and only those); a part that returns takes its note away.
func TestMarkWriterSweepsAKilledPartsFiles(t *testing.T) {
	out := t.TempDir()
	state := filepath.Join(out, ".stipple", "part-3-of-16")
	os.MkdirAll(state, 0o755)
	os.WriteFile(filepath.Join(state, writerFile), []byte("4242 hostA\n"), 0o644)
	killed := filepath.Join(out, "9", "12", sink.TempToken("hostA", 4242)+"7-1")
	other := filepath.Join(out, "9", "12", sink.TempToken("hostA", 4343)+"7-1") // a live part's
	for _, f := range []string{killed, other, filepath.Join(out, "9", "12", "40.png")} {
		os.MkdirAll(filepath.Dir(f), 0o755)
		os.WriteFile(f, []byte("x"), 0o644)
	}
	done, err := markWriter(context.Background(), state, sink.NewDir(out))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(killed); !os.IsNotExist(err) {
		t.Errorf("the killed part's temporary file is still there: %v", err)
	}
	for _, f := range []string{other, filepath.Join(out, "9", "12", "40.png")} {
		if _, err := os.Stat(f); err != nil {
			t.Errorf("%s was removed: %v", f, err)
		}
	}
	b, _ := os.ReadFile(filepath.Join(state, writerFile))
	if pid, _, _ := parseLock(string(b)); pid != os.Getpid() {
		t.Errorf("writer note %q; want this process", b)
	}
	done()
	if _, err := os.Stat(filepath.Join(state, writerFile)); !os.IsNotExist(err) {
		t.Errorf("done left the writer note: %v", err)
	}
}
