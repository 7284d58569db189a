package tiles

import (
	"bytes"
	"image/color"
	"image/png"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/fogleman/gg"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/dotstore"
)

var benchColors = []color.NRGBA{{230, 159, 0, 255}, {86, 180, 233, 255}, {0, 158, 115, 255}, {240, 228, 66, 255}, {204, 121, 167, 255}}

// benchTileSet is a benchmark tile set: 200 000 dots over about 6 × 6 zoom-10
// tiles (a city and its surroundings, densest in the middle), drawn at
// zooms 10–12 with the default look (3 px at zoom 12, area halving per zoom).
func benchTileSet() (*dotstore.Store, func(int) render.Dot) {
	rng := rand.New(rand.NewPCG(42, 42))
	keys := make([]uint64, 200_000)
	for i := range keys {
		r := 600 * math.Sqrt(-2*math.Log(1-rng.Float64())) / 2 // pixels at zoom 10
		a := rng.Float64() * 2 * math.Pi
		wx, wy := worldAt(10, 300*256+768+r*math.Cos(a), 400*256+768+r*math.Sin(a))
		keys[i] = dotstore.Key(wx, wy, rng.IntN(5))
	}
	look := func(z int) render.Dot {
		return render.Dot{Diameter: 3 * math.Pow(math.Sqrt2, float64(z-12)), Opacity: 0.9}
	}
	return sorted(keys), look
}

// BenchmarkTileSet renders and encodes the same tile set (zooms 10–12, in
// memory, no files) with stipple's renderer and PNG encoder, and with gg
// drawing each dot (DrawCircle + Fill, the dot's colour at the dot's
// opacity) and image/png encoding, as gg's SavePNG does. Both draw each
// tile's own dots and those of its neighbours near the edges.
func BenchmarkTileSet(b *testing.B) {
	src, look := benchTileSet()
	const minZ, maxZ = 10, 12
	type tl struct{ z, x, y int }
	var set []tl
	for z := minZ; z <= maxZ; z++ {
		for _, t := range Candidates(src, z) {
			set = append(set, tl{z, t[0], t[1]})
		}
	}
	b.Run("stipple", func(b *testing.B) {
		w := &writer{opt: Options{Colors: benchColors}, src: src}
		p := &pass{size: 256, shift: 8, look: look}
		r := newTileRenderer(w, len(benchColors))
		var buf bytes.Buffer
		b.ReportAllocs()
		n, bytesOut, rgba := 0, 0, 0
		for i := 0; i < b.N; i++ {
			n, bytesOut, rgba = 0, 0, 0
			for _, t := range set {
				img := r.render(job{p: p, z: t.z, x: t.x, y: t.y})
				if img == nil {
					continue
				}
				buf.Reset()
				if err := r.enc.EncodeTile(&buf, img); err != nil {
					b.Fatal(err)
				}
				n++
				bytesOut += buf.Len()
				if buf.Bytes()[25] == 6 { // IHDR colour type: truecolour + alpha
					rgba++
				}
			}
		}
		b.ReportMetric(float64(n), "tiles")
		b.ReportMetric(float64(bytesOut)/float64(n), "B/tile")
		b.ReportMetric(float64(rgba), "rgba-tiles")
		b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(src.Len()*(maxZ-minZ+1)), "ns/dot")
	})
	b.Run("gg", func(b *testing.B) {
		b.ReportAllocs()
		var buf bytes.Buffer
		n := 0
		for i := 0; i < b.N; i++ {
			n = 0
			for _, t := range set {
				d := look(t.z)
				r := d.Diameter / 2
				scale := 256 * math.Exp2(float64(t.z)) / dotstore.WorldSize
				dc := gg.NewContext(256, 256)
				inked := false
				for dy := -1; dy <= 1; dy++ {
					for dx := -1; dx <= 1; dx++ {
						for _, k := range srcTile(src, t.z, t.x+dx, t.y+dy) {
							wx, wy, cat := dotstore.Split(k)
							x := (float64(wx)+0.5)*scale - float64(t.x*256)
							y := (float64(wy)+0.5)*scale - float64(t.y*256)
							if x < -r-1 || y < -r-1 || x > 256+r+1 || y > 256+r+1 {
								continue
							}
							c := benchColors[cat]
							dc.SetRGBA255(int(c.R), int(c.G), int(c.B), int(d.Opacity*255))
							dc.DrawCircle(x, y, r)
							dc.Fill()
							inked = true
						}
					}
				}
				if !inked {
					continue
				}
				buf.Reset()
				if err := png.Encode(&buf, dc.Image()); err != nil {
					b.Fatal(err)
				}
				n++
			}
		}
		b.ReportMetric(float64(n), "tiles")
		b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(src.Len()*(maxZ-minZ+1)), "ns/dot")
	})
}
