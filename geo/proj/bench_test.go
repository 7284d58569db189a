package proj

import (
	"os"
	"path/filepath"
	"testing"
)

// sink keeps the compiler from dropping the benchmarked calls.
var sink float64

func benchProjections(b *testing.B) []crossCase {
	albers, _ := NewAlbers(WGS84, 23, -96, 29.5, 45.5, 0, 0)
	albersSphere, _ := NewAlbers(Sphere(6370997), 23, -96, 29.5, 45.5, 0, 0)
	laea, _ := NewLAEA(GRS80, 52, 10, 4321000, 3210000)
	laeaSphere, _ := NewLAEA(Sphere(6370997), 45, -100, 0, 0)
	polar, _ := NewLAEA(WGS84, 90, -100, 0, 0)
	return []crossCase{
		{"WebMercator", WebMercator{}, grid(-20, 20, 2, 30, 60, 2)},
		{"PlateCarree", PlateCarree{}, grid(-20, 20, 2, 30, 60, 2)},
		{"AlbersWGS84", albers, grid(-110, -80, 2, 30, 50, 2)},
		{"AlbersSphere", albersSphere, grid(-110, -80, 2, 30, 50, 2)},
		{"LAEAOblique", laea, grid(0, 20, 1, 40, 60, 1)},
		{"LAEASphere", laeaSphere, grid(-110, -90, 1, 35, 55, 1)},
		{"LAEAPolar", polar, grid(-180, 180, 10, 50, 89, 2)},
	}
}

func BenchmarkForward(b *testing.B) {
	for _, c := range benchProjections(b) {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			var s float64
			for i := 0; i < b.N; i++ {
				pt := c.pts[i%len(c.pts)]
				x, y := c.p.Forward(pt[0], pt[1])
				s += x + y
			}
			sink = s
		})
	}
}

func BenchmarkInverse(b *testing.B) {
	for _, c := range benchProjections(b) {
		xy := make([][2]float64, len(c.pts))
		for i, pt := range c.pts {
			xy[i][0], xy[i][1] = c.p.Forward(pt[0], pt[1])
		}
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			var s float64
			for i := 0; i < b.N; i++ {
				p := xy[i%len(xy)]
				lon, lat := c.p.Inverse(p[0], p[1])
				s += lon + lat
			}
			sink = s
		})
	}
}

func BenchmarkScaleAt(b *testing.B) {
	p, _ := NewAlbers(WGS84, 23, -96, 29.5, 45.5, 0, 0)
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		h, k := ScaleAt(p, -90, 40)
		sink += h + k
	}
}

func BenchmarkParseWKT(b *testing.B) {
	for _, f := range []string{"epsg5070.esri.prj", "epsg3035.wkt2.wkt"} {
		data, err := readFileForBench(f)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(f, func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for i := 0; i < b.N; i++ {
				if _, err := ParseWKT(data); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func readFileForBench(name string) (string, error) {
	b, err := os.ReadFile(filepath.Join("testdata", name))
	return string(b), err
}
