package main

import (
	"bytes"
	"context"
	"encoding/binary"
	"flag"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/dotstore"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
	"golang.org/x/image/draw"
)

var updatePrint = flag.Bool("update-print", false, "rewrite examples/print/ from a fresh print of the demo")

// defaultPrintOptions are the flag defaults of "stipple print".
func defaultPrintOptions() *printOptions {
	var o printOptions
	fs := flag.NewFlagSet("print", flag.ContinueOnError)
	o.register(fs)
	return &o
}

// IOGP Guidance Note 7-2, method 1024 (Popular Visualisation Pseudo
// Mercator), inverse example: E = −11 169 055.58 m, N = 2 810 000.00 m →
// φ = 24°27′48.889″N, λ = 100°20′00.000″W. The cell holding that point
// has its centre within half a cell (3.7 cm) of it, 4e-7° at most.
func TestCellLonLat(t *testing.T) {
	const R = 6378137.0
	e, n := -11169055.58, 2810000.00
	x := uint32(math.Floor((e/(2*math.Pi*R) + 0.5) * dotstore.WorldSize))
	y := uint32(math.Floor((0.5 - n/(2*math.Pi*R)) * dotstore.WorldSize))
	lon, lat := dotstore.CellLonLat(x, y)
	wantLat := 24 + 27.0/60 + 48.889/3600
	wantLon := -(100 + 20.0/60)
	if math.Abs(lat-wantLat) > 5e-7 || math.Abs(lon-wantLon) > 5e-7 {
		t.Errorf("cell (%d, %d) centre %.8f, %.8f; want %.8f, %.8f", x, y, lon, lat, wantLon, wantLat)
	}
	// Round trip through dotstore.World, the forward numbering.
	r := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 100000; i++ {
		x, y := uint32(r.IntN(dotstore.WorldSize)), uint32(r.IntN(dotstore.WorldSize))
		if gx, gy := dotstore.World(dotstore.CellLonLat(x, y)); gx != x || gy != y {
			t.Fatalf("cell (%d, %d) → %v → (%d, %d)", x, y, fmt.Sprint(dotstore.CellLonLat(x, y)), gx, gy)
		}
	}
}

func demoMap(t *testing.T) *mapfile.Map {
	t.Helper()
	m, err := writeDemoSource(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// The page shows the tile run's dots: mapjob.Load and mapjob.Place on the
// whole layer give the dot store; every dot of it is on the page, at the
// projection of its cell's centre. Compared per category by count and by
// the sums of x, y, x² and y² of the page positions (a fingerprint that a
// missing, extra or moved dot changes).
func TestPrintShowsTheTileRunsDots(t *testing.T) {
	m := demoMap(t)
	o := defaultPrintOptions()
	o.dpi = 100
	job, err := preparePrint(context.Background(), m, o)
	if err != nil {
		t.Fatal(err)
	}
	in, err := mapjob.Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	layer := in.Layer
	pl, err := mapjob.Place(context.Background(), in, m, mapjob.PlaceOptions{Workers: 3})
	if err != nil {
		t.Fatal(err)
	}
	store := pl.Store
	p := job.Page
	if p.Len() != store.Len() {
		t.Fatalf("page has %d dots, the store %d", p.Len(), store.Len())
	}
	type stats struct{ n, x, y, xx, yy float64 }
	nc := len(m.Categories)
	want, got := make([]stats, nc), make([]stats, nc)
	for _, k := range store.Range(0, math.MaxUint64) {
		x, y, cat := dotstore.Split(k)
		px, py := p.Project(dotstore.CellLonLat(x, y))
		s := &want[cat]
		s.n++
		s.x, s.y, s.xx, s.yy = s.x+px, s.y+py, s.xx+px*px, s.yy+py*py
	}
	for i := 0; i < p.Len(); i++ {
		px, py, cat := p.Dot(i)
		s := &got[cat]
		s.n++
		s.x, s.y, s.xx, s.yy = s.x+px, s.y+py, s.xx+px*px, s.yy+py*py
	}
	for k := range want {
		w, g := want[k], got[k]
		if w.n != g.n || p.Counts()[k] != store.Count(k) {
			t.Errorf("category %d: page %v dots, store %v", k, g.n, w.n)
			continue
		}
		for _, v := range [][2]float64{{w.x, g.x}, {w.y, g.y}, {w.xx, g.xx}, {w.yy, g.yy}} {
			// float32 page pixels: 1e-5 mm per dot at most.
			if math.Abs(v[0]-v[1]) > 1e-5*w.n*math.Max(1, v[0]/w.n) {
				t.Errorf("category %d: position sums %v on the page, %v from the store", k, v[1], v[0])
			}
		}
	}
	if job.Areas != len(layer.Features) {
		t.Errorf("%d areas on the page, %d in the map", job.Areas, len(layer.Features))
	}
}

// The dots mapjob.Place gives the page are the tile run's own: render the
// demo, open the dot store it keeps (tiles.StateDir/dots.bin), and
// compare key for key.
func TestPrintDotsAreTheTileStore(t *testing.T) {
	dir := t.TempDir()
	var out, errOut bytes.Buffer
	if code := run(context.Background(), []string{"demo", dir}, &out, &errOut); code != 0 {
		t.Fatalf("demo: exit %d: %s", code, errOut.String())
	}
	tileStore, err := dotstore.Open(filepath.Join(dir, tiles.StateDir, "dots.bin"))
	if err != nil {
		t.Fatalf("the tile run's dot store is not where this test looks (update the path if build moved it): %v", err)
	}
	m, err := mapfile.Read(filepath.Join(dir, "source", "quillmere.toml"))
	if err != nil {
		t.Fatal(err)
	}
	in, err := mapjob.Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	printPlaced, err := mapjob.Place(context.Background(), in, m, mapjob.PlaceOptions{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	a, b := tileStore.Range(0, math.MaxUint64), printPlaced.Store.Range(0, math.MaxUint64)
	if len(a) != len(b) {
		t.Fatalf("tile run %d dots, print %d", len(a), len(b))
	}
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("dot %d: tile run key %x, print %x", i, a[i], b[i])
		}
	}
}

// regionGeoJSON writes two rectangles of equal area on the sphere (zone
// area 2πR²(sin φb − sin φa) per full turn, a textbook fact: CHECKS.md,
// "Statistics"), one at 29–31°N and one at 59–61°N, each with people
// people of one group.
func regionGeoJSON(t *testing.T, people int) (path string, wB float64) {
	t.Helper()
	const wA = 2.0 // degrees of longitude
	rad := math.Pi / 180
	wB = wA * (math.Sin(31*rad) - math.Sin(29*rad)) / (math.Sin(61*rad) - math.Sin(59*rad))
	box := func(w, s, e, n float64) string {
		return fmt.Sprintf("[[[%v,%v],[%v,%v],[%v,%v],[%v,%v],[%v,%v]]]", w, s, e, s, e, n, w, n, w, s)
	}
	js := fmt.Sprintf(`{"type":"FeatureCollection","features":[
{"type":"Feature","properties":{"code":"south","pop":%d},"geometry":{"type":"Polygon","coordinates":%s}},
{"type":"Feature","properties":{"code":"north","pop":%d},"geometry":{"type":"Polygon","coordinates":%s}}]}`,
		people, box(0, 29, wA, 31), people, box(0, 59, wB, 61))
	dir := t.TempDir()
	path = filepath.Join(dir, "regions.geojson")
	if err := os.WriteFile(path, []byte(js), 0o644); err != nil {
		t.Fatal(err)
	}
	return path, wB
}

func regionMap(t *testing.T, input string) *mapfile.Map {
	t.Helper()
	toml := fmt.Sprintf(`title = "Invented test: two regions of equal density"
people_per_dot = 1
seed = 7
out = %s
[input]
file = %s
id = "code"
[[category]]
key = "pop"
label = "Everyone"
color = "#0072B2"
fields = ["pop"]
`, quote(filepath.Join(t.TempDir(), "out")), quote(input))
	p := filepath.Join(t.TempDir(), "regions.toml")
	if err := os.WriteFile(p, []byte(toml), 0o644); err != nil {
		t.Fatal(err)
	}
	m, err := mapfile.Read(p)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// An equal-area page keeps density: two regions of equal population
// density on the ground, at 30°N and 60°N, show the same number of dots
// per km² of ground, measured as dots per square millimetre of paper in
// equal windows (for an equal-area projection a projected m² is a ground
// m², so paper mm² / Scale² is ground m²). The counts in a window are
// binomial, close to Poisson: the two must agree within 3σ,
// |n1 − n2| ≤ 3√(n1 + n2), and each must be within 3σ + 1% of the
// expected count (the 1% covers the sampler drawing uniformly on the
// sphere while the page is equal-area on the WGS 84 ellipsoid: the two
// area measures differ by (1 − e²)/(1 − e² sin²φ)², computed: 0.9966 at
// 30°, 1.0034 at 60°). The same check fails on a Web Mercator page,
// whose area scale grows as sec²φ: the northern window then holds a
// third of the southern one's dots (cos²60° / cos²30°).
func TestPrintEqualArea(t *testing.T) {
	const people = 200000
	input, wB := regionGeoJSON(t, people)
	for _, c := range []struct {
		projection string
		equalArea  bool
	}{{"auto", true}, {"albers", true}, {"laea", true}, {"mercator", false}} {
		m := regionMap(t, input)
		o := defaultPrintOptions()
		o.dpi, o.projection = 100, c.projection
		job, err := preparePrint(context.Background(), m, o)
		if err != nil {
			t.Fatal(err)
		}
		p := job.Page
		if c.projection == "auto" && !strings.HasPrefix(page.Describe(p.Spec().Projection), "Albers") {
			t.Errorf("auto chose %s for 29–61°N", page.Describe(p.Spec().Projection))
		}
		// A square window, the same size on paper for both regions, at
		// 40% of the smaller region's smaller side on the page.
		type region struct{ w, s, e, n float64 }
		regions := []region{{0, 29, 2, 31}, {0, 59, wB, 61}}
		side := math.Inf(1)
		for _, r := range regions {
			x0, y0 := p.Project(r.w, (r.s+r.n)/2)
			x1, y1 := p.Project(r.e, (r.s+r.n)/2)
			xs, ys := p.Project((r.w+r.e)/2, r.s)
			xn, yn := p.Project((r.w+r.e)/2, r.n)
			side = math.Min(side, 0.4*math.Min(math.Hypot(x1-x0, y1-y0), math.Hypot(xn-xs, yn-ys)))
		}
		var n [2]float64
		for i := 0; i < p.Len(); i++ {
			x, y, _ := p.Dot(i)
			for k, r := range regions {
				cx, cy := p.Project((r.w+r.e)/2, (r.s+r.n)/2)
				if math.Abs(x-cx) < side/2 && math.Abs(y-cy) < side/2 {
					n[k]++
				}
			}
		}
		// Ground area of the window, km², if the projection is equal-area.
		groundKM2 := side * side / (p.Scale() * p.Scale()) / 1e6
		// Expected: people / region area on the sphere of the sampler
		// (radius a: the ratio matters, not the radius).
		const R = 6378.137 // km
		regionKM2 := R * R * (2 * math.Pi / 180) * (math.Sin(31*math.Pi/180) - math.Sin(29*math.Pi/180))
		expect := people / regionKM2 * groundKM2
		sigma := math.Sqrt(n[0] + n[1])
		ok := math.Abs(n[0]-n[1]) <= 3*sigma
		t.Logf("%s: window %.2f mm = %.0f km² of ground; dots %v and %v per window (%.1f and %.1f per km²; expected %.0f = %.1f per km²); |Δ| = %.0f, 3σ = %.0f",
			page.Describe(p.Spec().Projection), side, groundKM2, n[0], n[1], n[0]/groundKM2, n[1]/groundKM2, expect, expect/groundKM2, math.Abs(n[0]-n[1]), 3*sigma)
		if ok != c.equalArea {
			t.Errorf("%s: the density check gives %v, want %v", c.projection, ok, c.equalArea)
		}
		if c.equalArea {
			for k := range n {
				if math.Abs(n[k]-expect) > 3*math.Sqrt(expect)+0.01*expect {
					t.Errorf("%s: window %d holds %v dots, expected %.0f", c.projection, k, n[k], expect)
				}
			}
			if n[0] < 1000 {
				t.Errorf("only %v dots in the window: too few for the bound to mean much", n[0])
			}
		} else if r := n[1] / n[0]; math.Abs(r-1.0/3) > 0.05 {
			t.Errorf("mercator: north/south dots %.3f, want about 1/3", r)
		}
	}
}

// With --ids only the listed areas' dots are drawn, and the legend counts
// their people.
func TestPrintIDs(t *testing.T) {
	m := demoMap(t)
	in, err := mapjob.Load(m, nil)
	if err != nil {
		t.Fatal(err)
	}
	layer, counts := in.Layer, in.Counts
	idx := []int{3, 40, 41, 200}
	var ids []string
	wantDots := make([]int, len(m.Categories))
	for _, i := range idx {
		ids = append(ids, layer.Features[i].ID)
		for k, d := range in.Dots[i] {
			wantDots[k] += d
		}
	}
	o := defaultPrintOptions()
	o.dpi, o.ids, o.outlines = 100, strings.Join(ids, ","), true
	job, err := preparePrint(context.Background(), m, o)
	if err != nil {
		t.Fatal(err)
	}
	if got := job.Page.Counts(); fmt.Sprint(got) != fmt.Sprint(wantDots) {
		t.Errorf("dots per category %v, want %v", got, wantDots)
	}
	for k := range m.Categories {
		want := 0.0
		for _, i := range idx {
			want += counts[i][k]
		}
		if got := job.Page.Spec().Entries[k].People; got != want {
			t.Errorf("category %d: legend people %v, want %v", k, got, want)
		}
	}
	if job.Areas != len(idx) {
		t.Errorf("%d areas, want %d", job.Areas, len(idx))
	}
	if n := len(job.Page.Spec().Outlines); n != len(idx) {
		t.Errorf("%d outlines, want %d", n, len(idx))
	}
}

// The command end to end on the demo, and its errors.
func TestPrintCommand(t *testing.T) {
	m := demoMap(t)
	dir := t.TempDir()
	var out, errOut bytes.Buffer
	base := filepath.Join(dir, "page")
	code := run(context.Background(), []string{"print", m.Path, "--out", base, "--dpi", "150", "--outlines", "--bbox", "-128.5,-34.3,-128.3,-34.15"}, &out, &errOut)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut.String())
	}
	b, err := os.ReadFile(base + ".png")
	if err != nil {
		t.Fatal(err)
	}
	if w, h := binary.BigEndian.Uint32(b[16:]), binary.BigEndian.Uint32(b[20:]); w != 1240 || h != 1754 {
		t.Errorf("PNG %d × %d, want 1240 × 1754 (A4 at 150 dpi)", w, h)
	}
	pdf, err := os.ReadFile(base + ".pdf")
	if err != nil || !bytes.HasPrefix(pdf, []byte("%PDF-")) {
		t.Errorf("PDF: %v, starts %q", err, pdf[:min(8, len(pdf))])
	}
	for _, want := range []string{"210 × 297 mm page, Albers equal-area conic", "wrote " + base + ".png (1240 × 1754 px at 150 dpi", "wrote " + base + ".pdf (dots as"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("output lacks %q:\n%s", want, out.String())
		}
	}

	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"--page", "A9"}, 2, `--page: page: size "A9"`},
		{[]string{"--orientation", "sideways"}, 2, `--orientation "sideways"`},
		{[]string{"--bbox", "1,2,3"}, 2, "--bbox"},
		{[]string{"--bbox", "10,50,10,60"}, 2, "west and east are both 10; the box has no width"},
		{[]string{"--bbox", "1,2,3,4", "--ids", "a"}, 2, "not both"},
		{[]string{"--ids", "Q999"}, 1, `--ids: no area has id "Q999"`},
		{[]string{"--projection", "robinson"}, 2, `unknown projection "robinson"`},
		{[]string{"--format", "tiff"}, 2, `--format "tiff"`},
		{[]string{"--pdf-dots", "svg"}, 2, "--pdf-dots"},
		{[]string{"--dpi", "5"}, 2, "--dpi 5: want 36 to 1200 dots per inch"},
		{[]string{"--margin", "wide"}, 2, "--margin: page: length"},
		{[]string{"--dot-mm", "0"}, 2, "--dot-mm 0: want a dot diameter above 0"},
	} {
		var out, errOut bytes.Buffer
		args := append([]string{"print", m.Path, "--out", filepath.Join(dir, "bad")}, c.args...)
		code := run(context.Background(), args, &out, &errOut)
		msg := strings.SplitN(errOut.String(), "\n", 2)[0]
		if code != c.code || !strings.Contains(msg, c.want) {
			t.Errorf("%v: exit %d, %q; want exit %d with %q", c.args, code, msg, c.code, c.want)
		}
	}
}

// examples/print/ holds a 600-pixel-wide preview of the demo's A4 page;
// this test makes it again and compares (run with -update-print to
// rewrite it).
func TestPrintDemoPreview(t *testing.T) {
	m := demoMap(t)
	job, err := preparePrint(context.Background(), m, defaultPrintOptions())
	if err != nil {
		t.Fatal(err)
	}
	full := job.Page.Raster()
	if full.Rect.Dx() != 2480 || full.Rect.Dy() != 3508 {
		t.Fatalf("demo page %v, want 2480 × 3508", full.Rect.Size())
	}
	const w = 600
	h := full.Rect.Dy() * w / full.Rect.Dx()
	small := image.NewRGBA(image.Rect(0, 0, w, h))
	draw.CatmullRom.Scale(small, small.Bounds(), full, full.Bounds(), draw.Src, nil)
	pal := popularPalette(small)
	path := filepath.Join("..", "..", "examples", "print", "demo-a4.png")
	if *updatePrint {
		var b bytes.Buffer
		if err := page.EncodePNG(&b, pal, 300*float64(w)/float64(full.Rect.Dx())); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(b) > 400<<10 {
		t.Errorf("%s is %d kB, want under 400 kB", path, len(b)>>10)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	if img.Bounds().Size() != small.Rect.Size() {
		t.Fatalf("%s is %v, a fresh preview %v", path, img.Bounds().Size(), small.Rect.Size())
	}
	var sum float64
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			r1, g1, b1, _ := img.At(x, y).RGBA()
			c := small.RGBAAt(x, y) // against the unquantised preview
			sum += math.Abs(float64(r1>>8)-float64(c.R)) + math.Abs(float64(g1>>8)-float64(c.G)) + math.Abs(float64(b1>>8)-float64(c.B))
		}
	}
	// The stored preview is quantised to 256 colours (popularPalette);
	// the demo's reference layers (water, grey roads, anti-aliased label
	// text) add colours the palette rounds, about 1.5 levels on their own.
	if mad := sum / float64(3*w*h); mad > 2 {
		t.Errorf("%s differs from a fresh preview by %.2f levels per channel; rerun with -update-print if the change is meant", path, mad)
	}
}

// popularPalette maps img onto the 256 most common colours among its
// pixels read at 4 bits per channel (ties broken by colour value), each
// pixel to the nearest of them: a paletted preview a third the size of
// the RGB one that keeps the dots' colours.
func popularPalette(img *image.RGBA) *image.Paletted {
	count := map[uint16]int{}
	b := img.Bounds()
	key := func(c color.RGBA) uint16 { return uint16(c.R>>4)<<8 | uint16(c.G>>4)<<4 | uint16(c.B>>4) }
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			count[key(img.RGBAAt(x, y))]++
		}
	}
	keys := make([]uint16, 0, len(count))
	for k := range count {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if count[keys[i]] != count[keys[j]] {
			return count[keys[i]] > count[keys[j]]
		}
		return keys[i] < keys[j]
	})
	pal := color.Palette{color.RGBA{255, 255, 255, 255}}
	for _, k := range keys {
		if len(pal) == 256 {
			break
		}
		c := color.RGBA{uint8(k>>8) * 17, uint8(k>>4&15) * 17, uint8(k&15) * 17, 255}
		if c != (color.RGBA{255, 255, 255, 255}) {
			pal = append(pal, c)
		}
	}
	out := image.NewPaletted(b, pal)
	draw.Draw(out, b, img, b.Min, draw.Src)
	return out
}
