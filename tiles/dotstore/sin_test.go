package dotstore

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stipple-maps/stipple/geo/proj"
)

// refWorldOfSin is the reference for WorldFromSin: placing as it was before
// WorldFromSin, written out plainly. The sampler turned its draw s = sin φ
// into degrees with an arcsine, and World projected them with
// y = ln(tan φ + sec φ) (OSM wiki, "Slippy map tilenames"). It returns the
// unrounded world position fy (cells from the north edge) and the cell.
func refWorldOfSin(lon, s float64) (x, y uint32, fy float64) {
	lat := math.Asin(math.Max(-1, math.Min(1, s))) / (math.Pi / 180)
	phi := lat * math.Pi / 180
	f := (1 - math.Log(math.Tan(phi)+1/math.Cos(phi))/math.Pi) / 2
	return cell((lon + 180) / 360), cell(f), f * WorldSize
}

// sinCase is a group of (lon, s) test points.
type sinCase struct {
	name string
	pts  [][2]float64
}

// sinTestPoints returns groups of (lon, s) points: uniform on the sphere;
// s within a few ulps, and within 0.01°, of the square world's edges
// sin(±85.0511°); s at and near 0 (both zeros, subnormals, tiny values);
// and s at cell edges and one or two ulps beside them, where a rounding
// difference changes the cell.
func sinTestPoints(r *rand.Rand, uniform int) []sinCase {
	lon := func() float64 { return r.Float64()*360 - 180 }
	var c [4]sinCase
	c[0].name = "uniform on the sphere"
	for i := 0; i < uniform; i++ {
		c[0].pts = append(c[0].pts, [2]float64{lon(), r.Float64()*2 - 1})
	}
	c[1].name = "near ±85.0511°"
	edge := math.Sin(proj.WebMercatorMaxLat * math.Pi / 180)
	for _, e := range []float64{edge, -edge} {
		for k := -2000; k <= 2000; k++ {
			c[1].pts = append(c[1].pts, [2]float64{lon(), e + float64(k)*0x1p-53})
		}
		for i := 0; i < 20000; i++ { // within 0.01° of the edge
			c[1].pts = append(c[1].pts, [2]float64{lon(), e + (r.Float64()*2-1)*1.5e-5})
		}
	}
	c[2].name = "near 0"
	c[2].pts = append(c[2].pts, [2]float64{0, 0}, [2]float64{0, math.Copysign(0, -1)},
		[2]float64{lon(), 5e-324}, [2]float64{lon(), -5e-324})
	for i := 0; i < 20000; i++ {
		c[2].pts = append(c[2].pts, [2]float64{lon(), math.Copysign(math.Pow(10, -r.Float64()*300), r.Float64()-0.5)})
	}
	for i := 0; i < 20000; i++ { // within 1e-6 of the equator
		c[2].pts = append(c[2].pts, [2]float64{lon(), (r.Float64()*2 - 1) * 1e-6})
	}
	// s whose exact northing is a whole number of cells, and its
	// neighbours one and two ulps away.
	c[3].name = "cell edges"
	for i := 0; i < 20000; i++ {
		cy := r.IntN(WorldSize)
		s := math.Tanh(math.Pi * (1 - 2*float64(cy)/WorldSize))
		for _, d := range []float64{-2, -1, 0, 1, 2} {
			c[3].pts = append(c[3].pts, [2]float64{lon(), s + d*ulp(s)})
		}
	}
	return c[:]
}

func ulp(v float64) float64 { return math.Nextafter(math.Abs(v), math.Inf(1)) - math.Abs(v) }

// WorldFromSin (atanh form) against the reference placing path
// (refWorldOfSin: arcsine, then tan, cos and log) and against World itself,
// on 1 000 000 uniform points and the edge cases of sinTestPoints: x is
// always the same; y is the same cell or the next one, and only where the
// two unrounded positions, at most 1e-5 of a cell apart, straddle a cell
// edge. The reference path is the less exact one (TestWorldFromSinAgainstExact):
// south of the equator tan φ + sec φ cancels (at 85°S the terms are
// −11.43 and 11.47, the sum 0.044), which costs it up to 7e-6 of a cell.
func TestWorldFromSinMatchesWorld(t *testing.T) {
	seed := uint64(19)
	t.Logf("seed %d", seed)
	cases := sinTestPoints(rand.New(rand.NewPCG(seed, 3)), 1_000_000)
	if !(refWorldY(-1) > WorldSize-2 && refWorldY(1) < 1) {
		t.Fatalf("reference: s = ±1 not at the square world's edges")
	}
	for _, c := range cases {
		moved, worstCells := 0, 0.0
		var maxStep uint32
		for _, p := range c.pts {
			lon, s := p[0], p[1]
			x, y := WorldFromSin(lon, s)
			rx, ry, rfy := refWorldOfSin(lon, s)
			lat := math.Asin(math.Max(-1, math.Min(1, s))) / (math.Pi / 180)
			if wx, wy := World(lon, lat); wx != rx || wy != ry {
				t.Fatalf("World(%v, asin(%v)) = (%d, %d); the reference gives (%d, %d)", lon, s, wx, wy, rx, ry)
			}
			if x != rx {
				t.Fatalf("WorldFromSin(%v, %v): x = %d, reference %d", lon, s, x, rx)
			}
			fy := (1 - proj.MercatorYSin(s)/math.Pi) / 2 * WorldSize
			if y != cell(fy/WorldSize) {
				t.Fatalf("WorldFromSin(%v, %v): y = %d, not the cell of its own position %v", lon, s, y, fy)
			}
			if rfy >= 0 && rfy <= WorldSize { // inside the square world, not clamped
				worstCells = math.Max(worstCells, math.Abs(fy-rfy))
			}
			if y != ry {
				moved++
				step := max(y, ry) - min(y, ry)
				maxStep = max(maxStep, step)
				if step > 1 || !(math.Abs(fy-rfy) <= 1e-5) {
					t.Errorf("(%v, %v): WorldFromSin y = %d (at %.9f), reference %d (at %.9f)", lon, s, y, fy, ry, rfy)
				}
			}
		}
		if worstCells > 1e-5 {
			t.Errorf("%s: unrounded positions differ by up to %.3g cells; want ≤ 1e-5", c.name, worstCells)
		}
		t.Logf("%s: %d points, %d in the next cell to the reference's (max %d cell); unrounded positions at most %.3g cells apart",
			c.name, len(c.pts), moved, maxStep, worstCells)
		switch {
		case c.name == "cell edges" && moved == 0:
			// These points are there to find the differences: if none
			// showed, the test would not be looking where they happen.
			t.Errorf("cell edges: no point changed cell")
		case c.name != "cell edges" && moved > len(c.pts)/10000:
			t.Errorf("%s: %d of %d points changed cell; rounding should move under 1 in 10 000", c.name, moved, len(c.pts))
		}
	}
}

// refWorldY is the reference path's unrounded y for s.
func refWorldY(s float64) float64 { _, _, fy := refWorldOfSin(0, s); return fy }

// bigPi is π to 50 digits (more than the 120 bits used below).
var bigPi, _ = new(big.Float).SetPrec(200).SetString("3.14159265358979323846264338327950288419716939937510")

// atanhBig is atanh(t) for |t| < 1 by its series t + t³/3 + t⁵/5 + …, in
// prec bits; it is for |t| ≤ 1/2, where each term is a quarter of the last.
func atanhSeries(t *big.Float, prec uint) *big.Float {
	sum := new(big.Float).SetPrec(prec).Set(t)
	t2 := new(big.Float).SetPrec(prec).Mul(t, t)
	pow := new(big.Float).SetPrec(prec).Set(t)
	term := new(big.Float).SetPrec(prec)
	for k := 3; k < 4*int(prec); k += 2 {
		pow.Mul(pow, t2)
		term.Quo(pow, new(big.Float).SetInt64(int64(k)))
		if term.Sign() == 0 || term.MantExp(nil)-sum.MantExp(nil) < -int(prec) {
			break
		}
		sum.Add(sum, term)
	}
	return sum
}

// atanhBig is atanh(s) to about 120 bits: the series for |s| ≤ 1/2, else
// ½ ln((1+s)/(1−s)) with ln r = e ln 2 + 2 atanh((m−1)/(m+1)) for
// r = m·2^e (m in [½, 1)). 1+s and 1−s are exact at this precision.
func atanhBig(s float64) *big.Float {
	const prec = 120
	bs := new(big.Float).SetPrec(prec).SetFloat64(s)
	if math.Abs(s) <= 0.5 {
		return atanhSeries(bs, prec)
	}
	one := new(big.Float).SetPrec(prec).SetInt64(1)
	r := new(big.Float).SetPrec(prec).Quo(new(big.Float).SetPrec(prec).Add(one, bs), new(big.Float).SetPrec(prec).Sub(one, bs))
	m := new(big.Float).SetPrec(prec)
	e := r.MantExp(m)
	tm := new(big.Float).SetPrec(prec).Quo(new(big.Float).SetPrec(prec).Sub(m, one), new(big.Float).SetPrec(prec).Add(m, one))
	lnm := atanhSeries(tm, prec)
	lnm.Mul(lnm, new(big.Float).SetInt64(2))
	ln2 := atanhSeries(new(big.Float).SetPrec(prec).Quo(one, new(big.Float).SetInt64(3)), prec)
	ln2.Mul(ln2, new(big.Float).SetInt64(2))
	ln := new(big.Float).SetPrec(prec).Mul(ln2, new(big.Float).SetInt64(int64(e)))
	ln.Add(ln, lnm)
	return ln.Quo(ln, new(big.Float).SetInt64(2))
}

// exactFy is the world position (cells from the north edge) of northing
// atanh(s), to far better than 1e-9 of a cell.
func exactFy(s float64) float64 {
	const prec = 120
	y := atanhBig(s)
	y.Quo(y, bigPi)                                                // y/π
	f := new(big.Float).SetPrec(prec).Sub(big.NewFloat(1), y)      // 1 − y/π
	f.Mul(f, new(big.Float).SetPrec(prec).SetFloat64(WorldSize/2)) // cells
	v, _ := f.Float64()
	return v
}

func TestAtanhBigKnownValues(t *testing.T) {
	// atanh(s) = ½ ln((1+s)/(1−s)): atanh(1/2) = ½ ln 3 (the series
	// branch), atanh(3/4) = ½ ln 7 (the logarithm branch); ln 3 and ln 7 to
	// 40 digits (Python's decimal module, 50-digit context).
	ln3, _ := new(big.Float).SetPrec(200).SetString("1.0986122886681096913952452369225257046475")
	ln7, _ := new(big.Float).SetPrec(200).SetString("1.9459101490553133051053527434431797296371")
	half := func(v *big.Float) *big.Float { return new(big.Float).SetPrec(200).Quo(v, big.NewFloat(2)) }
	for _, c := range []struct {
		s    float64
		want *big.Float
	}{{0.5, half(ln3)}, {-0.5, new(big.Float).Neg(half(ln3))}, {0.75, half(ln7)}, {-0.75, new(big.Float).Neg(half(ln7))}} {
		got := atanhBig(c.s)
		d := new(big.Float).Sub(got, c.want)
		if df, _ := d.Float64(); math.Abs(df) > 1e-33 {
			t.Errorf("atanhBig(%v) = %s, want %s", c.s, got.Text('g', 36), c.want.Text('g', 36))
		}
	}
}

// How far WorldFromSin's and the reference path's unrounded positions are
// from the exact one (120-bit arithmetic), on every tenth point of
// sinTestPoints' groups. The atanh form from the drawn s is within
// 2.5e-7 of a cell everywhere: two ulps of a float64 world position
// (2^28 to 2^29 cells: an ulp is 2^-24 to 2^-23 cells), which is as close
// as a float64 can hold it. The reference path, which rounds an arcsine
// first and then cancels tan φ + sec φ south of the equator, is off by
// several millionths of a cell there.
func TestWorldFromSinAgainstExact(t *testing.T) {
	seed := uint64(23)
	t.Logf("seed %d", seed)
	var pts [][2]float64
	for _, c := range sinTestPoints(rand.New(rand.NewPCG(seed, 5)), 100_000) {
		for i := 0; i < len(c.pts); i += 10 {
			pts = append(pts, c.pts[i])
		}
	}
	var worstNew, worstRef float64
	sameNew, sameRef, n := 0, 0, 0
	for _, p := range pts {
		s := p[1]
		if math.Abs(s) >= 0.997 { // beyond 85.5°: clamped, not projected
			continue
		}
		exact := exactFy(s)
		fy := (1 - proj.MercatorYSin(s)/math.Pi) / 2 * WorldSize
		_, ry, rfy := refWorldOfSin(p[0], s)
		worstNew = math.Max(worstNew, math.Abs(fy-exact))
		worstRef = math.Max(worstRef, math.Abs(rfy-exact))
		want := cell(exact / WorldSize)
		if _, y := WorldFromSin(p[0], s); y == want {
			sameNew++
		}
		if ry == want {
			sameRef++
		}
		n++
	}
	t.Logf("%d points: WorldFromSin within %.3g cells of exact, in the exact cell for %d; reference path within %.3g, exact cell for %d",
		n, worstNew, sameNew, worstRef, sameRef)
	if !(worstNew <= 2.5e-7) {
		t.Errorf("WorldFromSin's position is up to %.3g cells from exact; want ≤ 2.5e-7", worstNew)
	}
	if sameNew < sameRef {
		t.Errorf("WorldFromSin finds the exact cell for %d points, the reference path for %d; want at least as many", sameNew, sameRef)
	}
}

// BenchmarkProject is the projection step of placing, per dot, on points
// uniform on the sphere within the square world: "World" is the path
// before WorldFromSin (World on the latitude the sampler derived from its
// draw), "WorldFromSin" the path now, and "atanh" WorldFromSin's formula
// written with math.Atanh (Log1p) instead of proj.MercatorYSin's one
// logarithm, for comparison. Compare the three within one run.
func BenchmarkProject(b *testing.B) {
	r := rand.New(rand.NewPCG(7, 11))
	const n = 4096
	edge := math.Sin(proj.WebMercatorMaxLat * math.Pi / 180)
	var lon, lat, sin [n]float64
	for i := range lon {
		lon[i] = r.Float64()*360 - 180
		sin[i] = (r.Float64()*2 - 1) * edge
		lat[i] = math.Asin(sin[i]) * 180 / math.Pi
	}
	atanhWorld := func(lon, s float64) (uint32, uint32) {
		return cell((lon + 180) / 360), cell((1 - math.Atanh(s)/math.Pi) / 2)
	}
	for _, c := range []struct {
		name string
		f    func(lon, v float64) (uint32, uint32)
		in   *[n]float64
	}{{"World", World, &lat}, {"WorldFromSin", WorldFromSin, &sin}, {"atanh", atanhWorld, &sin}} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			var sum uint32
			for i := 0; b.Loop(); i++ {
				x, y := c.f(lon[i%n], c.in[i%n])
				sum += x ^ y
			}
			benchSink = sum
		})
	}
}

var benchSink uint32
