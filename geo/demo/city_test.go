package demo

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
)

func TestCityIsDeterministicAndWellFormed(t *testing.T) {
	a, b := City(1), City(1)
	if len(a.Features) < 400 || len(a.Features) != len(b.Features) {
		t.Fatalf("City(1) has %d and %d features; want the same, at least 400", len(a.Features), len(b.Features))
	}
	var people int64
	holes := 0
	for i, f := range a.Features {
		g := b.Features[i]
		if f.ID != g.ID || !f.Geometry.Equal(g.Geometry) {
			t.Fatalf("feature %d differs between two City(1) calls", i)
		}
		for _, p := range f.Geometry {
			holes += len(p) - 1
			for _, r := range p {
				if len(r) < 4 || r[0] != r[len(r)-1] {
					t.Fatalf("feature %s has an open or short ring", f.ID)
				}
			}
			if planar.Area(p) <= 0 {
				t.Fatalf("feature %s has no area", f.ID)
			}
		}
		if !Bounds.Contains(f.Geometry.Bound().Min) || !Bounds.Contains(f.Geometry.Bound().Max) {
			t.Fatalf("feature %s lies outside the city's bounds", f.ID)
		}
		for _, grp := range Groups {
			people += f.Props[grp.Field].(int64)
		}
	}
	if holes != 1 {
		t.Errorf("%d holes; want the one lake", holes)
	}
	// About 640,000 invented people (doc.go).
	if people < 550_000 || people > 750_000 {
		t.Errorf("%d people; want about 640,000", people)
	}
	if c := City(2); c.Features[10].Geometry.Equal(a.Features[10].Geometry) {
		t.Errorf("seed 2 gives the same jitter as seed 1")
	}
}

func TestCityAreasDoNotOverlap(t *testing.T) {
	l := City(1)
	// Shared vertices mean no overlap: the areas' sum equals the union's,
	// checked by sampling points on a grid and counting covering areas.
	b := Bounds
	hits := 0
	for y := b.Min[1] + 0.0005; y < b.Max[1]; y += 0.003 {
		for x := b.Min[0] + 0.0005; x < b.Max[0]; x += 0.003 {
			n := 0
			for _, f := range l.Features {
				if fb := f.Geometry.Bound(); !fb.Contains(orb.Point{x, y}) {
					continue
				}
				if planar.MultiPolygonContains(f.Geometry, orb.Point{x, y}) {
					n++
				}
			}
			if n > 1 {
				t.Fatalf("point (%v, %v) lies in %d areas", x, y, n)
			}
			hits += n
		}
	}
	if hits == 0 {
		t.Fatal("no grid point fell in any area")
	}
}

func TestCityIsInTheOpenOcean(t *testing.T) {
	// The nearest land to 34°S 128°W is far: the demo must not sit on a real
	// place. From memory: Pitcairn (25°S 130°W) and Easter Island (27°S
	// 109°W) are the closest; both are more than 900 km away.
	c := Bounds.Center()
	for _, p := range []orb.Point{{-130.1, -25.07}, {-109.35, -27.11}} {
		if d := haversineKM(c, p); d < 900 {
			t.Errorf("demo centre is %.0f km from %v", d, p)
		}
	}
}

func haversineKM(a, b orb.Point) float64 {
	const r = 6371.0
	la1, la2 := a[1]*math.Pi/180, b[1]*math.Pi/180
	dl := (b[0] - a[0]) * math.Pi / 180
	h := math.Pow(math.Sin((la2-la1)/2), 2) + math.Cos(la1)*math.Cos(la2)*math.Pow(math.Sin(dl/2), 2)
	return 2 * r * math.Asin(math.Sqrt(h))
}
