package sample

import (
	"math"
	"math/bits"
	"math/rand/v2"
	"sort"
)

// cellGrid is the fallback sampler for parts that cannot be triangulated
// (rings that cross or touch, triangulation failures): the part's box is cut
// into equal cells, each classified as outside, inside (no edge comes near
// it; its centre is inside) or boundary (some edge may pass through it).
// A proposal picks an inside or boundary cell uniformly (all cells have the
// same area) and a uniform point in it; points in boundary cells are then
// tested against the rings. The grid is refined until boundary cells make
// up at most half the proposal area, so acceptance stays at or above 1/2
// whatever the part's fill of its box (up to maxGridCells).
type cellGrid struct {
	lattice
	cells []uint32 // j*nx+i, with boundaryBit set for boundary cells
}

const (
	boundaryBit  = 1 << 31
	minGridCells = 1 << 10
	maxGridCells = 1 << 20
)

// newCellGrid builds the grid for rings with box (minX..maxX, minY..maxY)
// and containment index ix.
func newCellGrid(rings [][]float64, ix *edgeIndex, minX, minY, maxX, maxY float64) *cellGrid {
	edges := 0
	for _, r := range rings {
		edges += len(r)/2 - 1
	}
	target := max(minGridCells, min(maxGridCells, 4*edges))
	prev := 2.0
	var g *cellGrid
	for {
		g = gridOf(rings, minX, minY, maxX, maxY, target)
		inside, boundary := 0, 0
		for _, c := range g.cells {
			if c&boundaryBit != 0 {
				boundary++
			} else {
				inside++
			}
		}
		// Stop when at least half the proposal area is inside cells, at the
		// cap, or when refining no longer helps (a part of almost no area,
		// degenerate coordinates): halving the cells' size should about
		// halve the boundary share.
		frac := float64(boundary) / float64(max(1, boundary+inside))
		if boundary <= inside || target >= maxGridCells || frac > 0.9*prev {
			return g
		}
		prev = frac
		target = min(maxGridCells, 4*target)
	}
}

// gridOf classifies about target cells, shaped close to square.
func gridOf(rings [][]float64, minX, minY, maxX, maxY float64, target int) *cellGrid {
	w, h := maxX-minX, maxY-minY
	// Cells about square on the ground near the equator: x is in degrees,
	// y in units of the sphere's radius.
	nx := int(math.Round(math.Sqrt(float64(target) * w * degToRad / h)))
	nx = max(1, min(nx, target))
	ny := max(1, min(target/nx, target))
	g := &cellGrid{lattice: lattice{minX: minX, minY: minY, cw: w / float64(nx), ch: h / float64(ny), nx: nx, ny: ny}}
	boundary := make([]uint64, (nx*ny+63)/64)
	// Crossings of each row's centre line, for the parity of cell centres;
	// the rule is contain.go's, so a centre gets the same answer here as
	// from the index.
	type hit struct {
		row int32
		x   float64
	}
	var hits []hit
	for _, r := range rings {
		for i := 2; i+1 < len(r); i += 2 {
			x0, y0, x1, y1 := r[i-2], r[i-1], r[i], r[i+1]
			g.cover(x0, y0, x1, y1, func(j, i0, i1 int) {
				for c := j*nx + i0; c <= j*nx+i1; c++ {
					boundary[c>>6] |= 1 << (c & 63)
				}
				yc := minY + (float64(j)+0.5)*g.ch
				if (y0 > yc) != (y1 > yc) {
					hits = append(hits, hit{int32(j), x0 + (yc-y0)*(x1-x0)/(y1-y0)})
				}
			})
		}
	}
	sort.Slice(hits, func(a, b int) bool {
		if hits[a].row != hits[b].row {
			return hits[a].row < hits[b].row
		}
		return hits[a].x < hits[b].x
	})
	k := 0
	for j := 0; j < ny; j++ {
		for k < len(hits) && int(hits[k].row) < j {
			k++
		}
		e := k
		for e < len(hits) && int(hits[e].row) == j {
			e++
		}
		row := hits[k:e]
		// Parity of the centre (xc, yc): crossings with xc < x, counted
		// from the right.
		h := 0
		for i := 0; i < nx; i++ {
			xc := minX + (float64(i)+0.5)*g.cw
			for h < len(row) && !(xc < row[h].x) {
				h++
			}
			c := j*nx + i
			switch {
			case boundary[c>>6]&(1<<(c&63)) != 0:
				g.cells = append(g.cells, uint32(c)|boundaryBit)
			case (len(row)-h)%2 == 1:
				g.cells = append(g.cells, uint32(c))
			}
		}
		k = e
	}
	return g
}

// propose draws a point uniformly in the grid's inside and boundary cells
// and says whether it is inside the rings.
func (g *cellGrid) propose(p *rand.PCG, ix *edgeIndex) (x, y float64, ok bool) {
	c := g.cells[pick(p, len(g.cells))]
	k := int(c &^ boundaryBit)
	i, j := k%g.nx, k/g.nx
	x = g.minX + (float64(i)+unit(p))*g.cw
	y = g.minY + (float64(j)+unit(p))*g.ch
	if c&boundaryBit == 0 {
		return x, y, true
	}
	return x, y, ix.contains(x, y)
}

// weight is the total area of the grid's inside and boundary cells.
func (g *cellGrid) weight() float64 { return float64(len(g.cells)) * g.cw * g.ch }

// area estimates the rings' even-odd area: inside cells whole, boundary
// cells by the share of a lattice of test points in them that is inside
// (4 × 4 per cell, fewer when there are many boundary cells, at most about
// 2^18 tests in all; then every stride-th boundary cell stands for stride).
func (g *cellGrid) area(ix *edgeIndex) float64 {
	boundary := 0
	for _, c := range g.cells {
		if c&boundaryBit != 0 {
			boundary++
		}
	}
	side, stride := 4, 1
	switch {
	case boundary*16 <= 1<<18:
	case boundary*4 <= 1<<18:
		side = 2
	default:
		side, stride = 1, max(1, boundary>>18)
	}
	in, seen := 0.0, 0
	for _, c := range g.cells {
		if c&boundaryBit == 0 {
			in += 1
			continue
		}
		if seen++; seen%stride != 0 {
			continue
		}
		k := int(c &^ boundaryBit)
		i, j := k%g.nx, k/g.nx
		hits := 0
		for a := 0; a < side; a++ {
			for b := 0; b < side; b++ {
				x := g.minX + (float64(i)+(float64(a)+0.5)/float64(side))*g.cw
				y := g.minY + (float64(j)+(float64(b)+0.5)/float64(side))*g.ch
				if ix.contains(x, y) {
					hits++
				}
			}
		}
		in += float64(stride*hits) / float64(side*side)
	}
	return in * g.cw * g.ch
}

// pick returns an integer uniform in [0, n) (n > 0) by Lemire's
// multiply-shift with rejection, so that no index is favoured.
func pick(p *rand.PCG, n int) int {
	if n <= 1 {
		return 0
	}
	un := uint64(n)
	for {
		hi, lo := bits.Mul64(p.Uint64(), un)
		if lo >= un || lo >= (-un)%un {
			return int(hi)
		}
	}
}
