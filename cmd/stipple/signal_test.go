package main

import (
	"bytes"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"
)

// TestSignalsStopCleanly builds the CLI, starts a long demo render (zooms
// to 16), and once it has begun sends SIGINT or SIGTERM. The command must
// stop by itself (not be killed by the signal) with the one-line message
// and exit code 128 + the signal's number: 130 for SIGINT (2), 143 for
// SIGTERM (15) (Bash Reference Manual, section 3.7.5 "Exit Status";
// signal numbers from POSIX kill, the -s list).
func TestSignalsStopCleanly(t *testing.T) {
	if runtime.GOOS == "windows" || runtime.GOOS == "plan9" {
		t.Skip("sends Unix signals")
	}
	if testing.Short() {
		t.Skip("builds and runs the CLI")
	}
	bin := buildStipple(t)
	for _, c := range []struct {
		sig  syscall.Signal
		code int
	}{
		{syscall.SIGINT, 130},
		{syscall.SIGTERM, 143},
	} {
		t.Run(c.sig.String(), func(t *testing.T) {
			dir := filepath.Join(t.TempDir(), "demo")
			cmd := exec.Command(bin, "demo", dir, "--max-zoom", "16")
			var stderr bytes.Buffer
			stdout := &firstLine{seen: make(chan struct{})}
			cmd.Stdout, cmd.Stderr = stdout, &stderr
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			// The first line comes from run, after the handler is set up.
			select {
			case <-stdout.seen:
			case <-time.After(time.Minute):
				cmd.Process.Kill()
				t.Fatalf("no output in a minute; stderr %s", stderr.String())
			}
			time.Sleep(300 * time.Millisecond) // into the work
			start := time.Now()
			if err := cmd.Process.Signal(c.sig); err != nil {
				t.Fatal(err)
			}
			go func() {
				time.Sleep(2 * time.Minute)
				cmd.Process.Kill()
			}()
			err := cmd.Wait()
			var ee *exec.ExitError
			if !errors.As(err, &ee) {
				t.Fatalf("exit %v: the render finished before the signal", err)
			}
			if ws, ok := ee.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
				t.Fatalf("killed by %v instead of stopping by itself", ws.Signal())
			}
			if got := ee.ExitCode(); got != c.code {
				t.Errorf("exit code %d, want %d", got, c.code)
			}
			want := "stipple: interrupted; rerun the same command to finish\n"
			if !strings.HasSuffix(stderr.String(), want) || strings.Count(stderr.String(), "\n") != 1 {
				t.Errorf("stderr %q, want the one line %q", stderr.String(), want)
			}
			t.Logf("stopped %s after the signal", time.Since(start).Round(time.Millisecond))
			if _, err := os.Stat(dir); err != nil {
				t.Errorf("the demo folder is gone: %v", err)
			}
		})
	}
}

// firstLine is a stdout that closes seen once a full line has been written.
type firstLine struct {
	mu   sync.Mutex
	buf  bytes.Buffer
	seen chan struct{}
}

func (w *firstLine) Write(p []byte) (int, error) {
	w.mu.Lock()
	defer w.mu.Unlock()
	had := bytes.IndexByte(w.buf.Bytes(), '\n') >= 0
	w.buf.Write(p)
	if !had && bytes.IndexByte(w.buf.Bytes(), '\n') >= 0 {
		close(w.seen)
	}
	return len(p), nil
}
