package sample

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
)

// chi2Crit holds upper critical values of the chi-square distribution at
// significance 0.001, from the NIST/SEMATECH e-Handbook of Statistical
// Methods, section 1.3.6.7.4 ("Critical Values of the Chi-Square
// Distribution"), by degrees of freedom. TestChiSquareTable checks every
// row against an independent computation.
var chi2Crit = map[int]float64{
	1:  10.828,
	3:  16.266,
	9:  27.877,
	15: 37.697,
	24: 51.179,
	99: 148.230,
}

// chi2Upper is the upper tail Q(k/2, x/2) of the chi-square distribution
// with k degrees of freedom, by the power series of the regularized lower
// incomplete gamma function, P(a, x) = x^a e^-x / Γ(a+1) · Σ x^n / ((a+1)…(a+n)).
func chi2Upper(k int, x float64) float64 {
	a, z := float64(k)/2, x/2
	term, sum := 1/a, 1/a
	for n := 1; n < 10000; n++ {
		term *= z / (a + float64(n))
		sum += term
		if term < sum*1e-17 {
			break
		}
	}
	lg, _ := math.Lgamma(a)
	return 1 - math.Exp(-z+a*math.Log(z)-lg)*sum
}

// chi2Quantile inverts chi2Upper by bisection.
func chi2Quantile(k int, alpha float64) float64 {
	lo, hi := 0.0, 1000.0
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		if chi2Upper(k, mid) > alpha {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// TestChiSquareTable verifies the NIST/SEMATECH table rows the tests use
// against a numeric computation of the chi-square distribution (series of
// the incomplete gamma function), to the table's three decimals, and
// against the Wilson–Hilferty approximation, to 2% (df ≥ 3), with the normal
// quantile computed from math.Erfinv.
func TestChiSquareTable(t *testing.T) {
	z := math.Sqrt2 * math.Erfinv(1-2*0.001)
	for df, crit := range chi2Crit {
		q := chi2Quantile(df, 0.001)
		if math.Abs(q-crit) > 0.0005+1e-9 {
			t.Errorf("df %d: table %.3f, computed %.4f", df, crit, q)
		}
		k := float64(df)
		wh := k * math.Pow(1-2/(9*k)+z*math.Sqrt(2/(9*k)), 3)
		// Wilson–Hilferty is rough in the far tail for few degrees of
		// freedom: 1.8% off at df 3, 0.04% at df 99.
		if math.Abs(wh-crit)/crit > 0.02 && df > 1 {
			t.Errorf("df %d: table %.3f, Wilson–Hilferty %.3f", df, crit, wh)
		}
		t.Logf("df %d: table %.3f, series %.4f, Wilson–Hilferty %.3f", df, crit, q, wh)
	}
	// A typo in a row must not pass: 10.828 → 10.882 would be caught.
	if q := chi2Quantile(1, 0.001); math.Abs(q-10.882) <= 0.0005 {
		t.Errorf("quantile check too loose")
	}
}

// chiSquare is Pearson's statistic for observed counts against expected
// shares (which need not sum to one; they are normalised).
func chiSquare(obs []int, share []float64) float64 {
	n, s := 0, 0.0
	for i := range obs {
		n += obs[i]
		s += share[i]
	}
	x := 0.0
	for i := range obs {
		e := float64(n) * share[i] / s
		x += (float64(obs[i]) - e) * (float64(obs[i]) - e) / e
	}
	return x
}

// checkChi fails when the statistic exceeds the 0.001 critical value for
// len(obs)-1 degrees of freedom.
func checkChi(t *testing.T, what string, obs []int, share []float64) {
	t.Helper()
	df := len(obs) - 1
	crit, ok := chi2Crit[df]
	if !ok {
		t.Fatalf("%s: no table row for df %d", what, df)
	}
	x := chiSquare(obs, share)
	t.Logf("%s: χ² = %.2f (df %d, critical %.3f at 0.001, NIST/SEMATECH 1.3.6.7.4)", what, x, df, crit)
	if x > crit {
		t.Errorf("%s: χ² = %.2f > %.3f; counts %v", what, x, crit, obs)
	}
}

var allMethods = []method{autoMethod, byBox, byTriangles, byGrid}

// forEachMethod runs f for the automatic choice and each forced method,
// with a fixed seed per run (logged).
func forEachMethod(t *testing.T, g orb.MultiPolygon, f func(t *testing.T, pts []orb.Point), n int) {
	for i, m := range allMethods {
		t.Run(m.String(), func(t *testing.T) {
			seed := uint64(20260 + i)
			s := newShape(g, m)
			t.Logf("seed %d, methods %v", seed, methodsOf(s))
			f(t, draw(t, g, m, seed, "stat", n))
		})
	}
}

func TestUniformSquare(t *testing.T) {
	// 10° × 10° at the equator; a 10 × 10 grid of cells equal in longitude
	// and in sin(latitude), so of equal area on the sphere.
	top := math.Sin(10 * degToRad)
	g := orb.MultiPolygon{fromPlane([][2]float64{{0, 0}, {10, 0}, {10, top}, {0, top}})}
	forEachMethod(t, g, func(t *testing.T, pts []orb.Point) {
		obs := make([]int, 100)
		for _, p := range pts {
			x, y := toPlane(p)
			i := min(9, int(x))
			j := min(9, int(y/top*10))
			obs[j*10+i]++
		}
		checkChi(t, "square 10×10 cells", obs, ones(100))
	}, 20000)
}

func TestUniformTriangle(t *testing.T) {
	// A triangle cut into 16 equal triangles (4 × 4 by barycentric
	// coordinates).
	a, b, c := [2]float64{0, 0}, [2]float64{8, 0.02}, [2]float64{3, 0.15}
	g := orb.MultiPolygon{fromPlane([][2]float64{a, b, c})}
	det := (b[0]-a[0])*(c[1]-a[1]) - (c[0]-a[0])*(b[1]-a[1])
	forEachMethod(t, g, func(t *testing.T, pts []orb.Point) {
		obs := make([]int, 16)
		for _, p := range pts {
			x, y := toPlane(p)
			u := ((x-a[0])*(c[1]-a[1]) - (c[0]-a[0])*(y-a[1])) / det
			v := ((b[0]-a[0])*(y-a[1]) - (x-a[0])*(b[1]-a[1])) / det
			w := 1 - u - v
			i, j, k := clamp4(u), clamp4(v), clamp4(w)
			// Upward sub-triangles have i+j+k = 3, downward ones 2.
			if i+j+k == 2 {
				obs[10+subDown(i, j)]++
			} else {
				obs[subUp(i, j)]++
			}
		}
		checkChi(t, "triangle 16 sub-triangles", obs, ones(16))
	}, 16000)
}

func clamp4(f float64) int { return max(0, min(3, int(math.Floor(f*4)))) }

// subUp numbers the 10 upward sub-triangles (i+j ≤ 3) 0..9 and subDown the
// 6 downward ones (i+j ≤ 2) 0..5.
func subUp(i, j int) int   { return [4]int{0, 4, 7, 9}[i] + j }
func subDown(i, j int) int { return [3]int{0, 3, 5}[i] + j }

func TestUniformPolygonWithHole(t *testing.T) {
	// 5 × 5 cells with the middle 3 × 3 cut out as a hole: 16 equal cells.
	g := orb.MultiPolygon{fromPlane(
		[][2]float64{{0, 0}, {5, 0}, {5, 0.05}, {0, 0.05}},
		[][2]float64{{1, 0.01}, {1, 0.04}, {4, 0.04}, {4, 0.01}},
	)}
	forEachMethod(t, g, func(t *testing.T, pts []orb.Point) {
		var obs []int
		idx := map[int]int{}
		for j := 0; j < 5; j++ {
			for i := 0; i < 5; i++ {
				if i == 0 || i == 4 || j == 0 || j == 4 {
					idx[j*5+i] = len(obs)
					obs = append(obs, 0)
				}
			}
		}
		for _, p := range pts {
			x, y := toPlane(p)
			c := min(4, int(y/0.01))*5 + min(4, int(x))
			k, ok := idx[c]
			if !ok {
				t.Fatalf("dot %v in the hole", p)
			}
			obs[k]++
		}
		checkChi(t, "ring of 16 cells around a hole", obs, ones(16))
	}, 16000)
}

func TestUniformMultiPolygonPartsByArea(t *testing.T) {
	// Four parts with areas 1 : 2 : 3 : 4 in the plane, one of them across
	// the antimeridian, one far north.
	sq := func(x0, y0, w, h float64) orb.Polygon {
		return fromPlane([][2]float64{{x0, y0}, {x0 + w, y0}, {x0 + w, y0 + h}, {x0, y0 + h}})
	}
	g := orb.MultiPolygon{
		sq(10, 0.1, 1, 0.01),
		sq(20, 0.1, 2, 0.01),
		sq(179, 0.2, 3, 0.01), // 179° to 182° = -178°
		sq(30, 0.9, 1, 0.04),
	}
	// Wrap the third part's longitudes into [-180, 180] as a file would.
	for i := range g[2][0] {
		if g[2][0][i][0] > 180 {
			g[2][0][i][0] -= 360
		}
	}
	forEachMethod(t, g, func(t *testing.T, pts []orb.Point) {
		obs := make([]int, 4)
		for _, p := range pts {
			k := refInsideMulti(g, p)
			if k < 0 {
				t.Fatalf("dot %v outside every part", p)
			}
			obs[k]++
		}
		checkChi(t, "parts 1:2:3:4", obs, []float64{1, 2, 3, 4})
	}, 10000)
}

func TestLatitudeBandsFollowZoneArea(t *testing.T) {
	// A tall polygon from 0° to 60° latitude. Sphere geometry: the zone
	// between latitudes φa < φb has area 2πR²(sin φb − sin φa), so the dot
	// share of each 6° band is proportional to sin φb − sin φa.
	g := orb.MultiPolygon{orb.Polygon{{{0, 0}, {10, 0}, {10, 60}, {0, 60}, {0, 0}}}}
	share := make([]float64, 10)
	for b := range share {
		share[b] = math.Sin(float64(6*(b+1))*degToRad) - math.Sin(float64(6*b)*degToRad)
	}
	forEachMethod(t, g, func(t *testing.T, pts []orb.Point) {
		obs := make([]int, 10)
		for _, p := range pts {
			obs[max(0, min(9, int(p[1]/6)))]++
		}
		checkChi(t, "6° latitude bands", obs, share)
		// The band counts differ by more than noise from a flat share.
		if x := chiSquare(obs, ones(10)); x < 100 {
			t.Errorf("flat latitude share fits too well (χ² %.1f): sampling ignores the sphere", x)
		}
	}, 20000)
}

func TestUniformSliverTriangulated(t *testing.T) {
	// A diagonal parallelogram filling 1% of its box, with vertical ends:
	// 25 slices of equal width along x have equal area.
	w := 0.0101 * 0.1
	g := orb.MultiPolygon{fromPlane([][2]float64{{0, 0}, {10, 0.1}, {10, 0.1 + w}, {0, w}})}
	s := NewShape(g)
	if ms := methodsOf(s); len(ms) != 1 || ms[0] != byTriangles {
		t.Fatalf("sliver sampled by %v, want triangles", ms)
	}
	seed := uint64(31)
	t.Logf("seed %d", seed)
	obs := make([]int, 25)
	for _, p := range draw(t, g, autoMethod, seed, "sliver", 25000) {
		obs[max(0, min(24, int(p[0]/10*25)))]++
	}
	checkChi(t, "sliver, 25 slices", obs, ones(25))
}

func TestUniformLShapeTriangulated(t *testing.T) {
	// An L of ten unit cells: six along the bottom, four up the left side.
	h := 0.01
	g := orb.MultiPolygon{fromPlane([][2]float64{{0, 0}, {6, 0}, {6, h}, {1, h}, {1, 5 * h}, {0, 5 * h}})}
	s := NewShape(g)
	if ms := methodsOf(s); len(ms) != 1 || ms[0] != byTriangles {
		t.Fatalf("L sampled by %v, want triangles", ms)
	}
	seed := uint64(32)
	t.Logf("seed %d", seed)
	obs := make([]int, 10)
	for _, p := range draw(t, g, autoMethod, seed, "L", 20000) {
		x, y := toPlane(p)
		j := min(4, int(y/h))
		if j == 0 {
			obs[min(5, int(x))]++
		} else {
			obs[5+j]++
		}
	}
	checkChi(t, "L, 10 cells", obs, ones(10))
}

func ones(n int) []float64 {
	s := make([]float64, n)
	for i := range s {
		s[i] = 1
	}
	return s
}
