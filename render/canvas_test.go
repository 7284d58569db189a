package render

import (
	"cmp"
	"fmt"
	"image"
	"image/color"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
	"time"
)

// coverage lists every pixel's coverage per category, as
// cov[(y*W+x)*NCat+cat], whichever way the canvas keeps it.
func coverage(c *Canvas) []uint32 {
	out := make([]uint32, c.W*c.H*c.NCat)
	for y := 0; y < c.H; y++ {
		for x := 0; x < c.W; x++ {
			for k := 0; k < c.NCat; k++ {
				out[(y*c.W+x)*c.NCat+k] = c.Coverage(x, y, k)
			}
		}
	}
	return out
}

// refCanvas is a plain per-category coverage array.
type refCanvas struct {
	W, H, NCat int
	Cov        []uint32
}

func newRef(w, h, n int) *refCanvas { return &refCanvas{w, h, n, make([]uint32, w*h*n)} }

// refStamp is the plain reference for AddStamp: every pixel of the canvas
// gets the disc rule of Add for a centre at ((x+0.5)/Sub, (y+0.5)/Sub).
func refStamp(c *refCanvas, cat, x, y int, d Dot) {
	r, ink := d.Diameter/2, d.Opacity*One
	ix, iy := int(math.Floor(float64(x)/Sub)), int(math.Floor(float64(y)/Sub))
	fx, fy := x-ix*Sub, y-iy*Sub
	for py := 0; py < c.H; py++ {
		for px := 0; px < c.W; px++ {
			c.Cov[(py*c.W+px)*c.NCat+cat] += stampWeight(r, ink, px-ix, py-iy, fx, fy)
		}
	}
}

func TestAddStampMatchesReference(t *testing.T) {
	const seed = 3
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 9))
	// Three categories; nine, so that categories 7 and 8 share the
	// canvas's "7 and above" bit and always take the per-category cells.
	for _, ncat := range []int{3, 9} {
		for _, diam := range []float64{1, 1.5, 2.2, 3, 4.7, 9} {
			d := Dot{Diameter: diam, Opacity: 0.8}
			st := NewStamp(d)
			got, want := NewCanvas(24, 20, ncat), newRef(24, 20, ncat)
			for i := 0; i < 300; i++ {
				// Centres from well outside to well inside, edges included.
				x, y := rng.IntN(40*Sub)-8*Sub, rng.IntN(36*Sub)-8*Sub
				cat := rng.IntN(ncat)
				got.AddStamp(cat, x, y, st)
				refStamp(want, cat, x, y, d)
			}
			if !slices.Equal(coverage(got), want.Cov) {
				t.Errorf("%d categories, diameter %v: AddStamp differs from the reference", ncat, diam)
			}
			// Compositing drains the canvas; the pixels match the
			// reference compositing of the reference coverage.
			colors := make([]color.NRGBA, ncat)
			for k := range colors {
				colors[k] = color.NRGBA{uint8(30 * k), uint8(255 - 20*k), uint8(90 + 15*k), 255}
			}
			tile := NewTile(24, 20)
			wantPix := refComposite(&Canvas{W: 24, H: 20, NCat: ncat}, colors, 1<<gainBits, want.Cov)
			got.CompositeTile(colors, tile)
			for y := 0; y < 20; y++ {
				if g, w := tile.Image.Pix[y*tile.Image.Stride:][:4*24], wantPix[y*4*24:][:4*24]; !slices.Equal(g, w) {
					t.Fatalf("%d categories, diameter %v: row %d composited differently", ncat, diam, y)
				}
			}
			if !got.Empty() || slices.ContainsFunc(coverage(got), func(v uint32) bool { return v != 0 }) {
				t.Fatalf("CompositeTile left coverage behind")
			}
		}
	}
}

// TestStampAgreesWithAdd: a stamp at sub-pixel step f gives the bytes Add
// gives for the step's centre, except where float rounding of the distance
// differs in the last bit (at most 1 unit of One).
func TestStampAgreesWithAdd(t *testing.T) {
	d := Dot{Diameter: 3, Opacity: 0.9}
	st := NewStamp(d)
	for f := 0; f < Sub*Sub; f += 7 {
		a, b := NewCanvas(8, 8, 1), NewCanvas(8, 8, 1)
		x, y := 3*Sub+f%Sub, 4*Sub+f/Sub
		a.AddStamp(0, x, y, st)
		b.Add(0, (float64(x)+0.5)/Sub, (float64(y)+0.5)/Sub, d)
		ac, bc := coverage(a), coverage(b)
		for i := range ac {
			if diff := int(ac[i]) - int(bc[i]); diff < -1 || diff > 1 {
				t.Fatalf("step %d pixel %d: stamp %d, Add %d", f, i, ac[i], bc[i])
			}
		}
	}
}

// refComposite is the plain per-pixel reference for composite, over c's
// coverage or, when given, over cov laid out as cov[(y*W+x)*NCat+cat].
func refComposite(c *Canvas, colors []color.NRGBA, gain uint64, cov ...[]uint32) []uint8 {
	out := make([]uint8, 4*c.W*c.H)
	at := func(p, k int) uint32 {
		if len(cov) > 0 {
			return cov[0][p*c.NCat+k]
		}
		return c.Coverage(p%c.W, p/c.W, k)
	}
	full := uint64(One) << gainBits
	for p := 0; p < c.W*c.H; p++ {
		var sum, r, g, b uint64
		for k := 0; k < c.NCat; k++ {
			w := uint64(at(p, k))
			sum += w
			r += w * uint64(colors[k].R)
			g += w * uint64(colors[k].G)
			b += w * uint64(colors[k].B)
		}
		if sum == 0 {
			continue
		}
		a := math.Min(float64(sum)*float64(gain), float64(full))
		a8 := uint64(math.Floor(a*255/float64(full) + 0.5))
		if a8 == 0 {
			continue
		}
		out[4*p] = uint8((r + sum/2) / sum)
		out[4*p+1] = uint8((g + sum/2) / sum)
		out[4*p+2] = uint8((b + sum/2) / sum)
		out[4*p+3] = uint8(a8)
	}
	return out
}

var testColors = []color.NRGBA{{230, 159, 0, 255}, {86, 180, 233, 255}, {0, 158, 115, 255}, {240, 228, 66, 255}, {204, 121, 167, 255}}

func TestCompositeMatchesReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	c := NewCanvas(32, 16, 5)
	st := NewStamp(Dot{Diameter: 2.5, Opacity: 0.7})
	for i := 0; i < 400; i++ {
		c.AddStamp(rng.IntN(5), rng.IntN(32*Sub), rng.IntN(16*Sub), st)
	}
	dst := image.NewNRGBA(image.Rect(0, 0, 32, 16))
	c.Composite(testColors, dst)
	if want := refComposite(c, testColors, 1<<gainBits); !slices.Equal(dst.Pix, want) {
		t.Error("Composite differs from the reference")
	}
	cnt := NewCanvas(32, 16, 5)
	for i := 0; i < 3000; i++ {
		cnt.Count(rng.IntN(5), rng.IntN(32), rng.IntN(16))
	}
	for _, mass := range []float64{0.001, 0.05, 0.4, 3} {
		cnt.CompositeCounts(testColors, mass, dst)
		g := uint64(math.Round(mass * One * (1 << gainBits)))
		if want := refComposite(cnt, testColors, g); !slices.Equal(dst.Pix, want) {
			t.Errorf("CompositeCounts(mass %v) differs from the reference", mass)
		}
	}
}

// TestCategoryOrderDoesNotChangePixels renumbers the categories (and their
// colours with them) and shuffles the drawing order: the pixels must be
// identical, which is what integer coverage and share compositing promise.
func TestCategoryOrderDoesNotChangePixels(t *testing.T) {
	type dot struct{ cat, x, y int }
	rng := rand.New(rand.NewPCG(8, 8))
	dots := make([]dot, 2000)
	for i := range dots {
		dots[i] = dot{rng.IntN(5), rng.IntN(64 * Sub), rng.IntN(64 * Sub)}
	}
	perm := []int{3, 0, 4, 1, 2} // new number of old category k
	permColors := make([]color.NRGBA, 5)
	for k, p := range perm {
		permColors[p] = testColors[k]
	}
	for _, d := range []Dot{{Diameter: 3, Opacity: 0.9}, {Diameter: 1.2, Opacity: 0.5}} {
		st := NewStamp(d)
		a, b := NewCanvas(64, 64, 5), NewCanvas(64, 64, 5)
		ca, cb := NewCanvas(64, 64, 5), NewCanvas(64, 64, 5)
		for _, o := range dots {
			a.AddStamp(o.cat, o.x, o.y, st)
			ca.Count(o.cat, o.x/Sub, o.y/Sub)
		}
		for _, i := range rng.Perm(len(dots)) {
			o := dots[i]
			b.AddStamp(perm[o.cat], o.x, o.y, st)
			cb.Count(perm[o.cat], o.x/Sub, o.y/Sub)
		}
		ia, ib := image.NewNRGBA(image.Rect(0, 0, 64, 64)), image.NewNRGBA(image.Rect(0, 0, 64, 64))
		a.Composite(testColors, ia)
		b.Composite(permColors, ib)
		if !slices.Equal(ia.Pix, ib.Pix) {
			t.Errorf("%v: disc pixels change with category order", d)
		}
		ca.CompositeCounts(testColors, d.Mass()/8, ia)
		cb.CompositeCounts(permColors, d.Mass()/8, ib)
		if !slices.Equal(ia.Pix, ib.Pix) {
			t.Errorf("%v: count pixels change with category order", d)
		}
	}
}

func TestResetClearsOnlyWhatWasUsed(t *testing.T) {
	c := NewCanvas(16, 16, 2)
	c.AddStamp(1, 5*Sub, 7*Sub, NewStamp(Dot{Diameter: 3, Opacity: 1}))
	c.Count(0, 15, 15)
	if c.Empty() {
		t.Fatal("canvas empty after drawing")
	}
	c.Reset()
	if !c.Empty() || slices.ContainsFunc(coverage(c), func(v uint32) bool { return v != 0 }) {
		t.Fatal("Reset left coverage behind")
	}
}

// BenchmarkAddStamp draws 3 px dots into a 256 px tile; compare with
// BenchmarkAdd (the float path).
func BenchmarkAddStamp(b *testing.B) {
	for _, diam := range []float64{1.5, 3} {
		b.Run(fmt.Sprint("d=", diam), func(b *testing.B) {
			st := NewStamp(Dot{Diameter: diam, Opacity: 0.9})
			c := NewCanvas(256, 256, 5)
			rng := rand.New(rand.NewPCG(1, 1))
			pts := make([]int, 2*4096)
			for i := range pts {
				pts[i] = rng.IntN(256 * Sub)
			}
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				j := 2 * (i & 4095)
				c.AddStamp(i%5, pts[j], pts[j+1], st)
			}
		})
	}
}

func BenchmarkAdd(b *testing.B) {
	d := Dot{Diameter: 3, Opacity: 0.9}
	c := NewCanvas(256, 256, 5)
	rng := rand.New(rand.NewPCG(1, 1))
	pts := make([]float64, 2*4096)
	for i := range pts {
		pts[i] = rng.Float64() * 256
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		j := 2 * (i & 4095)
		c.Add(i%5, pts[j], pts[j+1], d)
	}
}

// BenchmarkComposite composites a 256 px, 5-category tile with 2000 dots.
func BenchmarkComposite(b *testing.B) {
	c := NewCanvas(256, 256, 5)
	st := NewStamp(Dot{Diameter: 3, Opacity: 0.9})
	rng := rand.New(rand.NewPCG(2, 2))
	for i := 0; i < 2000; i++ {
		c.AddStamp(rng.IntN(5), rng.IntN(256*Sub), rng.IntN(256*Sub), st)
	}
	dst := image.NewNRGBA(image.Rect(0, 0, 256, 256))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		c.Composite(testColors, dst)
	}
}

// BenchmarkDrawTile draws n 3-px dots on a reused canvas and composites
// them into a reused Tile: the whole per-tile drawing cost.
func BenchmarkDrawTile(b *testing.B) {
	for _, n := range []int{0, 1, 350, 5000} {
		b.Run(fmt.Sprintf("dots=%d", n), func(b *testing.B) {
			c := NewCanvas(256, 256, 5)
			t := NewTile(256, 256)
			st := NewStamp(Dot{Diameter: 3, Opacity: 0.9})
			rng := rand.New(rand.NewPCG(2, 2))
			type dot struct{ cat, x, y int }
			dots := make([]dot, n)
			for i := range dots {
				dots[i] = dot{rng.IntN(5), rng.IntN(256 * Sub), rng.IntN(256 * Sub)}
			}
			for b.Loop() {
				for _, d := range dots {
					c.AddStamp(d.cat, d.x, d.y, st)
				}
				c.CompositeTile(testColors, t)
			}
		})
	}
}

// BenchmarkDenseTile draws 100 000 dots of five mixed categories on one
// 256 px tile (about 1.5 per pixel; a twentieth of them partly off the
// canvas) and composites it: the drawing cost of a dense tile. The dots
// come in Morton (Z) order of their centres, as the tile writer reads them
// from the dot store. ns/dot is per dot drawn, compositing included;
// cpu-ns/dot the same in the process's CPU time; draw-ns/dot the wall time
// of the AddStamp calls alone.
func BenchmarkDenseTile(b *testing.B) {
	for _, diam := range []float64{1.13, 1.6, 3} {
		b.Run(fmt.Sprint("d=", diam), func(b *testing.B) {
			c := NewCanvas(256, 256, 5)
			t := NewTile(256, 256)
			st := NewStamp(Dot{Diameter: diam, Opacity: 0.7})
			rng := rand.New(rand.NewPCG(5, 5))
			type dot struct{ cat, x, y int }
			dots := make([]dot, 100_000)
			for i := range dots {
				// Centres from 3 px beyond each edge to 3 px inside.
				dots[i] = dot{rng.IntN(5), rng.IntN(262*Sub) - 3*Sub, rng.IntN(262*Sub) - 3*Sub}
			}
			slices.SortFunc(dots, func(a, b dot) int { return cmp.Compare(morton(a.x+3*Sub, a.y+3*Sub), morton(b.x+3*Sub, b.y+3*Sub)) })
			cpu := cpuNanos()
			var drawing time.Duration
			for b.Loop() {
				start := time.Now()
				for _, d := range dots {
					c.AddStamp(d.cat, d.x, d.y, st)
				}
				drawing += time.Since(start)
				c.CompositeTile(testColors, t)
			}
			b.ReportMetric(float64(drawing.Nanoseconds())/float64(b.N)/float64(len(dots)), "draw-ns/dot")
			if cpu >= 0 {
				b.ReportMetric(float64(cpuNanos()-cpu)/float64(b.N)/float64(len(dots)), "cpu-ns/dot")
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(dots)), "ns/dot")
		})
	}
}

// morton interleaves the bits of x and y (x in the even bits).
func morton(x, y int) uint64 {
	var m uint64
	for b := 0; b < 32; b++ {
		m |= uint64(x>>b&1)<<(2*b) | uint64(y>>b&1)<<(2*b+1)
	}
	return m
}

// TestCountNIsRepeatedCount: CountN(n) leaves the canvas as n calls of
// Count would, in single and mixed pixels, for categories below and from
// 7 on, and saturates the same way.
func TestCountNIsRepeatedCount(t *testing.T) {
	for _, tc := range []struct {
		name string
		adds [][2]int // category, n
	}{
		{"one category", [][2]int{{2, 5}, {2, 7}}},
		{"two categories", [][2]int{{1, 3}, {4, 2}, {1, 1}}},
		{"high categories", [][2]int{{8, 4}, {7, 2}, {0, 1}}},
		{"zero", [][2]int{{3, 0}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			a, b := NewCanvas(4, 4, 9), NewCanvas(4, 4, 9)
			for _, add := range tc.adds {
				a.CountN(add[0], 1, 2, uint32(add[1]))
				for range add[1] {
					b.Count(add[0], 1, 2)
				}
			}
			if !slices.Equal(coverage(a), coverage(b)) || a.Empty() != b.Empty() {
				t.Errorf("CountN %v differs from repeated Count", tc.adds)
			}
		})
	}
	c := NewCanvas(2, 2, 3)
	c.CountN(1, 0, 0, math.MaxUint32-1)
	c.CountN(1, 0, 0, 5)
	if got := c.Coverage(0, 0, 1); got != math.MaxUint32 {
		t.Errorf("saturated single count = %d", got)
	}
	c.CountN(2, 0, 0, 3) // now mixed: the saturated count moves to its cell
	if c.Coverage(0, 0, 1) != math.MaxUint32 || c.Coverage(0, 0, 2) != 3 {
		t.Errorf("mixed counts %d, %d", c.Coverage(0, 0, 1), c.Coverage(0, 0, 2))
	}
}
