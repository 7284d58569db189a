package shard

import (
	"context"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/tiles/sink"
)

func TestRatesFileRoundTripAndErrors(t *testing.T) {
	dir := t.TempDir()
	name := filepath.Join(dir, "rates.json")
	want := MeasuredRates
	want.FileNs = 23456
	want.Source = "probe"
	if err := WriteRates(name, want); err != nil {
		t.Fatal(err)
	}
	got, err := ReadRates(name)
	if err != nil {
		t.Fatal(err)
	}
	if got != want {
		t.Fatalf("read %+v; wrote %+v", got, want)
	}
	// A file with only some rates keeps the others' measured values.
	part := filepath.Join(dir, "part.json")
	os.WriteFile(part, []byte(`{"format": "stipple-rates/1", "file_ns": 1000}`), 0o644)
	got, err = ReadRates(part)
	if err != nil {
		t.Fatal(err)
	}
	if got.FileNs != 1000 || got.TileNs != MeasuredRates.TileNs || got.Source != part {
		t.Fatalf("partial file: %+v", got)
	}
	for _, c := range []struct{ body, want string }{
		{`{"format": "stipple-rates/1", "tile_ns": -5}`, "field tile_ns is -5; want a finite number ≥ 0"},
		{`{"format": "other", "tile_ns": 5}`, `field format is "other"`},
		{`{"format": "stipple-rates/1", "tile_nanos": 5}`, `unknown field "tile_nanos"`},
		{`{"format": "stipple-rates/1", "tile_ns": "fast"}`, "not a rates file"},
	} {
		bad := filepath.Join(dir, "bad.json")
		os.WriteFile(bad, []byte(c.body), 0o644)
		_, err := ReadRates(bad)
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), bad) {
			t.Errorf("%s: error %v; want one naming the file and %q", c.body, err, c.want)
		}
	}
	if _, err := ReadRates(filepath.Join(dir, "none.json")); err == nil {
		t.Error("a missing rates file was read")
	}
}

func TestProbeFilesWritesAndRemovesItsFiles(t *testing.T) {
	dir := t.TempDir()
	s := sink.NewDir(dir)
	ns, err := ProbeFiles(context.Background(), s, ".stipple/probe", 64, 100, 10)
	if err != nil {
		t.Fatal(err)
	}
	// Writing a file takes more than a nanosecond and (on any machine
	// these tests run on) less than a second.
	if !(ns > 1 && ns < 1e9) {
		t.Errorf("%v ns a file", ns)
	}
	var left []string
	filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			left = append(left, p)
		}
		return nil
	})
	if len(left) > 0 {
		t.Errorf("the probe left %d files, such as %s", len(left), left[0])
	}
	if _, err := ProbeFiles(context.Background(), s, "p", 4, 100, 10); err == nil {
		t.Error("a probe of 4 files ran")
	}
}

// TestMergeEqualsAMapOfCounts checks Merge, in order and interleaved,
// against the plain sum of counts per key in a map.
func TestMergeEqualsAMapOfCounts(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 19))
	for _, c := range []struct {
		name     string
		disjoint bool
	}{{"runs in shard order", true}, {"interleaved", false}} {
		want := map[uint64]uint64{}
		var parts []*Summary
		for p := 0; p < 6; p++ {
			s := &Summary{Level: 9}
			k := uint64(0)
			if c.disjoint {
				k = uint64(p) << 40
			}
			for i := 0; i < 200+rng.IntN(300); i++ {
				k += 1 + uint64(rng.IntN(50))
				n := 1 + uint64(rng.IntN(9))
				s.Keys = append(s.Keys, k)
				s.Counts = append(s.Counts, n)
				want[k] += n
			}
			parts = append(parts, s)
		}
		got, err := Merge(parts...)
		if err != nil {
			t.Fatal(err)
		}
		if len(got.Keys) != len(want) || got.Level != 9 {
			t.Fatalf("%s: %d keys at level %d; want %d at 9", c.name, len(got.Keys), got.Level, len(want))
		}
		for i, k := range got.Keys {
			if i > 0 && got.Keys[i-1] >= k {
				t.Fatalf("%s: keys out of order at %d", c.name, i)
			}
			if got.Counts[i] != want[k] {
				t.Fatalf("%s: key %x counts %d; want %d", c.name, k, got.Counts[i], want[k])
			}
		}
	}
}
