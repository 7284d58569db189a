package main

import (
	"bytes"
	"image/png"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestKilledRenderResumesToIdenticalOutput builds the CLI, renders the demo
// once without interruption, then renders it again into a second folder
// while killing the process (SIGKILL, no chance to clean up) at random
// moments, and finishes with a clean rerun. Every file of the two folders
// must be byte-identical and every PNG must decode.
func TestKilledRenderResumesToIdenticalOutput(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the CLI")
	}
	tmp := t.TempDir()
	bin := filepath.Join(tmp, "stipple")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	// The map is rendered into the same folder each time (paths are
	// recorded in it), and the uninterrupted result moved aside.
	dir := filepath.Join(tmp, "map")
	start := time.Now()
	if out, err := exec.Command(bin, "demo", dir).CombinedOutput(); err != nil {
		t.Fatalf("uninterrupted run: %v\n%s", err, out)
	}
	full := time.Since(start)
	want := outputFiles(t, dir)
	if len(want) < 900 {
		t.Fatalf("only %d files in the demo", len(want))
	}
	seed := uint64(time.Now().UnixNano())
	t.Logf("seed %d; an uninterrupted run takes %s", seed, full)
	rng := rand.New(rand.NewPCG(seed, 1))
	killed := 0
	for trial := 0; trial < 2; trial++ {
		if err := os.RemoveAll(dir); err != nil {
			t.Fatal(err)
		}
		// One kill anywhere in the run, then one early in the rerun.
		for _, span := range []float64{0.9, 0.3} {
			cmd := exec.Command(bin, "demo", dir)
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			delay := time.Duration((0.02 + rng.Float64()*span) * float64(full))
			time.Sleep(delay)
			cmd.Process.Kill() // SIGKILL: no chance to clean up
			if err := cmd.Wait(); err != nil {
				killed++
				t.Logf("trial %d: killed after %s", trial, delay.Round(time.Millisecond))
			} else {
				t.Logf("trial %d: finished before the kill at %s", trial, delay.Round(time.Millisecond))
			}
		}
		if out, err := exec.Command(bin, "demo", dir).CombinedOutput(); err != nil {
			t.Fatalf("resumed run: %v\n%s", err, out)
		}
		got := outputFiles(t, dir)
		for name := range want {
			if _, ok := got[name]; !ok {
				t.Errorf("trial %d: missing after resume: %s", trial, name)
			}
		}
		for name, data := range got {
			w, ok := want[name]
			switch {
			case !ok:
				t.Errorf("trial %d: extra file after resume: %s", trial, name)
			case !bytes.Equal(data, w):
				t.Errorf("trial %d: %s differs from the uninterrupted run", trial, name)
			}
			if strings.HasSuffix(name, ".png") {
				if _, err := png.Decode(bytes.NewReader(data)); err != nil {
					t.Errorf("trial %d: %s: %v", trial, name, err)
				}
			}
		}
	}
	if killed == 0 {
		t.Error("no run was killed before it finished; the test proved nothing")
	}
	t.Logf("%d kills, %d files compared per trial", killed, len(want))
}

func outputFiles(t *testing.T, root string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	err := filepath.WalkDir(root, func(p string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(root, p)
		out[rel], err = os.ReadFile(p)
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}
