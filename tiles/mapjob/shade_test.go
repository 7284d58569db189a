package mapjob

import (
	"context"
	"encoding/json"
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/page"
	"github.com/stipple-maps/stipple/tiles"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// shadeCounts are the invented grid's two groups per area, chosen so the
// normalised entropy (two groups: the binary entropy of the first group's
// share) falls in every class: 0, 0.141, 0.286, 0.469, 0.610, 0.881, 1,
// an area without people, and one of the second group only.
var shadeCounts = [9][2]float64{{1000, 0}, {980, 20}, {950, 50}, {900, 100}, {850, 150}, {700, 300}, {500, 500}, {0, 0}, {0, 400}}

// shadeMap is a map of a 3×3 invented grid (gridAreas) with shadeCounts
// and shade_diversity on.
func shadeMap(t *testing.T, dir string) (*mapfile.Map, *geo.Layer) {
	t.Helper()
	m := mapfile.Defaults
	m.Path = filepath.Join(dir, "m.toml")
	m.Out = filepath.Join(dir, "out")
	m.Title = "Invented grid"
	m.Input.File = "grid"
	m.PeoplePerDot = 50
	m.Seed = 5
	m.Tiles.MinZoom, m.Tiles.MaxZoom = 9, 11
	m.ShadeDiversity = true
	m.Categories = []mapfile.Category{
		{Key: "p", Label: "p", Color: "#0072B2", Fields: []string{"p"}},
		{Key: "q", Label: "q", Color: "#E69F00", Fields: []string{"q"}},
	}
	areas := gridAreas(3, 0.01)
	for i := range areas.Features {
		areas.Features[i].Props["p"] = shadeCounts[i][0]
		areas.Features[i].Props["q"] = shadeCounts[i][1]
	}
	return &m, areas
}

// wantClass is the class of an area's counts, computed here apart from
// package measure: entropy in bits over log2 of the number of groups
// (Shannon 1948; the base cancels in the ratio), classed by floor(5v).
func wantClass(counts []float64) (int, bool) {
	total := 0.0
	for _, v := range counts {
		total += v
	}
	if total == 0 {
		return 0, false
	}
	h := 0.0
	for _, v := range counts {
		if v > 0 {
			h -= v / total * math.Log2(v/total)
		}
	}
	v := h / math.Log2(float64(len(counts)))
	return min(int(math.Floor(v*5+1e-9)), 4), true
}

// Breaks 0–0.2–0.4–0.6–0.8–1: a score on a break belongs to the class
// above it; 1 (and rounding just above it) to the last class.
func TestShadeClass(t *testing.T) {
	for _, c := range []struct {
		v    float64
		want int
	}{{0, 0}, {0.1999, 0}, {0.2, 1}, {0.3999, 1}, {0.4, 2}, {0.6, 3}, {0.7999, 3}, {0.8, 4}, {1, 4}, {1 + 1e-15, 4}} {
		if got := ShadeClass(c.v); got != c.want {
			t.Errorf("ShadeClass(%v) = %d; want %d", c.v, got, c.want)
		}
	}
	for c := range ShadeRamp {
		if got, want := shadeLabel(c), fmt.Sprintf("%.1f–%.1f", 0.2*float64(c), 0.2*float64(c+1)); got != want {
			t.Errorf("class %d label %q; want %q", c, got, want)
		}
	}
}

// labOf is CIE 1976 L*a*b* of an sRGB colour (D65): the sRGB transfer
// curve and matrix of IEC 61966-2-1, then the CIE 15:2004 formulas.
func labOf(c color.NRGBA) [3]float64 {
	lin := func(v uint8) float64 {
		s := float64(v) / 255
		if s <= 0.04045 {
			return s / 12.92
		}
		return math.Pow((s+0.055)/1.055, 2.4)
	}
	r, g, b := lin(c.R), lin(c.G), lin(c.B)
	X := 0.4124*r + 0.3576*g + 0.1805*b
	Y := 0.2126*r + 0.7152*g + 0.0722*b
	Z := 0.0193*r + 0.1192*g + 0.9505*b
	f := func(t float64) float64 {
		if t > 216.0/24389 {
			return math.Cbrt(t)
		}
		return (24389.0/27*t + 16) / 116
	}
	fx, fy, fz := f(X/0.95047), f(Y), f(Z/1.08883)
	return [3]float64{116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)}
}

// The ramp is sequential and its classes are told apart: L* falls from
// class to class (light = least mixed), and neighbours are at least 10
// apart in CIELAB ΔE*ab (common practice, the threshold render's palette
// test uses for marks told apart at a glance).
func TestShadeRamp(t *testing.T) {
	var prev [3]float64
	for c, hex := range ShadeRamp {
		col, err := render.ParseHex(hex)
		if err != nil {
			t.Fatal(err)
		}
		lab := labOf(col)
		if c > 0 {
			d := math.Sqrt((lab[0]-prev[0])*(lab[0]-prev[0]) + (lab[1]-prev[1])*(lab[1]-prev[1]) + (lab[2]-prev[2])*(lab[2]-prev[2]))
			if lab[0] >= prev[0] {
				t.Errorf("class %d (%s) L* %.1f is not darker than class %d's %.1f", c, hex, lab[0], c-1, prev[0])
			}
			if d < 10 {
				t.Errorf("classes %d and %d are %.1f apart in ΔE*ab; want at least 10", c-1, c, d)
			}
		}
		prev = lab
	}
}

// readShade reads the reference script a render wrote.
func readShade(t *testing.T, out string) []struct {
	Kind, Color, Key, KeyTitle string
	Above                      bool
	Areas                      [][][][2]float64
} {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(out, tiles.ReferenceScript))
	if err != nil {
		t.Fatal(err)
	}
	s := strings.TrimSuffix(strings.TrimPrefix(string(b), "window.stippleReference = "), ";\n")
	var d struct {
		Layers []struct {
			Kind, Color, Key, KeyTitle string
			Above                      bool
			Areas                      [][][][2]float64
		}
	}
	if err := json.Unmarshal([]byte(s), &d); err != nil {
		t.Fatalf("%s: %v", tiles.ReferenceScript, err)
	}
	return d.Layers
}

// With shade_diversity on, the viewer's reference data holds five area
// layers under the dots, one per class in order with the ramp's colour
// and its key label, and one polygon per area with people, in the class
// of its normalised entropy (wantClass, computed from the counts here);
// the area without people is not shaded.
func TestShadeReferenceData(t *testing.T) {
	dir := t.TempDir()
	m, areas := shadeMap(t, dir)
	if _, err := Run(context.Background(), m, Options{Layer: areas, Workers: 2}); err != nil {
		t.Fatal(err)
	}
	layers := readShade(t, m.Out)
	if len(layers) != len(ShadeRamp) {
		t.Fatalf("%d reference layers; want %d classes", len(layers), len(ShadeRamp))
	}
	where := map[[2]float64][]int{} // south-west corner → classes holding it
	total := 0
	for c, l := range layers {
		if l.Kind != "areas" || l.Above || l.Color != ShadeRamp[c] || l.Key != shadeLabel(c) || l.KeyTitle != ShadeKeyTitle {
			t.Errorf("layer %d: kind %q above %v colour %s key %q %q; want areas under the dots, %s, %q", c, l.Kind, l.Above, l.Color, l.Key, l.KeyTitle, ShadeRamp[c], shadeLabel(c))
		}
		for _, poly := range l.Areas {
			where[poly[0][0]] = append(where[poly[0][0]], c)
			total++
		}
	}
	people := 0
	for i, f := range areas.Features {
		corner := [2]float64{f.Geometry[0][0][0][0], f.Geometry[0][0][0][1]}
		want, ok := wantClass(shadeCounts[i][:])
		got := where[corner]
		if !ok {
			if len(got) != 0 {
				t.Errorf("area %s has no people but is shaded in classes %v", f.ID, got)
			}
			continue
		}
		people++
		if len(got) != 1 || got[0] != want {
			t.Errorf("area %s (%v): shaded in classes %v; want class %d once", f.ID, shadeCounts[i], got, want)
		}
	}
	if total != people {
		t.Errorf("%d polygons; want %d, one per area with people", total, people)
	}
	for c := range ShadeRamp {
		if len(layers[c].Areas) == 0 {
			t.Errorf("class %d holds no area; the fixture is meant to fill every class", c)
		}
	}
}

// With shade_diversity off, a render writes exactly what a map without the
// key writes (testdata/small, the key absent and set to false): no
// reference script and a map-data.js that names none. Turned on, the
// script is there and map-data.js names it.
func TestShadeOffWritesNothing(t *testing.T) {
	src, err := os.ReadFile("../../testdata/small/map.toml")
	if err != nil {
		t.Fatal(err)
	}
	renderWith := func(name, extra string) string {
		dir := filepath.Join(t.TempDir(), name)
		if err := os.MkdirAll(dir, 0o755); err != nil {
			t.Fatal(err)
		}
		for _, f := range []string{"areas.geojson", "water.geojson"} {
			b, err := os.ReadFile(filepath.Join("../../testdata/small", f))
			if err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(filepath.Join(dir, f), b, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		text := strings.Replace(string(src), "seed = 3\n", "seed = 3\n"+extra, 1)
		if err := os.WriteFile(filepath.Join(dir, "map.toml"), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		m, err := mapfile.Read(filepath.Join(dir, "map.toml"))
		if err != nil {
			t.Fatal(err)
		}
		m.Out = filepath.Join(dir, "out")
		if _, err := Run(context.Background(), m, Options{Workers: 2}); err != nil {
			t.Fatal(err)
		}
		return filepath.Join(dir, "out")
	}
	without, off, on := renderWith("without", ""), renderWith("off", "shade_diversity = false\n"), renderWith("on", "shade_diversity = true\n")
	a, b := published(t, without), published(t, off)
	sameFiles(t, a, b)
	if _, ok := a[tiles.ReferenceScript]; ok {
		t.Errorf("render without the key wrote %s", tiles.ReferenceScript)
	}
	if strings.Contains(string(a["map-data.js"]), "reference") {
		t.Errorf("map-data.js names a reference script with the shading off")
	}
	c := published(t, on)
	if _, ok := c[tiles.ReferenceScript]; !ok {
		t.Errorf("render with shade_diversity = true wrote no %s", tiles.ReferenceScript)
	}
	if !strings.Contains(string(c["map-data.js"]), tiles.ReferenceScript) {
		t.Errorf("map-data.js does not name %s with the shading on", tiles.ReferenceScript)
	}
}

// A print page of the grid fills each area with its class's colour under
// the dots: in a box at each area's centre most pixels are exactly that
// colour and none another class's; the areas without people stay paper
// white there. The key after the dot note shows every class's swatch
// outside the map frame.
func TestShadePrint(t *testing.T) {
	ctx := context.Background()
	m, areas := shadeMap(t, t.TempDir())
	in, err := Load(m, areas)
	if err != nil {
		t.Fatal(err)
	}
	pl, err := PlaceForPrint(ctx, in, m, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer pl.Store.Close()
	size, _ := page.ParseSize("A5")
	const dpi = 100
	pp, err := Print(ctx, in, m, pl, PrintOptions{Size: size, DPI: dpi, Margin: 10, Projection: "auto", DotMM: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	img := pp.Page.Raster()
	ramp := make([]color.RGBA, len(ShadeRamp))
	for c, hex := range ShadeRamp {
		n, _ := render.ParseHex(hex)
		ramp[c] = color.RGBA{n.R, n.G, n.B, 255}
	}
	ppm := dpi / 25.4
	for i, f := range areas.Features {
		ctr := orb.Bound{Min: f.Geometry[0][0][0], Max: f.Geometry[0][0][2]}.Center()
		x, y := pp.Page.Project(ctr[0], ctr[1])
		px, py := int(x*ppm), int(y*ppm)
		want, ok := wantClass(shadeCounts[i][:])
		hits, other, white := 0, 0, 0
		for dy := -6; dy <= 6; dy++ {
			for dx := -6; dx <= 6; dx++ {
				c := img.RGBAAt(px+dx, py+dy)
				if c == (color.RGBA{255, 255, 255, 255}) {
					white++
				}
				for k, r := range ramp {
					if c == r {
						if ok && k == want {
							hits++
						} else {
							other++
						}
					}
				}
			}
		}
		switch {
		case !ok && (white < 13*13/2 || other > 0):
			t.Errorf("area %s without people: %d white pixels of 169, %d shaded; want paper", f.ID, white, other)
		case ok && (hits < 13*13/2 || other > 0):
			t.Errorf("area %s: %d of 169 pixels in class %d's %s, %d in another class's colour", f.ID, hits, want, ShadeRamp[want], other)
		}
	}
	fr := pp.Page.FramePixels()
	for k, r := range ramp {
		n := 0
		b := img.Bounds()
		for y := fr.Max.Y + 1; y < b.Max.Y; y++ {
			for x := b.Min.X; x < b.Max.X; x++ {
				if img.RGBAAt(x, y) == r {
					n++
				}
			}
		}
		if n < 25 {
			t.Errorf("key: %d pixels of class %d's %s below the frame; want its swatch", n, k, ShadeRamp[k])
		}
	}
}
