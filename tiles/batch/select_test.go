package batch

import (
	"bytes"
	"context"
	"encoding/csv"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"testing"

	"github.com/stipple-maps/stipple/geo/demo"
	"github.com/stipple-maps/stipple/geo/geojson"
	"github.com/stipple-maps/stipple/geo/read"
	"github.com/stipple-maps/stipple/geo/reftool"
	"github.com/stipple-maps/stipple/tiles/dotstore"
)

// TestRepresentativePointIsGEOSCentroid compares the point a box extent
// tests with GDAL's SQLite dialect ST_Centroid (SpatiaLite, computed by
// GEOS) for every demo area and, when the shared data is there, every US
// county (multipolygons, holes, both sides of the antimeridian).
func TestRepresentativePointIsGEOSCentroid(t *testing.T) {
	ogr := reftool.Need(t, "ogr2ogr")
	for _, c := range []struct {
		file, layer, id string
		shared          bool // in ../shared/data beside the repository root
	}{
		{"../../examples/batch/quillmere.geojson", "quillmere", "code", false},
		{"us-counties.geojson", "us-counties", "geoid", true},
	} {
		if c.shared {
			p, err := reftool.SharedPath(c.file)
			if err != nil {
				if reftool.Required() {
					t.Fatal(err)
				}
				t.Logf("%v: skipped", err)
				continue
			}
			c.file = p
		}
		res, err := read.File(c.file, read.Options{IDField: c.id})
		if err != nil {
			t.Fatal(err)
		}
		sql := `SELECT "` + c.id + `", ST_X(ST_Centroid(geometry)), ST_Y(ST_Centroid(geometry)) FROM "` + c.layer + `"`
		out, err := exec.Command(ogr, "-f", "CSV", "/vsistdout/", "-dialect", "SQLite", "-sql", sql, c.file).Output()
		if err != nil {
			t.Fatal(err)
		}
		rows, err := csv.NewReader(bytes.NewReader(out)).ReadAll()
		if err != nil {
			t.Fatal(err)
		}
		want := map[string][2]float64{}
		for _, r := range rows[1:] {
			x, _ := strconv.ParseFloat(r[1], 64)
			y, _ := strconv.ParseFloat(r[2], 64)
			want[r[0]] = [2]float64{x, y}
		}
		n, worst := 0, 0.0
		for _, f := range res.Layer.Features {
			p, ok := RepresentativePoint(f.Geometry)
			w, found := want[f.ID]
			if !ok || !found {
				t.Errorf("%s %s: point %v (%v), GDAL has it: %v", c.layer, f.ID, p, ok, found)
				continue
			}
			d := math.Max(math.Abs(p[0]-w[0]), math.Abs(p[1]-w[1]))
			worst = math.Max(worst, d)
			// GDAL's CSV keeps 15 significant digits: 1e-12° at 180°.
			if d > 1e-9 {
				t.Errorf("%s %s: centroid %v; GEOS %v", c.layer, f.ID, p, w)
			}
			n++
		}
		t.Logf("%s: %d centroids, largest difference %.2g°", c.layer, n, worst)
	}
}

func TestBoxEdgesCountEachAreaOnce(t *testing.T) {
	layer := demo.City(1)
	// Four boxes that tile the city's bounds: every area with a centre is
	// in exactly one.
	b := demo.Bounds
	mx, my := (b.Min[0]+b.Max[0])/2, (b.Min[1]+b.Max[1])/2
	boxes := [][4]float64{{b.Min[0] - 1, b.Min[1] - 1, mx, my}, {mx, b.Min[1] - 1, b.Max[0] + 1, my},
		{b.Min[0] - 1, my, mx, b.Max[1] + 1}, {mx, my, b.Max[0] + 1, b.Max[1] + 1}}
	seen := map[int]int{}
	for _, box := range boxes {
		p, err := Pick(&Extent{Slug: "q", Select: ByBox, BBox: box}, layer)
		if err != nil {
			t.Fatal(err)
		}
		for _, i := range p.Features {
			seen[i]++
		}
	}
	if len(seen) != len(layer.Features) {
		t.Errorf("%d of %d areas in some box", len(seen), len(layer.Features))
	}
	for i, n := range seen {
		if n != 1 {
			t.Errorf("area %d in %d boxes", i, n)
		}
	}
}

// gatherReference is the plain version of gather: every key, tested
// against the needed tiles and the strips around them one by one.
func gatherReference(keys []uint64, z int, need map[[2]int]bool, edge int64) []uint64 {
	cells := int64(dotstore.WorldSize >> z)
	n := int64(1) << z
	var out []uint64
	for _, k := range keys {
		wx, wy, _ := dotstore.Split(k)
		tx, ty := int64(wx)/cells, int64(wy)/cells
		if need[[2]int{int(tx), int(ty)}] {
			out = append(out, k)
			continue
		}
		keep := false
		for dy := int64(-1); dy <= 1 && !keep; dy++ {
			for dx := int64(-1); dx <= 1 && !keep; dx++ {
				nx, ny := ((tx+dx)%n+n)%n, ty+dy
				if (dx == 0 && dy == 0) || ny < 0 || ny >= n || !need[[2]int{int(nx), int(ny)}] {
					continue
				}
				// Distance from the key to the needed tile, per axis.
				lx, ly := int64(wx)-tx*cells, int64(wy)-ty*cells
				okx := dx == 0 || (dx < 0 && lx < edge) || (dx > 0 && lx >= cells-edge)
				oky := dy == 0 || (dy < 0 && ly < edge) || (dy > 0 && ly >= cells-edge)
				keep = okx && oky
			}
		}
		if keep {
			out = append(out, k)
		}
	}
	return out
}

func TestGatherMatchesReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 2))
	keys := make([]uint64, 200000)
	for i := range keys {
		// Crowd the dots round a few tiles, and wrap some at the
		// antimeridian.
		x := uint32(rng.IntN(1 << 22))
		if i%3 == 0 {
			x = dotstore.WorldSize - 1 - x
		}
		y := uint32(1<<28 + rng.IntN(1<<22))
		keys[i] = dotstore.Key(x, y, rng.IntN(5))
	}
	slices.Sort(keys)
	for _, c := range []struct {
		z    int
		need [][2]int
		edge int64
	}{
		{9, [][2]int{{0, 256}, {1, 256}, {0, 257}}, 0},
		{9, [][2]int{{0, 256}, {1, 256}, {0, 257}}, 40000},
		{9, [][2]int{{511, 256}, {2, 258}}, 100000},
		{7, [][2]int{{0, 64}}, 1 << 22}, // edge beyond a tile: whole neighbours
		{12, [][2]int{{3, 2049}, {4, 2049}, {4, 2050}}, 3000},
	} {
		need := map[[2]int]bool{}
		for _, t := range c.need {
			need[t] = true
		}
		got := gather(keys, c.z, need, c.edge)
		want := gatherReference(keys, c.z, need, c.edge)
		if !slices.Equal(got, want) {
			t.Errorf("z%d %v edge %d: %d keys; reference %d", c.z, c.need, c.edge, len(got), len(want))
		}
		if !slices.IsSorted(got) {
			t.Errorf("z%d %v: keys not sorted", c.z, c.need)
		}
		if c.edge > 0 && len(got) == 0 {
			t.Errorf("z%d %v: fixture gathers nothing", c.z, c.need)
		}
	}
}

func BenchmarkGather(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 1))
	keys := make([]uint64, 2_000_000)
	for i := range keys {
		keys[i] = dotstore.Key(uint32(rng.IntN(1<<23)), uint32(1<<28+rng.IntN(1<<23)), rng.IntN(5))
	}
	slices.Sort(keys)
	need := map[[2]int]bool{}
	for x := 2; x < 6; x++ {
		for y := 2050; y < 2054; y++ {
			need[[2]int{x, y}] = true
		}
	}
	b.ReportAllocs()
	for b.Loop() {
		gather(keys, 12, need, 4000)
	}
}

// TestExampleSourceIsTheDemo checks that examples/batch/quillmere.geojson
// is what `stipple demo` writes (geojson.Write of demo.City(1)), and that
// the example batch renders with no failure.
func TestExampleSourceIsTheDemo(t *testing.T) {
	dir := t.TempDir()
	fresh := filepath.Join(dir, "q.geojson")
	if err := geojson.Write(fresh, demo.City(1)); err != nil {
		t.Fatal(err)
	}
	a, _ := os.ReadFile(fresh)
	b, err := os.ReadFile("../../examples/batch/quillmere.geojson")
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a, b) {
		t.Fatalf("examples/batch/quillmere.geojson is not the demo's source; regenerate it (examples/batch/README.md)")
	}
	if testing.Short() {
		t.Skip("the example's render is skipped with -short")
	}
	f, err := Read("../../examples/batch/districts.toml")
	if err != nil {
		t.Fatal(err)
	}
	f.Out = filepath.Join(dir, "out")
	rep, err := Run(context.Background(), f, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Results) != 11 || len(rep.Failed()) != 0 || rep.Placed != 2 {
		t.Fatalf("%d extents, %d failed, %d samplings: %+v", len(rep.Results), len(rep.Failed()), rep.Placed, rep.Failed())
	}
	// The eight districts hold every person in the city once.
	total := 0.0
	for _, r := range rep.Results[:8] {
		total += sumPeople(r.People)
	}
	all := 0.0
	for _, ft := range readDemo(t) {
		for _, g := range demo.Groups {
			all += ft.Properties[g.Field].(float64)
		}
	}
	if total != all {
		t.Errorf("the districts hold %v people; the city %v", total, all)
	}
	for _, name := range []string{"harrowfield/print.png", "harrowfield/print.pdf", "lanternwood/print.pdf", "river-mouth/thumb.png"} {
		if fi, err := os.Stat(filepath.Join(f.Out, name)); err != nil || fi.Size() < 1000 {
			t.Errorf("%s: %v", name, err)
		}
	}
	checkSummary(t, f)
}
