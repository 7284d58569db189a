package sample

import (
	"math/rand/v2"
	"testing"

	"github.com/paulmach/orb"
)

// TestCellGridClassification compares the grid's cell classes with the
// plain loop, cell by cell: every point of an inside cell (its corners,
// centre and random points) is inside, every point of an unlisted cell is
// outside; only boundary cells may hold both.
func TestCellGridClassification(t *testing.T) {
	seed := uint64(14)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 7))
	for n := 0; n < 40; n++ {
		for _, poly := range randomFeature(rng, true) {
			rings := planeRings(poly)
			if len(rings) == 0 {
				continue
			}
			x0, y0, x1, y1 := bounds(rings)
			g := newCellGrid(rings, newEdgeIndex(rings), x0, y0, x1, y1)
			class := make([]byte, g.nx*g.ny) // 0 outside, 1 inside, 2 boundary
			for _, c := range g.cells {
				k := c &^ boundaryBit
				class[k] = 1
				if c&boundaryBit != 0 {
					class[k] = 2
				}
			}
			for k, cl := range class {
				if cl == 2 {
					continue
				}
				i, j := k%g.nx, k/g.nx
				for _, f := range [][2]float64{{0, 0}, {1, 0}, {0, 1}, {1, 1}, {0.5, 0.5}, {rng.Float64(), rng.Float64()}} {
					x := g.minX + (float64(i)+f[0])*g.cw
					y := g.minY + (float64(j)+f[1])*g.ch
					if plainEvenOdd(rings, x, y) != (cl == 1) {
						t.Fatalf("feature %d: cell (%d, %d) class %d but point (%v, %v) inside=%v", n, i, j, cl, x, y, !(cl == 1))
					}
				}
			}
		}
	}
}

// TestMaskContainsMatchesPlainLoop compares the mask index with a plain loop
// over every mask part, value for value, including masks across the
// antimeridian.
func TestMaskContainsMatchesPlainLoop(t *testing.T) {
	seed := uint64(15)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 8))
	var polys []orb.MultiPolygon
	for k := 0; k < 300; k++ {
		cx, cy := -180+360*rng.Float64(), -70+140*rng.Float64()
		polys = append(polys, orb.MultiPolygon{{star(rng, cx, cy, 0.5, 4, 5+rng.IntN(40), rng.IntN(2) == 0)}})
	}
	polys = append(polys, orb.MultiPolygon{{{{175, -10}, {-175, -10}, {-175, 10}, {175, 10}, {175, -10}}}})
	m := NewMask(polys)
	var all [][][]float64
	for _, mp := range polys {
		for _, poly := range mp {
			all = append(all, refRings(poly)) // lon/lat: edges straight there
		}
	}
	in := 0
	for i := 0; i < 30000; i++ {
		q := orb.Point{-180 + 360*rng.Float64(), -80 + 160*rng.Float64()}
		if i%10 == 0 {
			q[0] = 175 + 10*rng.Float64()
			q[0] = wrapLon(q[0])
			q[1] = -10 + 20*rng.Float64()
		}
		x, y := q[0], q[1]
		want := false
		for _, rings := range all {
			for _, s := range []float64{0, 360, -360} {
				if plainEvenOdd(rings, x+s, y) {
					want = true
				}
			}
		}
		if got := m.Contains(q); got != want {
			t.Fatalf("Contains(%v) = %v, plain loop %v", q, got, want)
		}
		if want {
			in++
		}
	}
	if in < 500 {
		t.Fatalf("only %d masked points: the test tests little", in)
	}
	t.Logf("%d of 30000 points masked", in)
}
