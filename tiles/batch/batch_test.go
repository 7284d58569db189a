package batch

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io/fs"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/geo/reftool"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// demoMap is the committed copy of the demo's source (see
// examples/batch/README.md).
func demoMap(t *testing.T) string {
	p, err := filepath.Abs("../../examples/batch/quillmere.toml")
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// writeBatch writes a batch file over the demo map into a temp folder and
// reads it.
func writeBatch(t *testing.T, dir, body string) *File {
	t.Helper()
	text := fmt.Sprintf("map = %q\nout = \"out\"\n%s", demoMap(t), body)
	path := filepath.Join(dir, "batch.toml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	f, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// overlapping extents of the demo city: two districts, the south bank
// holding both, a box across the river and three areas by id.
const overlapping = `
[[extent]]
slug = "harrowfield"
title = "Harrowfield"
field = "district"
values = ["Harrowfield"]
max_zoom = 13

[[extent]]
slug = "tannery-row"
title = "Tannery Row"
field = "district"
values = ["Tannery Row"]
max_zoom = 13

[[extent]]
slug = "south-bank"
title = "South bank"
field = "district"
values = ["Harrowfield", "Tannery Row", "Old Quay", "Saltmarsh"]
max_zoom = 12

[[extent]]
slug = "river"
title = "Across the river"
bbox = [-128.46, -34.26, -128.36, -34.19]
min_zoom = 10
max_zoom = 14

[[extent]]
slug = "three"
title = "Three areas"
ids = ["QM0369", "QM0370", "QM0371"]
min_zoom = 11
max_zoom = 14
`

// tileFiles maps "z/x/y.png" to the tile bytes under dir.
func tileFiles(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	for z := 0; z <= 22; z++ {
		zd := filepath.Join(dir, strconv.Itoa(z))
		filepath.WalkDir(zd, func(p string, d fs.DirEntry, err error) error {
			if err != nil || d.IsDir() || !strings.HasSuffix(p, ".png") {
				return nil
			}
			b, err := os.ReadFile(p)
			if err != nil {
				t.Fatal(err)
			}
			rel, _ := filepath.Rel(dir, p)
			out[filepath.ToSlash(rel)] = b
			return nil
		})
	}
	return out
}

// demoFeature is one area of the demo GeoJSON read with encoding/json
// alone: the test's own account of every area's counts, independent of
// geo/read.
type demoFeature struct {
	Properties map[string]any `json:"properties"`
}

func readDemo(t *testing.T) []demoFeature {
	t.Helper()
	data, err := os.ReadFile("../../examples/batch/quillmere.geojson")
	if err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []demoFeature `json:"features"`
	}
	if err := json.Unmarshal(data, &fc); err != nil {
		t.Fatal(err)
	}
	return fc.Features
}

func TestOverlappingExtents(t *testing.T) {
	dir := t.TempDir()
	f := writeBatch(t, dir, overlapping)
	rep, err := Run(context.Background(), f, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if n := len(rep.Failed()); n != 0 {
		t.Fatalf("%d extents failed: %+v", n, rep.Failed())
	}
	got := map[string]map[string][]byte{}
	for _, e := range f.Extents {
		got[e.Slug] = tileFiles(t, filepath.Join(f.Out, e.Slug))
		if len(got[e.Slug]) == 0 {
			t.Fatalf("%s: no tiles", e.Slug)
		}
	}

	t.Run("shared tiles are the same bytes", func(t *testing.T) {
		pairs := 0
		for a, ta := range got {
			for b, tb := range got {
				if a >= b {
					continue
				}
				for k, va := range ta {
					if vb, ok := tb[k]; ok {
						pairs++
						if !bytes.Equal(va, vb) {
							t.Errorf("tile %s differs between %s and %s", k, a, b)
						}
					}
				}
			}
		}
		// Harrowfield and Tannery Row are neighbours inside the south
		// bank: many tiles are shared.
		if pairs < 20 {
			t.Errorf("only %d shared tiles between extents; the fixture should overlap", pairs)
		}
	})

	t.Run("tiles are those of the whole map", func(t *testing.T) {
		// Reference: the whole city's pyramid from mapjob.Place and
		// tiles.Write, the single-map path.
		m, err := mapfile.Read(demoMap(t))
		if err != nil {
			t.Fatal(err)
		}
		_, pl := placeWhole(t, m)
		ref := t.TempDir()
		if _, err := tiles.Write(context.Background(), pl.Store, tiles.Options{Dir: ref, MinZoom: 9, MaxZoom: 14,
			TileSize: m.Tiles.Size, Colors: m.RGBA(), Look: mapjob.Look(m), Workers: 2}); err != nil {
			t.Fatal(err)
		}
		whole := tileFiles(t, ref)
		for slug, ts := range got {
			for k, v := range ts {
				w, ok := whole[k]
				if !ok {
					t.Errorf("%s: tile %s is not in the whole map's pyramid", slug, k)
					continue
				}
				if !bytes.Equal(v, w) {
					t.Errorf("%s: tile %s differs from the whole map's", slug, k)
				}
			}
		}
	})

	t.Run("legend totals are the sum of the areas' counts", func(t *testing.T) {
		feats := readDemo(t)
		for _, e := range f.Extents {
			if e.Select == ByBox {
				continue // counted by GDAL in TestBoxTotalsAgainstGDAL
			}
			want := map[string]float64{}
			areas := 0
			for _, ft := range feats {
				hit := false
				switch e.Select {
				case ByField:
					for _, v := range e.Values {
						hit = hit || ft.Properties[e.Field] == v
					}
				case ByIDs:
					for _, id := range e.IDs {
						hit = hit || ft.Properties["code"] == id
					}
				}
				if !hit {
					continue
				}
				areas++
				for _, c := range f.Map.Categories {
					want[c.Key] += ft.Properties[c.Fields[0]].(float64)
				}
			}
			md, err := tiles.ReadMetadata(filepath.Join(f.Out, e.Slug))
			if err != nil {
				t.Fatal(err)
			}
			if areas == 0 {
				t.Fatalf("%s: the test found no areas", e.Slug)
			}
			for _, c := range md.Categories {
				if c.People != want[c.Key] {
					t.Errorf("%s: %s: map.json says %v people; the areas hold %v", e.Slug, c.Key, c.People, want[c.Key])
				}
				// Unbiased rounding of each area's count/N: the drawn dots
				// are within one dot per area of people/N.
				if d := math.Abs(float64(c.DotsDrawn) - want[c.Key]/f.Map.PeoplePerDot); d > float64(areas) {
					t.Errorf("%s: %s: %d dots for %v people", e.Slug, c.Key, c.DotsDrawn, want[c.Key])
				}
			}
		}
	})

	t.Run("summary tables match each map.json", func(t *testing.T) {
		checkSummary(t, f)
	})

	t.Run("index page", func(t *testing.T) {
		page, err := os.ReadFile(filepath.Join(f.Out, IndexPage))
		if err != nil {
			t.Fatal(err)
		}
		s := string(page)
		for _, want := range []string{"Content-Security-Policy", "default-src 'none'", `href="harrowfield/index.html"`, `src="river/thumb.png"`} {
			if !strings.Contains(s, want) {
				t.Errorf("index.html lacks %q", want)
			}
		}
		for _, bad := range []string{"http://", "https://", "<script", "style="} {
			if strings.Contains(s, bad) {
				t.Errorf("index.html holds %q", bad)
			}
		}
	})
}

// checkSummary compares summary.csv and summary.json with every done
// extent's map.json.
func checkSummary(t *testing.T, f *File) {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(f.Out, SummaryJSON))
	if err != nil {
		t.Fatal(err)
	}
	var sum Summary
	if err := json.Unmarshal(data, &sum); err != nil {
		t.Fatal(err)
	}
	cf, err := os.Open(filepath.Join(f.Out, SummaryCSV))
	if err != nil {
		t.Fatal(err)
	}
	defer cf.Close()
	rows, err := csv.NewReader(cf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != len(f.Extents)+1 || len(sum.Extents) != len(f.Extents) {
		t.Fatalf("summary has %d CSV rows and %d JSON rows for %d extents", len(rows)-1, len(sum.Extents), len(f.Extents))
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	for i, e := range f.Extents {
		row, js := rows[i+1], sum.Extents[i]
		if row[col["slug"]] != e.Slug || js.Slug != e.Slug {
			t.Fatalf("row %d is %q / %q; want %q", i+1, row[col["slug"]], js.Slug, e.Slug)
		}
		if js.Status == Failed {
			continue
		}
		md, err := tiles.ReadMetadata(filepath.Join(f.Out, e.Slug))
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range md.Categories {
			if v, _ := strconv.ParseFloat(row[col["people_"+c.Key]], 64); v != c.People || js.People[c.Key] != c.People {
				t.Errorf("%s: people %s: csv %v, json %v, map.json %v", e.Slug, c.Key, v, js.People[c.Key], c.People)
			}
			if v, _ := strconv.Atoi(row[col["dots_"+c.Key]]); v != c.DotsDrawn || js.Dots[c.Key] != c.DotsDrawn {
				t.Errorf("%s: dots %s: csv %v, json %v, map.json %v", e.Slug, c.Key, v, js.Dots[c.Key], c.DotsDrawn)
			}
		}
		if v, _ := strconv.ParseInt(row[col["tiles"]], 10, 64); v != md.TileCount || js.Tiles != md.TileCount {
			t.Errorf("%s: tiles: csv %v, json %v, map.json %v", e.Slug, v, js.Tiles, md.TileCount)
		}
		if v, _ := strconv.ParseInt(row[col["bytes"]], 10, 64); v != md.TileBytes || js.Bytes != md.TileBytes {
			t.Errorf("%s: bytes: csv %v, json %v, map.json %v", e.Slug, v, js.Bytes, md.TileBytes)
		}
		// The tile files themselves.
		ts := tileFiles(t, filepath.Join(f.Out, e.Slug))
		var n int64
		for _, b := range ts {
			n += int64(len(b))
		}
		if int64(len(ts)) != md.TileCount || n != md.TileBytes {
			t.Errorf("%s: folder holds %d tiles, %d bytes; map.json says %d, %d", e.Slug, len(ts), n, md.TileCount, md.TileBytes)
		}
	}
}

func TestFailingExtentIsReportedAndOthersFinish(t *testing.T) {
	dir := t.TempDir()
	f := writeBatch(t, dir, `
[[extent]]
slug = "good"
title = "Old Quay"
field = "district"
values = ["Old Quay"]
max_zoom = 11

[[extent]]
slug = "bad-id"
title = "Nowhere"
ids = ["QM0001", "QM9999"]

[[extent]]
slug = "bad-value"
title = "Nowhere either"
field = "district"
values = ["Atlantis"]

[[extent]]
slug = "open-sea"
title = "Open sea"
bbox = [10, 10, 11, 11]

[[extent]]
slug = "also-good"
title = "Weir End"
field = "district"
values = ["Weir End"]
max_zoom = 11
`)
	rep, err := Run(context.Background(), f, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]string{
		"bad-id":    `extent "bad-id" (` + f.Path + `:11): ids: no area in`,
		"bad-value": `extent "bad-value" (` + f.Path + `:16): field "district": no area has the value "Atlantis"`,
		"open-sea":  `extent "open-sea" (` + f.Path + `:22): bbox [10 10 11 11]: no area's centre lies in the box`,
	}
	for _, r := range rep.Results {
		w, bad := want[r.Slug]
		switch {
		case bad && r.Status != Failed:
			t.Errorf("%s: status %s; want failed", r.Slug, r.Status)
		case bad && !strings.HasPrefix(r.Error, w):
			t.Errorf("%s: error %q; want it to start %q", r.Slug, r.Error, w)
		case !bad && r.Status != Done:
			t.Errorf("%s: status %s (%s); want done", r.Slug, r.Status, r.Error)
		case !bad:
			if _, err := tiles.ReadMetadata(filepath.Join(f.Out, r.Slug)); err != nil {
				t.Errorf("%s: %v", r.Slug, err)
			}
		}
	}
	if r := rep.Results[1]; !strings.Contains(r.Error, `"QM9999"`) || strings.Contains(r.Error, `"QM0001"`) {
		t.Errorf("bad-id: error %q should name QM9999 alone", r.Error)
	}
	if len(rep.Failed()) != 3 {
		t.Errorf("%d failed; want 3", len(rep.Failed()))
	}
	checkSummary(t, f)
	page, _ := os.ReadFile(filepath.Join(f.Out, IndexPage))
	if !strings.Contains(string(page), "no area has the value &#34;Atlantis&#34;") {
		t.Errorf("index.html does not show the failure, escaped")
	}
	csvData, _ := os.ReadFile(filepath.Join(f.Out, SummaryCSV))
	if !strings.Contains(string(csvData), "bad-value,Nowhere either,failed,") {
		t.Errorf("summary.csv lacks the failed row:\n%s", csvData)
	}
}

func TestRerunRedoesOnlyWhatChanged(t *testing.T) {
	dir := t.TempDir()
	body := `
[[extent]]
slug = "a"
title = "Old Quay"
field = "district"
values = ["Old Quay"]
max_zoom = 11

[[extent]]
slug = "b"
title = "Saltmarsh"
field = "district"
values = ["Saltmarsh"]
max_zoom = 11
`
	run := func(body string, opt Options) *Report {
		t.Helper()
		rep, err := Run(context.Background(), writeBatch(t, dir, body), opt)
		if err != nil {
			t.Fatal(err)
		}
		return rep
	}
	statuses := func(rep *Report) string {
		var s []string
		for _, r := range rep.Results {
			s = append(s, r.Slug+":"+string(r.Status))
		}
		return strings.Join(s, " ")
	}
	first := run(body, Options{})
	if got := statuses(first); got != "a:done b:done" || first.Placed != 1 {
		t.Fatalf("first run: %s, %d samplings", got, first.Placed)
	}
	again := run(body, Options{})
	if got := statuses(again); got != "a:skipped b:skipped" || again.Placed+again.Reused != 0 {
		t.Errorf("unchanged rerun: %s, %d placed, %d reused; want both skipped without placing dots", got, again.Placed, again.Reused)
	}
	if again.Results[0].People["orvesh"] != first.Results[0].People["orvesh"] || again.Results[0].Tiles != first.Results[0].Tiles {
		t.Errorf("skipped extent's row differs from the run that made it")
	}
	// A new title redoes that extent alone, from the kept dots and tiles.
	changed := strings.Replace(body, `title = "Saltmarsh"`, `title = "Saltmarsh (revised)"`, 1)
	rep := run(changed, Options{})
	if got := statuses(rep); got != "a:skipped b:done" || rep.Reused != 1 || rep.TilesDrawn != 0 {
		t.Errorf("after a title change: %s, %d reused, %d tiles drawn; want b alone redone from the store and tile cache", got, rep.Reused, rep.TilesDrawn)
	}
	// A missing output redoes its extent.
	md, _ := tiles.ReadMetadata(filepath.Join(dir, "out", "a"))
	for z, n := range md.PerZoom {
		if n > 0 {
			matches, _ := filepath.Glob(filepath.Join(dir, "out", "a", strconv.Itoa(z), "*", "*.png"))
			os.Remove(matches[0])
			break
		}
	}
	rep = run(changed, Options{})
	if got := statuses(rep); got != "a:done b:skipped" {
		t.Errorf("after deleting a tile of a: %s", got)
	}
	// Force redoes everything.
	if got := statuses(run(changed, Options{Force: true})); got != "a:done b:done" {
		t.Errorf("forced: %s", got)
	}
	// A different people per dot is a sampling of its own.
	finer := strings.Replace(changed, "max_zoom = 11\n\n[[extent]]", "max_zoom = 11\npeople_per_dot = 5\n\n[[extent]]", 1)
	rep = run(finer, Options{})
	if got := statuses(rep); got != "a:done b:skipped" || rep.Placed != 1 {
		t.Errorf("a at 5 people per dot: %s, %d placed", got, rep.Placed)
	}
	if d := rep.Results[0].Dots["orvesh"]; math.Abs(float64(d)-rep.Results[0].People["orvesh"]/5) > float64(rep.Results[0].Features) {
		t.Errorf("a at 5 people per dot drew %d orvesh dots for %v people", d, rep.Results[0].People["orvesh"])
	}
}

// TestBoxTotalsAgainstGDAL counts a box extent's people with GDAL's SQLite
// dialect (SpatiaLite ST_Centroid, computed by GEOS) and compares them with
// the extent's map.json.
func TestBoxTotalsAgainstGDAL(t *testing.T) {
	ogr := reftool.Need(t, "ogr2ogr")
	dir := t.TempDir()
	box := [4]float64{-128.46, -34.26, -128.36, -34.19}
	f := writeBatch(t, dir, fmt.Sprintf(`
[[extent]]
slug = "box"
title = "Box"
bbox = [%v, %v, %v, %v]
max_zoom = 10
`, box[0], box[1], box[2], box[3]))
	if _, err := Run(context.Background(), f, Options{}); err != nil {
		t.Fatal(err)
	}
	md, err := tiles.ReadMetadata(filepath.Join(f.Out, "box"))
	if err != nil {
		t.Fatal(err)
	}
	var sel []string
	for _, c := range f.Map.Categories {
		sel = append(sel, fmt.Sprintf("SUM(%s) AS %s", c.Fields[0], c.Key))
	}
	where := fmt.Sprintf("ST_X(ST_Centroid(geometry)) >= %v AND ST_X(ST_Centroid(geometry)) < %v AND ST_Y(ST_Centroid(geometry)) >= %v AND ST_Y(ST_Centroid(geometry)) < %v",
		box[0], box[2], box[1], box[3])
	sql := "SELECT COUNT(*) AS n, " + strings.Join(sel, ", ") + " FROM quillmere WHERE " + where
	out, err := exec.Command(ogr, "-f", "CSV", "/vsistdout/", "-dialect", "SQLite", "-sql", sql, "../../examples/batch/quillmere.geojson").Output()
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(out)).ReadAll()
	if err != nil || len(rows) != 2 {
		t.Fatalf("ogr2ogr: %v\n%s", err, out)
	}
	if n, _ := strconv.Atoi(rows[1][0]); n < 10 {
		t.Fatalf("GDAL counts %d areas in the box; the fixture wants more", n)
	}
	for k, c := range md.Categories {
		want, _ := strconv.ParseFloat(rows[1][k+1], 64)
		if c.People != want {
			t.Errorf("%s: map.json %v people; GDAL %v", c.Key, c.People, want)
		}
	}
}

// With sample = "near" only the areas near the extents get dots: the
// totals are those of sample = "all", tiles shared by extents are still the
// same bytes, and tiles well inside an extent are the same as with "all".
func TestSampleNear(t *testing.T) {
	allDir, nearDir := t.TempDir(), t.TempDir()
	fa := writeBatch(t, allDir, overlapping)
	fn := writeBatch(t, nearDir, "sample = \"near\"\n"+overlapping)
	ra, err := Run(context.Background(), fa, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	rn, err := Run(context.Background(), fn, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	for i := range ra.Results {
		a, n := ra.Results[i], rn.Results[i]
		if n.Status != Done || fmt.Sprint(a.People, a.Dots, a.NotDrawn, a.Features) != fmt.Sprint(n.People, n.Dots, n.NotDrawn, n.Features) {
			t.Errorf("%s: near %s %v %v; all %v %v", a.Slug, n.Status, n.People, n.Dots, a.People, a.Dots)
		}
	}
	sa, sn := tileFiles(t, filepath.Join(fa.Out, "south-bank")), tileFiles(t, filepath.Join(fn.Out, "south-bank"))
	md, _ := tiles.ReadMetadata(filepath.Join(fn.Out, "south-bank"))
	b := md.Bounds
	z := 12
	inside := 0
	for _, tl := range Cover(withMargin(boundOf(b), -0.2), z) {
		k := fmt.Sprintf("%d/%d/%d.png", z, tl[0], tl[1])
		if _, ok := sa[k]; !ok {
			continue
		}
		inside++
		if !bytes.Equal(sa[k], sn[k]) {
			t.Errorf("south-bank tile %s differs between sample = all and near", k)
		}
	}
	if inside < 4 {
		t.Errorf("only %d inner tiles compared", inside)
	}
	if len(sn) >= len(sa) && len(sn) > 0 {
		// Low zooms hold fewer dots, never more tiles.
		t.Logf("near: %d tiles; all: %d", len(sn), len(sa))
	}
}

// The same batch with one worker and with four writes the same files
// (all but the summary tables and records, which hold timings).
func TestSameOutputForAnyWorkerCount(t *testing.T) {
	trees := []map[string][]byte{}
	for _, w := range []int{1, 4} {
		f := writeBatch(t, t.TempDir(), overlapping)
		if _, err := Run(context.Background(), f, Options{Workers: w}); err != nil {
			t.Fatal(err)
		}
		tree := map[string][]byte{}
		filepath.WalkDir(f.Out, func(p string, d fs.DirEntry, err error) error {
			if err != nil || d.IsDir() {
				if d != nil && d.Name() == tiles.StateDir {
					return filepath.SkipDir
				}
				return err
			}
			rel, _ := filepath.Rel(f.Out, p)
			if rel == SummaryCSV || rel == SummaryJSON || rel == IndexPage {
				return nil
			}
			b, _ := os.ReadFile(p)
			tree[rel] = b
			return nil
		})
		trees = append(trees, tree)
	}
	if len(trees[0]) != len(trees[1]) || len(trees[0]) < 100 {
		t.Fatalf("%d and %d files", len(trees[0]), len(trees[1]))
	}
	for k, v := range trees[0] {
		if !bytes.Equal(v, trees[1][k]) {
			t.Errorf("%s differs between 1 and 4 workers", k)
		}
	}
}
