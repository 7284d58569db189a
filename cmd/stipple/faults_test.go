package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"image/png"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/stipple-maps/stipple/tiles"
)

// checkWhole checks that a map folder offers a whole map or none: when its
// entry points (map.json, and index.html, which is never there without
// map.json) are there, every tile the viewer's
// tile index names exists and decodes, the folder holds exactly as many
// 1× tiles as map.json counts, and map.json's dot value is wantPerDot (one
// of the two maps of the test). Without entry points nothing is offered.
func checkWhole(t *testing.T, dir string, perDots ...float64) (offered bool) {
	t.Helper()
	_, errIndex := os.Stat(filepath.Join(dir, tiles.ViewerPage))
	b, errMeta := os.ReadFile(filepath.Join(dir, tiles.MetadataFile))
	if errIndex != nil && errMeta != nil {
		return false
	}
	if errMeta != nil {
		// The pages are written after map.json and taken down before it.
		t.Errorf("%s: index.html without map.json (%v)", dir, errMeta)
		return false
	}
	var md tiles.Metadata
	if err := json.Unmarshal(b, &md); err != nil {
		t.Fatalf("map.json: %v", err)
	}
	okPerDot := false
	for _, p := range perDots {
		okPerDot = okPerDot || md.PeoplePerDot == p
	}
	if !okPerDot {
		t.Errorf("map.json says %v people per dot; want one of %v", md.PeoplePerDot, perDots)
	}
	var tilesOnDisk int64
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		rel, _ := filepath.Rel(dir, p)
		if err == nil && !d.IsDir() && regexp.MustCompile(`^\d+/\d+/\d+\.png$`).MatchString(filepath.ToSlash(rel)) {
			tilesOnDisk++
		}
		return nil
	})
	if tilesOnDisk != md.TileCount {
		t.Errorf("map.json (%v per dot) counts %d tiles; the folder holds %d", md.PeoplePerDot, md.TileCount, tilesOnDisk)
	}
	// Every tile the index names is there and decodes.
	idx, _ := filepath.Glob(filepath.Join(dir, tiles.IndexDir, "0-*.js"))
	re := regexp.MustCompile(`stippleTileIndex\(0,(\d+),(.*)\);`)
	named := 0
	for _, f := range idx {
		js, _ := os.ReadFile(f)
		m := re.FindSubmatch(js)
		if m == nil {
			t.Fatalf("%s: not a tile index script", f)
		}
		z, _ := strconv.Atoi(string(m[1]))
		var ti struct {
			X0, Y0 int
			Rows   [][]int
		}
		if err := json.Unmarshal(m[2], &ti); err != nil {
			t.Fatal(err)
		}
		for r, runs := range ti.Rows {
			x := ti.X0
			for i := 0; i+1 < len(runs); i += 2 {
				x += runs[i]
				for k := 0; k < runs[i+1]; k++ {
					p := filepath.Join(dir, strconv.Itoa(z), strconv.Itoa(x+k), strconv.Itoa(ti.Y0+r)+".png")
					f, err := os.Open(p)
					if err != nil {
						t.Errorf("the tile index names %s, which is missing", p)
						continue
					}
					if _, err := png.Decode(f); err != nil {
						t.Errorf("%s does not decode: %v", p, err)
					}
					f.Close()
					named++
				}
				x += runs[i+1]
			}
		}
	}
	if int64(named) != md.TileCount {
		t.Errorf("the tile index names %d tiles; map.json counts %d", named, md.TileCount)
	}
	return true
}

// TestRerenderKilledNeverOffersAMixedMap renders the demo at 10 people per
// dot, then re-renders the same folder at 20 and kills it (SIGKILL, or
// SIGTERM) at random moments, in placing, in the tiles and in the
// metadata. After every kill the folder offers the old map whole, the new
// map whole, or no map; a final rerun gives the bytes of a clean render.
func TestRerenderKilledNeverOffersAMixedMap(t *testing.T) {
	if runtime.GOOS == "windows" || testing.Short() {
		t.Skip("builds the CLI and sends Unix signals")
	}
	bin := buildStipple(t)
	tmp := t.TempDir()
	clean := filepath.Join(tmp, "clean")
	if out, err := exec.Command(bin, "demo", clean, "--per-dot", "20").CombinedOutput(); err != nil {
		t.Fatalf("clean run: %v\n%s", err, out)
	}
	dir := filepath.Join(tmp, "map")
	start := time.Now()
	if out, err := exec.Command(bin, "demo", dir).CombinedOutput(); err != nil {
		t.Fatalf("first run: %v\n%s", err, out)
	}
	full := time.Since(start)
	rng := rand.New(rand.NewPCG(uint64(time.Now().UnixNano()), 7))
	offered := map[bool]int{}
	for trial := 0; trial < 6; trial++ {
		cmd := exec.Command(bin, "demo", dir, "--per-dot", "20")
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		delay := time.Duration(rng.Int64N(int64(full)))
		time.Sleep(delay)
		sig := syscall.SIGKILL
		if trial%2 == 1 {
			sig = syscall.SIGTERM
		}
		cmd.Process.Signal(sig)
		cmd.Wait()
		offered[checkWhole(t, dir, 10, 20)]++
		t.Logf("trial %d: %v after %v", trial, sig, delay.Round(time.Millisecond))
	}
	t.Logf("after the kills the folder offered a map %d times, none %d times", offered[true], offered[false])
	if out, err := exec.Command(bin, "demo", dir, "--per-dot", "20").CombinedOutput(); err != nil {
		t.Fatalf("rerun: %v\n%s", err, out)
	}
	if !checkWhole(t, dir, 20) {
		t.Fatal("the finished rerun offers no map")
	}
	want, got := publishedFiles(t, clean), publishedFiles(t, dir)
	for p, b := range want {
		if p == "source/quillmere.toml" || p == "source/quillmere.geojson" {
			continue
		}
		if !bytes.Equal(got[p], b) {
			t.Errorf("%s differs from a clean render", p)
		}
	}
	for p := range got {
		if _, ok := want[p]; !ok {
			t.Errorf("extra file after the rerun: %s", p)
		}
	}
}

// TestTwoRendersIntoOneFolder: while one render works in a folder, a
// second one into the same folder stops at once with exit 1 and the lock
// message naming the first's process; the first finishes whole.
func TestTwoRendersIntoOneFolder(t *testing.T) {
	if runtime.GOOS == "windows" || testing.Short() {
		t.Skip("builds and runs the CLI")
	}
	bin := buildStipple(t)
	dir := filepath.Join(t.TempDir(), "map")
	first := exec.Command(bin, "demo", dir, "--max-zoom", "16")
	stdout := &firstLine{seen: make(chan struct{})}
	first.Stdout = stdout
	if err := first.Start(); err != nil {
		t.Fatal(err)
	}
	select {
	case <-stdout.seen:
	case <-time.After(time.Minute):
		first.Process.Kill()
		t.Fatal("the first render printed nothing in a minute")
	}
	second := exec.Command(bin, "demo", dir)
	var errOut bytes.Buffer
	second.Stderr = &errOut
	err := second.Run()
	code := second.ProcessState.ExitCode()
	if code != 1 || !strings.Contains(errOut.String(), "another run is using this folder") ||
		!strings.Contains(errOut.String(), fmt.Sprintf("pid %d", first.Process.Pid)) {
		t.Errorf("second render: exit %d (%v), stderr %q; want exit 1 naming pid %d", code, err, errOut.String(), first.Process.Pid)
	}
	if err := first.Wait(); err != nil {
		t.Fatalf("the first render failed: %v", err)
	}
	if !checkWhole(t, dir, 10) {
		t.Error("the first render left no map")
	}
}

// TestForeignFolderNeedsForce: a folder holding someone's own files is
// refused with the files listed, and written with --force.
func TestForeignFolderNeedsForce(t *testing.T) {
	dir := t.TempDir()
	for _, f := range []string{"index.html", "legend.png", "notes.txt"} {
		os.WriteFile(filepath.Join(dir, f), []byte("someone's own"), 0o644)
	}
	var out, errOut bytes.Buffer
	if code := run(t.Context(), []string{"demo", dir}, &out, &errOut); code != 1 ||
		!strings.Contains(errOut.String(), "index.html, legend.png, notes.txt") || !strings.Contains(errOut.String(), "--force") {
		t.Fatalf("exit %d, %q; want 1 and the files listed", code, errOut.String())
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "index.html")); string(b) != "someone's own" {
		t.Error("the refused run replaced index.html")
	}
	out.Reset()
	errOut.Reset()
	if code := run(t.Context(), []string{"demo", dir, "--force"}, &out, &errOut); code != 0 {
		t.Fatalf("--force: exit %d, %s", code, errOut.String())
	}
}

// TestDiskFullLeavesNoMixedMap re-renders the demo into a 3 MB tmpfs that
// holds the first render (10 people per dot) but not the re-render's dot
// store and tiles side by side: the run fails with exit 1 and a one-line
// message, and the folder offers a whole map or none. Mounting needs root:
// skipped otherwise, failed under STIPPLE_REQUIRE_TOOLS=1 (CI runs as root).
func TestDiskFullLeavesNoMixedMap(t *testing.T) {
	if runtime.GOOS != "linux" || testing.Short() {
		t.Skip("mounts a Linux tmpfs")
	}
	require := os.Getenv("STIPPLE_REQUIRE_TOOLS") == "1"
	mnt := t.TempDir()
	if out, err := exec.Command("mount", "-t", "tmpfs", "-o", "size=3m", "tmpfs", mnt).CombinedOutput(); err != nil {
		if require {
			t.Fatalf("mount tmpfs (STIPPLE_REQUIRE_TOOLS=1): %v %s", err, out)
		}
		t.Skipf("cannot mount a tmpfs (not root?): %v %s", err, out)
	}
	defer exec.Command("umount", mnt).Run()
	dir := filepath.Join(mnt, "map")
	var out, errOut bytes.Buffer
	code := run(t.Context(), []string{"demo", dir, "--max-zoom", "13"}, &out, &errOut)
	if code == 0 {
		// It fitted: now a re-render with more dots and zooms must not.
		out.Reset()
		errOut.Reset()
		code = run(t.Context(), []string{"demo", dir, "--per-dot", "2", "--max-zoom", "16"}, &out, &errOut)
	}
	if code != 1 {
		t.Fatalf("exit %d; want 1 when the disk fills. stdout %s stderr %s", code, out.String(), errOut.String())
	}
	if msg := errOut.String(); strings.Count(msg, "\n") != 1 || !strings.Contains(msg, "no space left on device") {
		t.Errorf("stderr %q; want one line naming the full disk", msg)
	}
	checkWhole(t, dir, 10, 2)
}
