package sample

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/paulmach/orb"
)

// Benchmark shapes (lon/lat degrees).

// compact is a 20-vertex near-circle of radius 0.1° at 45°N.
func compact() orb.Polygon {
	var ring orb.Ring
	for i := 0; i < 20; i++ {
		a := 2 * math.Pi * float64(i) / 20
		ring = append(ring, orb.Point{10 + 0.1*math.Cos(a), 45 + 0.1*math.Sin(a)})
	}
	return orb.Polygon{append(ring, ring[0])}
}

// sliver is a diagonal strip filling 1% of its box.
func sliver() orb.Polygon {
	return orb.Polygon{{{10, 45}, {11, 46}, {11, 46.0101}, {10, 45.0101}, {10, 45}}}
}

// coastline is a star-shaped island of n vertices whose radius is a
// periodic midpoint-displacement fractal (roughness 0.6): every angle has
// one shore point, so the ring is simple, and it fills about 0.6 of its box.
func coastline(rng *rand.Rand, n int) orb.Polygon {
	k := 8
	r := make([]float64, k)
	for i := range r {
		r[i] = rng.Float64()*2 - 1
	}
	amp := 0.6
	for len(r) < n {
		next := make([]float64, 0, 2*len(r))
		for i := range r {
			next = append(next, r[i], (r[i]+r[(i+1)%len(r)])/2+amp*(rng.Float64()*2-1))
		}
		r = next
		amp *= 0.6
	}
	r = r[:n]
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range r {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	var ring orb.Ring
	for i, v := range r {
		a := 2 * math.Pi * float64(i) / float64(n)
		rad := 0.5 + 0.5*(v-lo)/(hi-lo) // 0.5 … 1
		ring = append(ring, orb.Point{-20 + rad*math.Cos(a), 40 + rad*math.Sin(a)})
	}
	return orb.Polygon{append(ring, ring[0])}
}

// withHoles is a 1° square with n holes (16-gons) on a grid.
func withHoles(n int) orb.Polygon {
	poly := orb.Polygon{{{30, 30}, {31, 30}, {31, 31}, {30, 31}, {30, 30}}}
	side := int(math.Ceil(math.Sqrt(float64(n))))
	step := 1 / float64(side)
	for h := 0; h < n; h++ {
		cx := 30 + (float64(h%side)+0.5)*step
		cy := 30 + (float64(h/side)+0.5)*step
		var ring orb.Ring
		for i := 16; i > 0; i-- {
			a := 2 * math.Pi * float64(i) / 16
			ring = append(ring, orb.Point{cx + 0.3*step*math.Cos(a), cy + 0.3*step*math.Sin(a)})
		}
		poly = append(poly, append(ring, ring[0]))
	}
	return poly
}

func benchShapes() []struct {
	name string
	g    orb.MultiPolygon
} {
	rng := rand.New(rand.NewPCG(1, 1))
	return []struct {
		name string
		g    orb.MultiPolygon
	}{
		{"compact", orb.MultiPolygon{compact()}},
		{"sliver1pct", orb.MultiPolygon{sliver()}},
		{"coastline50k", orb.MultiPolygon{coastline(rng, 50000)}},
		{"holes100", orb.MultiPolygon{withHoles(100)}},
	}
}

// BenchmarkDots measures dots per second from a prepared shape.
func BenchmarkDots(b *testing.B) {
	for _, c := range benchShapes() {
		b.Run(c.name, func(b *testing.B) {
			s := NewShape(c.g)
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				p := stream(1, 2, 0, uint64(i))
				if _, ok := s.Point(&p, DefaultMaxAttempts); !ok {
					b.Fatal("no point")
				}
			}
			b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "dots/s")
		})
	}
}

// BenchmarkPrepare measures NewShape (ring checks, index, triangulation or
// grid) per shape.
func BenchmarkPrepare(b *testing.B) {
	for _, c := range benchShapes() {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			var s *Shape
			for i := 0; i < b.N; i++ {
				s = NewShape(c.g)
			}
			b.ReportMetric(0, "ns/dot")
			b.Logf("%s: methods %v", c.name, methodsOf(s))
		})
	}
}

// BenchmarkContains compares the indexed even-odd test with the plain loop
// over every edge (plainEvenOdd, the tests' reference).
func BenchmarkContains(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 1))
	shapes := []struct {
		name string
		p    orb.Polygon
	}{
		{"ring20", compact()},
		{"coastline50k", coastline(rng, 50000)},
		{"holes100", withHoles(100)},
	}
	for _, c := range shapes {
		rings := planeRings(c.p)
		ix := newEdgeIndex(rings)
		x0, y0, x1, y1 := bounds(rings)
		pts := make([][2]float64, 1024)
		for i := range pts {
			pts[i] = [2]float64{x0 + (x1-x0)*rng.Float64(), y0 + (y1-y0)*rng.Float64()}
		}
		b.Run(c.name+"/index", func(b *testing.B) {
			b.ReportAllocs()
			n := 0
			for i := 0; i < b.N; i++ {
				p := pts[i&1023]
				if ix.contains(p[0], p[1]) {
					n++
				}
			}
		})
		b.Run(c.name+"/plain", func(b *testing.B) {
			b.ReportAllocs()
			n := 0
			for i := 0; i < b.N; i++ {
				p := pts[i&1023]
				if plainEvenOdd(rings, p[0], p[1]) {
					n++
				}
			}
		})
	}
}

// fillShape is a 64-vertex parallelogram (16 points per side) filling
// `fill` of its box.
func fillShape(fill float64) orb.Polygon {
	w := fill / (1 - fill) // height of the strip for a unit rise
	corners := [][2]float64{{0, 0}, {1, 1}, {1, 1 + w}, {0, w}}
	var ring orb.Ring
	for k := 0; k < 4; k++ {
		a, c := corners[k], corners[(k+1)%4]
		for i := 0; i < 16; i++ {
			t := float64(i) / 16
			ring = append(ring, orb.Point{40 + 0.1*(a[0]+t*(c[0]-a[0])), 0.1 * (a[1] + t*(c[1]-a[1]))})
		}
	}
	return orb.Polygon{append(ring, ring[0])}
}

// BenchmarkFillThreshold prepares a shape and draws 100 dots from it, by
// box rejection and by triangles, over fill ratios: where box rejection
// stops being faster is the threshold boxFill.
func BenchmarkFillThreshold(b *testing.B) {
	for _, fill := range []float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.8} {
		g := orb.MultiPolygon{fillShape(fill)}
		for _, m := range []method{byBox, byTriangles} {
			b.Run(fmt.Sprintf("fill%.1f/%v", fill, m), func(b *testing.B) {
				b.ReportAllocs()
				for i := 0; i < b.N; i++ {
					s := newShape(g, m)
					for d := 0; d < 100; d++ {
						p := stream(1, uint64(i), 0, uint64(d))
						s.Point(&p, DefaultMaxAttempts)
					}
				}
			})
		}
	}
}

// BenchmarkMethodByEdges draws dots from coastlines of growing vertex
// count (fill about 0.6) by box rejection and by triangles: past some size
// box rejection's containment test costs more than a triangle draw.
func BenchmarkMethodByEdges(b *testing.B) {
	for _, n := range []int{64, 512, 2048, 8192, 50000} {
		g := orb.MultiPolygon{coastline(rand.New(rand.NewPCG(1, uint64(n))), n)}
		for _, m := range []method{byBox, byTriangles} {
			b.Run(fmt.Sprintf("v%d/%v", n, m), func(b *testing.B) {
				s := newShape(g, m)
				b.ReportAllocs()
				b.ResetTimer()
				for i := 0; i < b.N; i++ {
					p := stream(1, 2, 0, uint64(i))
					s.Point(&p, DefaultMaxAttempts)
				}
			})
		}
	}
}
