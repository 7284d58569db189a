package main

import (
	"bytes"
	"fmt"
	"io/fs"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"
)

// buildStipple builds the command into a temporary folder.
func buildStipple(t *testing.T) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "stipple")
	cmd := exec.Command("go", "build", "-o", bin, ".")
	cmd.Env = append(os.Environ(), "CGO_ENABLED=0")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// shardRunner makes the command for one part of a sharded render with the
// built binary: stipple render MAP --shard I/N.
type shardRunner struct{ bin string }

func newShardRunner(t *testing.T, bin string) shardRunner { return shardRunner{bin: bin} }

func (r shardRunner) cmd(args ...string) *exec.Cmd {
	return exec.Command(r.bin, append([]string{"render"}, args...)...)
}

func runOK(t *testing.T, c *exec.Cmd) string {
	t.Helper()
	var out bytes.Buffer
	c.Stdout, c.Stderr = &out, &out
	if err := c.Run(); err != nil {
		t.Fatalf("%s: %v\n%s", strings.Join(c.Args, " "), err, out.String())
	}
	return out.String()
}

// publicFiles lists a render's files outside its .stipple state folder,
// with their bytes.
func publicFiles(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	files := map[string][]byte{}
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		if d.IsDir() {
			if rel == ".stipple" {
				return filepath.SkipDir
			}
			return nil
		}
		b, err := os.ReadFile(p)
		files[filepath.ToSlash(rel)] = b
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return files
}

// TestShardedRenderMatchesSingleMachine renders the demo city once on one
// machine and once as 4 parts in separate processes and folders, one of
// them killed with SIGKILL mid-run and rerun; the union of the parts plus
// the final step must equal the single render file for file, byte for byte.
func TestShardedRenderMatchesSingleMachine(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the command and renders the demo six times")
	}
	bin := buildStipple(t)
	runner := newShardRunner(t, bin)
	root := t.TempDir()
	m, err := writeDemoSource(filepath.Join(root, "demo"))
	if err != nil {
		t.Fatal(err)
	}
	mapPath := m.Path
	const n = 4
	single := filepath.Join(root, "single")
	runOK(t, exec.Command(bin, "render", mapPath, "--out", single, "--workers", "2"))

	// Plan first: the plan command prints the layout the parts will use.
	plan := runOK(t, exec.Command(bin, "plan", mapPath, "--shards", fmt.Sprint(n)))
	t.Logf("plan:\n%s", plan)

	parts := make([]string, n)
	for i := range parts {
		parts[i] = filepath.Join(root, fmt.Sprintf("part%d", i))
	}
	seed := uint64(time.Now().UnixNano())
	t.Logf("kill seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 8))
	for i := 0; i < n; i++ {
		args := []string{mapPath, "--shard", fmt.Sprintf("%d/%d", i, n), "--out", parts[i], "--workers", "2"}
		if i == 2 {
			// Time an uninterrupted run of this part elsewhere, then kill
			// it with SIGKILL after a random share of that time, and rerun.
			t0 := time.Now()
			runOK(t, runner.cmd(mapPath, "--shard", fmt.Sprintf("%d/%d", i, n), "--out", filepath.Join(root, "timing"), "--workers", "2"))
			full := time.Since(t0)
			killed := false
			for try := 0; try < 5 && !killed; try++ {
				// A try that finished before its kill leaves a complete
				// part that the next try would only resume: start afresh.
				if err := os.RemoveAll(parts[i]); err != nil {
					t.Fatal(err)
				}
				c := runner.cmd(args...)
				var out bytes.Buffer
				c.Stdout, c.Stderr = &out, &out
				if err := c.Start(); err != nil {
					t.Fatal(err)
				}
				delay := time.Duration(float64(full) * (0.1 + 0.7*rng.Float64()) / float64(try+1))
				time.Sleep(delay)
				c.Process.Kill() // SIGKILL on Unix: no cleanup runs
				werr := c.Wait()
				killed = werr != nil
				t.Logf("part %d (a whole run takes %s) killed after %s: %v; it had printed:\n%s", i, full.Round(time.Millisecond), delay.Round(time.Millisecond), werr, out.String())
			}
			if !killed {
				t.Fatal("the part finished before every kill; no interrupted run was tested")
			}
		}
		t.Log(runOK(t, runner.cmd(args...)))
	}

	// The union of the parts' folders: tiles, and the reports under
	// .stipple/shards for the final step. No file may come from two parts.
	union := filepath.Join(root, "union")
	from := map[string]int{}
	for i, p := range parts {
		err := filepath.WalkDir(p, func(path string, d fs.DirEntry, err error) error {
			if err != nil {
				return err
			}
			rel, _ := filepath.Rel(p, path)
			rel = filepath.ToSlash(rel)
			if d.IsDir() {
				if rel == ".stipple" || strings.HasPrefix(rel, ".stipple/") && rel != ".stipple/shards" {
					if rel != ".stipple" {
						return filepath.SkipDir
					}
				}
				return nil
			}
			if strings.HasPrefix(rel, ".stipple/") && !strings.HasPrefix(rel, ".stipple/shards/") {
				return nil
			}
			if j, dup := from[rel]; dup {
				t.Errorf("%s written by parts %d and %d", rel, j, i)
			}
			from[rel] = i
			b, err := os.ReadFile(path)
			if err != nil {
				return err
			}
			dst := filepath.Join(union, filepath.FromSlash(rel))
			os.MkdirAll(filepath.Dir(dst), 0o755)
			return os.WriteFile(dst, b, 0o644)
		})
		if err != nil {
			t.Fatal(err)
		}
	}
	t.Log(runOK(t, runner.cmd(mapPath, "--shard", fmt.Sprintf("final/%d", n), "--out", union, "--workers", "2")))

	want := publicFiles(t, single)
	compareTrees(t, want, publicFiles(t, union))

	// The same parts run at once into one shared folder (a shell loop
	// with &, or GNU parallel), then the final step there.
	shared := filepath.Join(root, "shared")
	var cmds []*exec.Cmd
	outs := make([]bytes.Buffer, n)
	for i := 0; i < n; i++ {
		c := runner.cmd(mapPath, "--shard", fmt.Sprintf("%d/%d", i, n), "--out", shared, "--workers", "1")
		c.Stdout, c.Stderr = &outs[i], &outs[i]
		if err := c.Start(); err != nil {
			t.Fatal(err)
		}
		cmds = append(cmds, c)
	}
	for i, c := range cmds {
		if err := c.Wait(); err != nil {
			t.Fatalf("concurrent part %d: %v\n%s", i, err, outs[i].String())
		}
	}
	runOK(t, runner.cmd(mapPath, "--shard", fmt.Sprintf("final/%d", n), "--out", shared, "--workers", "2"))
	compareTrees(t, want, publicFiles(t, shared))
	t.Logf("%d files identical, %d of them tiles, in separate folders and in one shared folder", len(want), tilesN(want))
}

func tilesN(files map[string][]byte) int {
	n := 0
	for p := range files {
		if strings.HasSuffix(p, ".png") && strings.Count(p, "/") == 2 {
			n++
		}
	}
	return n
}

// compareTrees fails unless got holds exactly want's files and bytes.
func compareTrees(t *testing.T, want, got map[string][]byte) {
	t.Helper()
	var missing, extra, differ []string
	for p, b := range want {
		g, ok := got[p]
		switch {
		case !ok:
			missing = append(missing, p)
		case !bytes.Equal(g, b):
			differ = append(differ, p)
		}
	}
	for p := range got {
		if _, ok := want[p]; !ok {
			extra = append(extra, p)
		}
	}
	slices.Sort(missing)
	slices.Sort(extra)
	slices.Sort(differ)
	short := func(s []string) []string { return s[:min(len(s), 10)] }
	if len(missing)+len(extra)+len(differ) > 0 {
		t.Fatalf("sharded render differs from the single one (%d files): %d missing %v, %d extra %v, %d differ %v",
			len(want), len(missing), short(missing), len(extra), short(extra), len(differ), short(differ))
	}
	if n := tilesN(want); n < 100 {
		t.Fatalf("only %d tiles compared; the demo should give hundreds", n)
	}
}
