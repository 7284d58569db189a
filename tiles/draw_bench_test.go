package tiles

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/dotstore"
)

// denseTileSet is a dense benchmark tile set: 900 000 dots spread evenly
// over a 3 × 3 block of zoom-12 tiles (about 1.5 dots per pixel at zoom 12
// and 6 at zoom 11), five categories mixed everywhere in shares of 40, 25, 15, 12 and
// 8 %, drawn with the national example's look: 1.6 px at zoom 12, 1.13 px
// at zoom 11, opacity 0.7.
func denseTileSet() (*dotstore.Store, func(int) render.Dot) {
	rng := rand.New(rand.NewPCG(12, 12))
	shares := []float64{0.40, 0.25, 0.15, 0.12, 0.08}
	keys := make([]uint64, 900_000)
	for i := range keys {
		wx, wy := worldAt(12, 1200*256+rng.Float64()*3*256, 1600*256+rng.Float64()*3*256)
		u, cat := rng.Float64(), 0
		for cat < len(shares)-1 && u >= shares[cat] {
			u -= shares[cat]
			cat++
		}
		keys[i] = dotstore.Key(wx, wy, cat)
	}
	look := func(z int) render.Dot {
		return render.Dot{Diameter: 1.6 * math.Pow(math.Sqrt2, float64(z-12)), Opacity: 0.7}
	}
	return sorted(keys), look
}

// BenchmarkDenseTiles draws and composites (no PNG encoding) every tile of
// denseTileSet at zooms 11 and 12 with the tile renderer: each tile's own
// dots and its neighbours' edge strips. ns/dot is per dot per zoom;
// cpu-ns/dot the same in the process's CPU time.
func BenchmarkDenseTiles(b *testing.B) {
	src, look := denseTileSet()
	const minZ, maxZ = 11, 12
	type tl struct{ z, x, y int }
	var set []tl
	for z := minZ; z <= maxZ; z++ {
		for _, t := range Candidates(src, z) {
			set = append(set, tl{z, t[0], t[1]})
		}
	}
	w := &writer{opt: Options{Colors: benchColors}, src: src}
	p := &pass{size: 256, shift: 8, look: look}
	r := newTileRenderer(w, len(benchColors))
	b.ReportAllocs()
	inked := 0
	cpu := cpuNanos()
	for b.Loop() {
		inked = 0
		for _, t := range set {
			if r.render(job{p: p, z: t.z, x: t.x, y: t.y}) != nil {
				inked++
			}
		}
	}
	b.ReportMetric(float64(inked), "tiles")
	if cpu >= 0 {
		b.ReportMetric(float64(cpuNanos()-cpu)/float64(b.N)/float64(src.Len()*(maxZ-minZ+1)), "cpu-ns/dot")
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(src.Len()*(maxZ-minZ+1)), "ns/dot")
}
