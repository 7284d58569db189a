package render

import (
	"fmt"
	"image/color"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// plainDisc is the straightforward per-pixel reference for AddStamp: every
// pixel near the centre gets the disc rule written out again, with no
// stamp, span, padding or clipping: clamp(r + 0.5 − distance, 0, 1) of the
// ink, rounded, for a centre at ((x+0.5)/Sub, (y+0.5)/Sub) pixels. cov is
// laid out as cov[(y*w+x)*ncat+cat].
func plainDisc(cov []uint32, w, h, ncat, cat, x, y int, d Dot) {
	r, ink := d.Diameter/2, d.Opacity*One
	cx, cy := (float64(x)+0.5)/Sub, (float64(y)+0.5)/Sub
	m := int(math.Ceil(r)) + 2
	for py := int(math.Floor(cy)) - m; py <= int(math.Floor(cy))+m; py++ {
		for px := int(math.Floor(cx)) - m; px <= int(math.Floor(cx))+m; px++ {
			if px < 0 || py < 0 || px >= w || py >= h {
				continue
			}
			dx, dy := float64(px)+0.5-cx, float64(py)+0.5-cy
			c := r + 0.5 - math.Sqrt(dx*dx+dy*dy)
			if c <= 0 {
				continue
			}
			c = min(c, 1)
			cov[(py*w+px)*ncat+cat] += uint32(c*ink + 0.5)
		}
	}
}

// TestAddStampMatchesPlainDisc draws many random dots with AddStamp and with
// plainDisc and compares every coverage value, then the composited pixels
// and the emptiness the canvas is left in. Dots fall anywhere from well
// off the canvas to well inside (edges, corners and partial dots included,
// and a share placed right at the edges); canvases are narrower and wider
// than the chunks compositing reads, categories from one to past
// the shared bit 7, diameters up to MaxStampDiameter (whose rows are longer
// than 64 pixels) and opacities down to one so faint that some or all
// sub-pixel offsets ink nothing.
func TestAddStampMatchesPlainDisc(t *testing.T) {
	rng := rand.New(rand.NewPCG(19, 4))
	// Widths from under one 8-pixel word to past 512 pixels, where a
	// row's 64 chunks grow wider than 8 pixels.
	sizes := [][2]int{{13, 9}, {70, 33}, {130, 67}, {200, 150}, {700, 24}, {1100, 19}}
	ncats := []int{1, 3, 5, 9, 12}
	diams := []float64{1, 1.13, 1.6, 2.2, 3, 4.7, 9, 20, MaxStampDiameter}
	opacities := []float64{1, 0.7, 0.3, 0.05, 0.00015}
	colors := make([]color.NRGBA, 12)
	for k := range colors {
		colors[k] = color.NRGBA{uint8(20 * k), uint8(250 - 17*k), uint8(60 + 13*k), 255}
	}
	cfg := 0
	for _, diam := range diams {
		for _, op := range opacities {
			cfg++
			sz, ncat := sizes[cfg%len(sizes)], ncats[cfg%len(ncats)]
			w, h := sz[0], sz[1]
			d := Dot{Diameter: diam, Opacity: op}
			name := fmt.Sprintf("%dx%d/%dcat/d=%v/op=%v", w, h, ncat, diam, op)
			st := NewStamp(d)
			c := NewCanvas(w, h, ncat)
			tile := NewTile(w, h)
			// Two rounds on the same canvas and tile: the second finds
			// them as compositing left them.
			for round := 0; round < 2; round++ {
				want := make([]uint32, w*h*ncat)
				reach := int(diam/2) + 3
				for i := 0; i < 600; i++ {
					var x, y int
					switch i % 4 {
					case 0: // anywhere, far off the canvas included
						x = rng.IntN((w+4*reach)*Sub) - 2*reach*Sub
						y = rng.IntN((h+4*reach)*Sub) - 2*reach*Sub
					case 1: // near the left or right edge
						x = rng.IntN(2*reach*Sub) - reach*Sub + rng.IntN(2)*w*Sub
						y = rng.IntN(h * Sub)
					case 2: // near the top or bottom edge
						x = rng.IntN(w * Sub)
						y = rng.IntN(2*reach*Sub) - reach*Sub + rng.IntN(2)*h*Sub
					default: // inside
						x, y = rng.IntN(w*Sub), rng.IntN(h*Sub)
					}
					cat := rng.IntN(ncat)
					c.AddStamp(cat, x, y, st)
					plainDisc(want, w, h, ncat, cat, x, y, d)
				}
				if got := coverage(c); !slices.Equal(got, want) {
					i := 0
					for got[i] == want[i] {
						i++
					}
					p := i / ncat
					t.Fatalf("%s round %d: pixel (%d, %d) category %d: coverage %d, plain disc %d", name, round, p%w, p/w, i%ncat, got[i], want[i])
				}
				wantPix := refComposite(&Canvas{W: w, H: h, NCat: ncat}, colors, 1<<gainBits, want)
				c.CompositeTile(colors, tile)
				for y := 0; y < h; y++ {
					if g, wp := tile.Image.Pix[y*tile.Image.Stride:][:4*w], wantPix[y*4*w:][:4*w]; !slices.Equal(g, wp) {
						t.Fatalf("%s round %d: row %d composited differently", name, round, y)
					}
				}
				if !c.Empty() || slices.ContainsFunc(coverage(c), func(v uint32) bool { return v != 0 }) {
					t.Fatalf("%s round %d: CompositeTile left coverage behind", name, round)
				}
			}
			// Reset (not compositing) empties the canvas too.
			for i := 0; i < 50; i++ {
				c.AddStamp(rng.IntN(ncat), rng.IntN((w+8)*Sub)-4*Sub, rng.IntN((h+8)*Sub)-4*Sub, st)
			}
			c.Reset()
			if !c.Empty() || slices.ContainsFunc(coverage(c), func(v uint32) bool { return v != 0 }) || slices.ContainsFunc(c.cats, func(b uint8) bool { return b != 0 }) {
				t.Fatalf("%s: Reset left coverage behind", name)
			}
		}
	}
}

// TestStampPadding checks what the drawing loops rely on: a padded stamp
// gives every sub-pixel offset as many cells as the longest, the extra
// ones with weight 0 on a pixel the dot inks; marked rows start at the
// dot's first row, cover all its rows and stay within its reach.
func TestStampPadding(t *testing.T) {
	for _, d := range []Dot{{Diameter: 1, Opacity: 0.7}, {Diameter: 1.6, Opacity: 0.7}, {Diameter: 3, Opacity: 0.9}, {Diameter: 64, Opacity: 1}} {
		s := NewStamp(d)
		n := len(s.cells[0])
		for f := range s.cells {
			cells := s.cells[f]
			if len(cells) != n {
				t.Fatalf("%v offset %d: %d cells, offset 0 has %d", d, f, len(cells), n)
			}
			inked := 0
			for inked < len(cells) && cells[inked].w > 0 {
				inked++
			}
			if inked == 0 {
				t.Fatalf("%v offset %d: no inked cell", d, f)
			}
			for _, e := range cells[inked:] {
				if e.w != 0 || e.dx != cells[0].dx || e.dy != cells[0].dy {
					t.Fatalf("%v offset %d: padding cell %+v is not the first cell with weight 0", d, f, e)
				}
			}
			sp := s.spans[f]
			top, bottom := sp[0].dy, sp[len(sp)-1].dy
			if s.top[f] != top || s.top[f]+s.nrows[f]-1 < bottom || s.top[f]+s.nrows[f]-1 > int32(s.reach) {
				t.Fatalf("%v offset %d: rows %d+%d for ink on rows %d…%d, reach %d", d, f, s.top[f], s.nrows[f], top, bottom, s.reach)
			}
			for _, x := range sp {
				if x.n < 1 || x.n > 64 {
					t.Fatalf("%v offset %d: span of %d pixels", d, f, x.n)
				}
			}
		}
	}
	// So faint that only some offsets ink a pixel: nothing is padded, and
	// offsets without ink have no cells.
	s := NewStamp(Dot{Diameter: 1, Opacity: 0.00015})
	empty, inked := 0, 0
	for f := range s.cells {
		if len(s.cells[f]) == 0 {
			empty++
		} else {
			inked++
		}
	}
	if empty == 0 || inked == 0 {
		t.Fatalf("faint stamp: %d offsets without cells, %d with; want both", empty, inked)
	}
}

// TestCountCanvasMatchesPlainCounts counts random dots with Count and
// CountN (categories past the shared bit 7 included) and halves the canvas
// into another with AddHalf, against plain per-category count arrays.
func TestCountCanvasMatchesPlainCounts(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 19))
	for _, tc := range []struct{ ncat, w, h int }{{1, 72, 40}, {4, 72, 40}, {10, 72, 40}, {3, 600, 6}} {
		ncat, w, h := tc.ncat, tc.w, tc.h
		c := NewCanvas(w, h, ncat)
		want := make([]uint32, w*h*ncat)
		for i := 0; i < 3000; i++ {
			cat, x, y := rng.IntN(ncat), rng.IntN(w), rng.IntN(h)
			if i%3 == 0 {
				n := uint32(rng.IntN(5))
				c.CountN(cat, x, y, n)
				want[(y*w+x)*ncat+cat] += n
				continue
			}
			c.Count(cat, x, y)
			want[(y*w+x)*ncat+cat]++
		}
		if !slices.Equal(coverage(c), want) {
			t.Fatalf("%d categories: counts differ from the plain counts", ncat)
		}
		for q := 0; q < 4; q++ {
			half := NewCanvas(w, h, ncat)
			half.AddHalf(c, q&1, q>>1)
			wantHalf := make([]uint32, w*h*ncat)
			for y := 0; y < h; y++ {
				for x := 0; x < w; x++ {
					for k := 0; k < ncat; k++ {
						p := (q>>1*h/2+y/2)*w + q&1*w/2 + x/2
						wantHalf[p*ncat+k] += want[(y*w+x)*ncat+k]
					}
				}
			}
			if !slices.Equal(coverage(half), wantHalf) {
				t.Fatalf("%d categories, quadrant %d: AddHalf differs from plain sums", ncat, q)
			}
		}
		c.Reset()
		if !c.Empty() || slices.ContainsFunc(coverage(c), func(v uint32) bool { return v != 0 }) {
			t.Fatalf("%d categories: Reset left counts behind", ncat)
		}
	}
}
