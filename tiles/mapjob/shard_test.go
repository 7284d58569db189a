package mapjob

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/geo/benchdata"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/shard"
)

// public skips stipple's state folder: what a render publishes.
func public(rel string) bool { return strings.HasPrefix(filepath.ToSlash(rel), tiles.StateDir+"/") }

// renderShards runs parts 0 … n−1 of m one after another into m.Out, then
// the final step.
func renderShards(t *testing.T, m *mapfile.Map, layer *geo.Layer, n int, opt Options) (*ShardPlan, *Summary) {
	t.Helper()
	ctx := context.Background()
	in, err := Load(m, layer)
	if err != nil {
		t.Fatal(err)
	}
	plan, err := PlanShards(in, m, n, opt.HiDPI || m.Tiles.HiDPI, nil)
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < n; i++ {
		if _, err := RunPart(ctx, in, m, plan, i, opt); err != nil {
			t.Fatalf("part %d/%d: %v", i, n, err)
		}
	}
	s, err := RunFinal(ctx, in, m, plan, opt)
	if err != nil {
		t.Fatalf("final/%d: %v", n, err)
	}
	return plan, s
}

// TestShardedRenderEqualsRun renders the invented country with Run, and as
// 3 parts plus the final step into one folder: every published file (tiles,
// map.json, legends, viewer, alt.txt) must be byte for byte the same, and
// the summaries must agree. The comparison is the point of the sharded
// design (tiles/shard doc: "its tiles are byte for byte those of a
// single-machine render").
func TestShardedRenderEqualsRun(t *testing.T) {
	layer := benchdata.Country(200_000, 12, 8, 5)
	for _, hidpi := range []bool{false, true} {
		t.Run(fmt.Sprintf("hidpi=%v", hidpi), func(t *testing.T) {
			one := t.TempDir()
			m := benchMap(one)
			m.Tiles.MinZoom, m.Tiles.MaxZoom = 0, 8
			n := 3
			if hidpi {
				// @2x dots are twice as wide: with the default smallest
				// dot every zoom is a disc zoom and the final step would
				// draw nothing. Smaller faint dots leave it count zooms.
				m.Dots.MinDiameter = 0.2
			}
			want, err := Run(context.Background(), m, Options{Layer: cloneLayer(layer), Workers: 2, HiDPI: hidpi})
			if err != nil {
				t.Fatal(err)
			}
			sharded := t.TempDir()
			m.Out = sharded
			plan, got := renderShards(t, m, cloneLayer(layer), n, Options{Workers: 2, HiDPI: hidpi})
			t.Logf("split zoom %d, %d blocks, imbalance %.3f", plan.Layout.Split, plan.Layout.Blocks, plan.Layout.Imbalance())
			if plan.Layout.Split <= m.Tiles.MinZoom {
				t.Errorf("split zoom %d: the final step draws no zoom, so the summaries go untested", plan.Layout.Split)
			}
			a, b := files(t, one, public), files(t, sharded, public)
			for _, name := range []string{"map.json", "legend.png", "legend@2x.png", "legend.svg", "alt.txt", "index.html"} {
				if _, ok := a[name]; !ok {
					t.Errorf("Run wrote no %s", name)
				}
			}
			sameFiles(t, a, b)
			if want.Tiles.Tiles < 200 {
				t.Errorf("only %d tiles compared", want.Tiles.Tiles)
			}
			if hidpi && want.Tiles.Tiles2x != want.Tiles.Tiles {
				t.Errorf("%d @2x tiles for %d 1× tiles", want.Tiles.Tiles2x, want.Tiles.Tiles)
			}
			if fmt.Sprint(got.Tally) != fmt.Sprint(want.Tally) {
				t.Errorf("tally of the parts %+v; Run's %+v", got.Tally, want.Tally)
			}
		})
	}
}

// logTrigger is a log that calls fn once, when a line holds word.
type logTrigger struct {
	mu   sync.Mutex
	buf  bytes.Buffer
	word string
	fn   func()
}

func (l *logTrigger) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.fn != nil && bytes.Contains(p, []byte(l.word)) {
		l.fn()
		l.fn = nil
	}
	return l.buf.Write(p)
}

func (l *logTrigger) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.buf.String()
}

// TestKilledPartResumes stops a part once its dots are placed (as a kill
// during the tiles would), reruns it, and checks that the rerun draws from
// the kept dots and that the map still equals Run's. A further rerun finds
// the part complete.
func TestKilledPartResumes(t *testing.T) {
	layer := benchdata.Country(100_000, 8, 6, 7)
	one := t.TempDir()
	m := benchMap(one)
	m.Tiles.MinZoom, m.Tiles.MaxZoom = 2, 8
	if _, err := Run(context.Background(), m, Options{Layer: cloneLayer(layer), Workers: 2}); err != nil {
		t.Fatal(err)
	}
	m.Out = t.TempDir()
	in, err := Load(m, cloneLayer(layer))
	if err != nil {
		t.Fatal(err)
	}
	const n = 2
	plan, err := PlanShards(in, m, n, false, nil)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	log := &logTrigger{word: "placed", fn: cancel}
	if _, err := RunPart(ctx, in, m, plan, 1, Options{Workers: 2, Log: log}); err == nil {
		t.Fatalf("the stopped part finished:\n%s", log)
	}
	for i := 0; i < n; i++ {
		log := &logTrigger{}
		if _, err := RunPart(context.Background(), in, m, plan, i, Options{Workers: 2, Log: log}); err != nil {
			t.Fatal(err)
		}
		if reused := strings.Contains(log.String(), "reusing"); reused != (i == 1) {
			t.Errorf("part %d/%d: reused kept dots %v; want %v:\n%s", i, n, reused, i == 1, log)
		}
	}
	again := &logTrigger{}
	if _, err := RunPart(context.Background(), in, m, plan, 1, Options{Workers: 2, Log: again}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(again.String(), "already complete") {
		t.Errorf("a finished part ran again:\n%s", again)
	}
	if _, err := RunFinal(context.Background(), in, m, plan, Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	sameFiles(t, files(t, one, public), files(t, m.Out, public))
}

// smallMap copies testdata/small into a temporary folder, applying edit to
// each file's text, and reads its map.
func smallMap(t *testing.T, edit func(name, text string) string) *mapfile.Map {
	t.Helper()
	dir := t.TempDir()
	src := filepath.Join("..", "..", "testdata", "small")
	names, err := os.ReadDir(src)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range names {
		b, err := os.ReadFile(filepath.Join(src, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		text := string(b)
		if edit != nil {
			text = edit(e.Name(), text)
		}
		if err := os.WriteFile(filepath.Join(dir, e.Name()), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	m, err := mapfile.Read(filepath.Join(dir, "map.toml"))
	if err != nil {
		t.Fatal(err)
	}
	m.Out = filepath.Join(dir, "out")
	return m
}

// TestNullGeometryThroughShards: feature "010" of testdata/small has no
// geometry; given 50 + 25 people, at 5 people per dot its 15 dots find no
// place. A sharded render (whose parts sample no area without geometry)
// counts its 75 people as not drawn, as Run does, and writes the same map.
// The figures follow from the test input and the rule that every person is
// drawn or counted as not drawn (README, "not drawn").
func TestNullGeometryThroughShards(t *testing.T) {
	people := func(name, text string) string {
		if name != "areas.geojson" {
			return text
		}
		old := `"code": "010", "north": 0, "south": 0`
		if !strings.Contains(text, old) {
			t.Fatalf("testdata/small/areas.geojson no longer has %s", old)
		}
		return strings.Replace(text, old, `"code": "010", "north": 50, "south": 25`, 1)
	}
	m := smallMap(t, people)
	want, err := Run(context.Background(), m, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	// The small map's areas lie in one block at every split zoom it
	// allows, so it renders as one part (TestNullGeometryAcrossParts
	// covers several).
	ms := *m
	ms.Out = filepath.Join(t.TempDir(), "out")
	_, got := renderShards(t, &ms, nil, 1, Options{Workers: 2})
	if got.NotDrawn != 75 || want.NotDrawn != 75 {
		t.Errorf("not drawn: sharded %v, Run %v; want 75", got.NotDrawn, want.NotDrawn)
	}
	if len(got.Problems) != 1 || !strings.Contains(got.Problems[0], `id "010"`) || !strings.Contains(got.Problems[0], "15 dots not drawn") {
		t.Errorf("problems %q; want one line for id \"010\" with 15 dots", got.Problems)
	}
	var md tiles.Metadata
	b, err := os.ReadFile(filepath.Join(ms.Out, "map.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &md); err != nil {
		t.Fatal(err)
	}
	if md.NotDrawn.People != 75 || md.NotDrawn.Dots != 15 {
		t.Errorf("map.json not_drawn %+v; want 75 people, 15 dots", md.NotDrawn)
	}
	sameFiles(t, files(t, m.Out, public), files(t, ms.Out, public))
}

// TestNullGeometryAcrossParts: one area of the invented country loses its
// geometry; 3 parts plus the final step count its dots as not drawn (no
// part samples it) and write Run's map.
func TestNullGeometryAcrossParts(t *testing.T) {
	layer := cloneLayer(benchdata.Country(100_000, 8, 6, 11))
	layer.Features = append([]geo.Feature(nil), layer.Features...)
	const nogeo = 7
	layer.Features[nogeo].Geometry = nil
	one := t.TempDir()
	m := benchMap(one)
	m.Tiles.MinZoom, m.Tiles.MaxZoom = 0, 8
	want, err := Run(context.Background(), m, Options{Layer: layer, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	in, err := Load(m, layer)
	if err != nil {
		t.Fatal(err)
	}
	lost := 0
	for _, d := range in.Dots[nogeo] {
		lost += d
	}
	if lost == 0 {
		t.Fatal("the area without geometry has no dots to lose")
	}
	m.Out = t.TempDir()
	_, got := renderShards(t, m, layer, 3, Options{Workers: 2})
	if wantPeople := float64(lost) * m.PeoplePerDot; got.NotDrawn != wantPeople || want.NotDrawn != wantPeople {
		t.Errorf("not drawn: sharded %v, Run %v; want %d dots × %v people", got.NotDrawn, want.NotDrawn, lost, m.PeoplePerDot)
	}
	sameFiles(t, files(t, one, public), files(t, m.Out, public))
}

// TestMaskEditReplacesPart: a part is complete while nothing changes; after
// the mask file is edited in place (same name), its rerun places the dots
// again instead of saying it is complete, since the look fingerprint hashes
// the masks' contents.
func TestMaskEditReplacesPart(t *testing.T) {
	m := smallMap(t, func(name, text string) string {
		if name == "map.toml" {
			return strings.Replace(text, `id = "code"`, "id = \"code\"\nmask = [\"water.geojson\"]", 1)
		}
		return text
	})
	if len(m.Input.Mask) != 1 {
		t.Fatalf("map masks %q", m.Input.Mask)
	}
	part := func() (string, *ShardPlan) {
		in, err := Load(m, nil)
		if err != nil {
			t.Fatal(err)
		}
		plan, err := PlanShards(in, m, 1, false, nil)
		if err != nil {
			t.Fatal(err)
		}
		log := &logTrigger{}
		if _, err := RunPart(context.Background(), in, m, plan, 0, Options{Workers: 2, Log: log}); err != nil {
			t.Fatal(err)
		}
		return log.String(), plan
	}
	first, p1 := part()
	second, _ := part()
	if strings.Contains(first, "already complete") || !strings.Contains(second, "already complete") {
		t.Fatalf("first run:\n%s\nsecond run:\n%s", first, second)
	}
	water := m.Resolve(m.Input.Mask[0])
	b, err := os.ReadFile(water)
	if err != nil {
		t.Fatal(err)
	}
	// The pond grows west by a hundredth of a degree, over area "007".
	edited := strings.ReplaceAll(string(b), "-140.01,", "-140.02,")
	if edited == string(b) {
		t.Fatal("the mask edit changed nothing")
	}
	if err := os.WriteFile(water, []byte(edited), 0o644); err != nil {
		t.Fatal(err)
	}
	third, p3 := part()
	if strings.Contains(third, "already complete") || strings.Contains(third, "reusing") || !strings.Contains(third, "placed") {
		t.Errorf("after the mask edit the part did not place again:\n%s", third)
	}
	if p1.Look == p3.Look {
		t.Error("the look fingerprint did not change with the mask's contents")
	}
}

// TestMergeOutcomes: the final step takes each area's outcome from the
// part that owns it, and refuses reports that do not fit together.
func TestMergeOutcomes(t *testing.T) {
	m := benchMap(t.TempDir())
	m.Tiles.MinZoom, m.Tiles.MaxZoom = 2, 8
	layer := cloneLayer(benchdata.Country(50_000, 8, 6, 3))
	layer.Features = append([]geo.Feature(nil), layer.Features...)
	const nogeo = 5
	layer.Features[nogeo].Geometry = nil
	in, err := Load(m, layer)
	if err != nil {
		t.Fatal(err)
	}
	plan, err := PlanShards(in, m, 3, false, nil)
	if err != nil {
		t.Fatal(err)
	}
	l := plan.Layout
	owner := func(i int) int { return l.AreaOwner(in.Layer.Features[i].Geometry.Bound()) }
	ownedBy := make([]int, l.Shards)
	for i, f := range in.Layer.Features {
		if len(f.Geometry) > 0 {
			ownedBy[owner(i)]++
		}
	}
	a, b := 0, 1 // two areas with geometry, and a part that owns neither of the first
	other := (owner(a) + 1) % l.Shards
	reports := func(extra ...shard.AreaResult) []*shard.Report {
		reps := make([]*shard.Report, l.Shards)
		for i := range reps {
			reps[i] = &shard.Report{Shard: i, Shards: l.Shards, AreasOwned: ownedBy[i]}
		}
		for _, e := range extra {
			reps[e.Problem[0]-'0'].Areas = append(reps[e.Problem[0]-'0'].Areas, e)
		}
		return reps
	}
	// Problem's first character names the reporting part here.
	res := func(part, area int) shard.AreaResult {
		return shard.AreaResult{Index: area, Lost: []int{1, 0, 0, 0, 0}, Problem: fmt.Sprint(part, " test")}
	}
	for _, c := range []struct {
		name string
		reps []*shard.Report
		want string // "" for success
	}{
		{"each area by its owner", reports(res(owner(a), a), res(owner(b), b)), ""},
		{"an area reported twice", reports(res(owner(a), a), res(other, a)), "both report area 0"},
		{"an area from a part that does not own it", reports(res(other, a)), "not one of its own"},
		{"an area without geometry", reports(res(0, nogeo)), "not one of its own"},
		{"an area not in the input", reports(res(0, len(in.Layer.Features))), "the input has"},
	} {
		t.Run(c.name, func(t *testing.T) {
			got, err := mergeOutcomes(in, l, c.reps)
			if c.want != "" {
				if err == nil || !strings.Contains(err.Error(), c.want) {
					t.Fatalf("error %v; want one with %q", err, c.want)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if len(got) != 2 || got[a].Lost[0] != 1 || got[b].Lost[0] != 1 {
				t.Errorf("outcomes %v", got)
			}
		})
	}
	t.Run("a part missing its areas", func(t *testing.T) {
		reps := reports()
		reps[0].AreasOwned--
		if _, err := mergeOutcomes(in, l, reps); err == nil || !strings.Contains(err.Error(), "the parts own") {
			t.Fatalf("error %v", err)
		}
	})
}
