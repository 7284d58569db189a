package measure

import (
	"math"
	"math/rand/v2"
	"testing"
)

// near reports whether got is within tol of want (both NaN counts as near).
func near(got, want, tol float64) bool {
	if math.IsNaN(want) {
		return math.IsNaN(got)
	}
	return math.Abs(got-want) <= tol
}

func mustMeasure(t *testing.T, counts [][]float64) *Extent {
	t.Helper()
	x, err := Measure(counts)
	if err != nil {
		t.Fatal(err)
	}
	return x
}

// Closed-form cases of evenness. Source: Reardon & Firebaugh (2002),
// "Measures of multigroup segregation", Sociological Methodology 32:33–67:
// H is 0 when every area has the extent's composition and 1 when every
// area holds one group only; Duncan & Duncan (1955), ASR 20:210–217: D is 0
// for two groups spread alike and 1 for two groups sharing no area.
func TestEvenAndSeparated(t *testing.T) {
	for _, tc := range []struct {
		name   string
		counts [][]float64
		h, d   float64
	}{
		{"even, 2 groups", [][]float64{{10, 30}, {5, 15}, {100, 300}}, 0, 0},
		{"even, 4 groups", [][]float64{{1, 2, 3, 4}, {10, 20, 30, 40}, {0.5, 1, 1.5, 2}}, 0, 0},
		{"separated, 2 groups", [][]float64{{50, 0}, {0, 20}, {7, 0}}, 1, 1},
		{"separated, 3 groups", [][]float64{{0, 0, 9}, {4, 0, 0}, {0, 11, 0}, {0, 0, 1}}, 1, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x := mustMeasure(t, tc.counts)
			if !near(x.H, tc.h, 1e-12) {
				t.Errorf("H = %v, want %v", x.H, tc.h)
			}
			if !near(x.M, tc.h*x.Entropy, 1e-12) {
				t.Errorf("M = %v, want %v (H·E)", x.M, tc.h*x.Entropy)
			}
			k := len(tc.counts[0])
			for a := range k {
				for b := range k {
					want := tc.d
					if a == b {
						want = 0
					}
					if !near(x.D[a][b], want, 1e-12) {
						t.Errorf("D[%d][%d] = %v, want %v", a, b, x.D[a][b], want)
					}
				}
			}
		})
	}
}

// A worked example computed by hand from the cited formulas.
//
// Table (areas × groups A, B, C):
//
//	area 1: 30 10  0   t_1 = 40
//	area 2: 10 30  0   t_2 = 40
//	area 3:  0  0 40   t_3 = 40
//	area 4: 20 20 40   t_4 = 80
//	totals: 60 60 80   T = 200;  π = (0.3, 0.3, 0.4)
//
// Entropy (Theil 1972; Reardon & Firebaugh 2002 eq. for E):
//
//	E   = 2·0.3·ln(1/0.3) + 0.4·ln(1/0.4) = 0.6·1.203973 + 0.4·0.916291 = 1.088900
//	E_1 = 0.75·ln(4/3) + 0.25·ln 4 = 0.75·0.287682 + 0.25·1.386294 = 0.562335
//	E_2 = E_1 = 0.562335 (the same shares, A and B swapped)
//	E_3 = 0 (one group)
//	E_4 = 0.25·ln 4 + 0.25·ln 4 + 0.5·ln 2 = 0.693147 + 0.346574 = 1.039721
//
// Theil's H = Σ_j t_j (E − E_j) / (T·E) (Theil & Finizza 1971; Reardon &
// Firebaugh 2002):
//
//	Σ_j t_j (E − E_j) = 40·0.526565 + 40·0.526565 + 40·1.088900 + 80·0.049179
//	                  = 21.0626 + 21.0626 + 43.5560 + 3.9343 = 89.6155
//	H = 89.6155 / (200·1.088900) = 89.6155 / 217.7800 = 0.411496
//
// M = E − Σ_j (t_j/T) E_j (Reardon & Firebaugh 2002, M as entropy minus the
// areas' mean entropy, the same as their Σ p ln(p/(p p)) form):
//
//	Σ_j (t_j/T) E_j = 0.2·0.562335 + 0.2·0.562335 + 0.2·0 + 0.4·1.039721 = 0.640822
//	M = 1.088900 − 0.640822 = 0.448078 (= H·E = 0.411496·1.088900)
//
// Dissimilarity D = ½ Σ_j |a_j/A − b_j/B| (Duncan & Duncan 1955):
//
//	A shares by area: 1/2, 1/6, 0, 1/3;  B: 1/6, 1/2, 0, 1/3;  C: 0, 0, 1/2, 1/2
//	D(A,B) = ½ (1/3 + 1/3 + 0 + 0)     = 1/3
//	D(A,C) = ½ (1/2 + 1/6 + 1/2 + 1/6) = 2/3;  D(B,C) = 2/3 likewise
//
// Exposure xPy = Σ_j (x_j/X)(y_j/t_j) (Massey & Denton 1988):
//
//	APB = 1/2·10/40 + 1/6·30/40 + 0 + 1/3·20/80 = 1/8 + 1/8 + 1/12 = 1/3
//	APA = 1/2·30/40 + 1/6·10/40 + 0 + 1/3·20/80 = 3/8 + 1/24 + 1/12 = 1/2 (isolation)
//	APC = 1/3·40/80 = 1/6;  APA + APB + APC = 1
//	CPA = 1/2·0 + 1/2·20/80 = 1/8;  CPC = 1/2·40/40 + 1/2·40/80 = 3/4 (isolation)
func TestWorkedExample(t *testing.T) {
	counts := [][]float64{{30, 10, 0}, {10, 30, 0}, {0, 0, 40}, {20, 20, 40}}
	x := mustMeasure(t, counts)
	const tol = 5e-7 // the hand values are rounded to 6 decimals
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"E", x.Entropy, 1.088900},
		{"H", x.H, 0.411496},
		{"M", x.M, 0.448078},
		{"D(A,B)", x.D[0][1], 1.0 / 3},
		{"D(A,C)", x.D[0][2], 2.0 / 3},
		{"D(B,C)", x.D[1][2], 2.0 / 3},
		{"D(C,A)", x.D[2][0], 2.0 / 3},
		{"APB", x.Exposure[0][1], 1.0 / 3},
		{"APA", x.Exposure[0][0], 1.0 / 2},
		{"APC", x.Exposure[0][2], 1.0 / 6},
		{"CPA", x.Exposure[2][0], 1.0 / 8},
		{"CPC", x.Exposure[2][2], 3.0 / 4},
	} {
		if !near(c.got, c.want, tol) {
			t.Errorf("%s = %.7f, want %.6f", c.name, c.got, c.want)
		}
	}
	areas, err := Areas(counts)
	if err != nil {
		t.Fatal(err)
	}
	for j, want := range []float64{0.562335, 0.562335, 0, 1.039721} {
		if !near(areas[j].Entropy, want, tol) {
			t.Errorf("E_%d = %.7f, want %.6f", j+1, areas[j].Entropy, want)
		}
	}
	if a := areas[3]; a.Largest != 2 || a.LargestShare != 0.5 || a.People != 80 {
		t.Errorf("area 4: largest %d with share %v of %v people, want group 2 with 0.5 of 80", a.Largest, a.LargestShare, a.People)
	}
}

// Check values from ../shared/CHECKS.md, "Diversity measures": two areas
// (90, 10) and (10, 90) → E = ln 2 = 0.693147, E_i = 0.325083, H = 0.531004
// (Reardon & Firebaugh 2002 formulas, computed); and "Segregation and
// diversity measures": area 1 = (60, 30, 10), area 2 = (20, 30, 50) → E =
// 1.088900, E_1 = 0.897946, E_2 = 1.029653, H = 0.114887, M = 0.125101,
// D(1,2) = 0.25, 1P2 = 0.30, 1P1 = 0.50 (computed by hand there).
func TestChecksValues(t *testing.T) {
	const tol = 5e-7
	x := mustMeasure(t, [][]float64{{90, 10}, {10, 90}})
	areas, _ := Areas([][]float64{{90, 10}, {10, 90}})
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"E", x.Entropy, 0.693147},
		{"E_1", areas[0].Entropy, 0.325083},
		{"E_2", areas[1].Entropy, 0.325083},
		{"H", x.H, 0.531004},
	} {
		if !near(c.got, c.want, tol) {
			t.Errorf("two areas: %s = %.7f, want %.6f", c.name, c.got, c.want)
		}
	}
	y := mustMeasure(t, [][]float64{{60, 30, 10}, {20, 30, 50}})
	areas, _ = Areas([][]float64{{60, 30, 10}, {20, 30, 50}})
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"E", y.Entropy, 1.088900},
		{"E_1", areas[0].Entropy, 0.897946},
		{"E_2", areas[1].Entropy, 1.029653},
		{"H", y.H, 0.114887},
		{"M", y.M, 0.125101},
		{"D(1,2)", y.D[0][1], 0.25},
		{"1P2", y.Exposure[0][1], 0.30},
		{"1P1", y.Exposure[0][0], 0.50},
	} {
		if !near(c.got, c.want, tol) {
			t.Errorf("three groups: %s = %.7f, want %.6f", c.name, c.got, c.want)
		}
	}
}

// randomTable makes a table of areas × k groups with some empty cells and
// some empty areas, as census tables have.
func randomTable(rng *rand.Rand, areas, k int) [][]float64 {
	t := make([][]float64, areas)
	for j := range t {
		t[j] = make([]float64, k)
		if rng.IntN(10) == 0 {
			continue // an area without people
		}
		for m := range t[j] {
			if rng.IntN(4) > 0 {
				t[j][m] = math.Floor(rng.ExpFloat64() * 500)
			}
		}
	}
	t[0][0]++ // at least one person
	return t
}

// reference computes H, M, D and exposure on another code path than the
// package: M from the mutual-information form Σ_jm p_jm ln(p_jm/(p_j p_m))
// over the joint distribution p = t/T (Reardon & Firebaugh 2002), H = M/E
// (their identity), D from Duncan & Duncan's ½ Σ |a_j/A − b_j/B| summed per
// pair, exposure from Massey & Denton's Σ (x_j/X)(y_j/t_j) summed per pair.
func reference(counts [][]float64) (e, h, m float64, d, p [][]float64) {
	k := len(counts[0])
	var total float64
	pj := make([]float64, len(counts))
	pm := make([]float64, k)
	for j, row := range counts {
		for g, v := range row {
			total += v
			pj[j] += v
			pm[g] += v
		}
	}
	for g := range pm {
		if pm[g] > 0 {
			e += pm[g] / total * math.Log(total/pm[g])
		}
	}
	for j, row := range counts {
		for g, v := range row {
			if v > 0 {
				pjm := v / total
				m += pjm * math.Log(pjm/((pj[j]/total)*(pm[g]/total)))
			}
		}
	}
	h = m / e
	d = make([][]float64, k)
	p = make([][]float64, k)
	for a := range k {
		d[a] = make([]float64, k)
		p[a] = make([]float64, k)
		for b := range k {
			for j, row := range counts {
				d[a][b] += math.Abs(row[a]/pm[a]-row[b]/pm[b]) / 2
				if pj[j] > 0 {
					p[a][b] += row[a] / pm[a] * row[b] / pj[j]
				}
			}
		}
	}
	return e, h, m, d, p
}

// The package agrees with an independent implementation on 1,000 random
// tables (Reardon & Firebaugh 2002 give both forms of M; style of Go's
// image/draw tests: a fast path against an obviously correct one).
func TestAgainstReference(t *testing.T) {
	seed := uint64(16)
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 1))
	for i := range 1000 {
		k := 2 + rng.IntN(5)
		counts := randomTable(rng, 1+rng.IntN(30), k)
		// Every group present, so every measure is defined.
		for g := range k {
			counts[rng.IntN(len(counts))][g] += 1 + float64(rng.IntN(50))
		}
		x := mustMeasure(t, counts)
		e, h, m, d, p := reference(counts)
		if !near(x.Entropy, e, 1e-12) || !near(x.H, h, 1e-12) || !near(x.M, m, 1e-12) {
			t.Fatalf("table %d: E, H, M = %v, %v, %v; reference %v, %v, %v\n%v", i, x.Entropy, x.H, x.M, e, h, m, counts)
		}
		for a := range k {
			for b := range k {
				if !near(x.D[a][b], d[a][b], 1e-12) || !near(x.Exposure[a][b], p[a][b], 1e-12) {
					t.Fatalf("table %d: D[%d][%d], P = %v, %v; reference %v, %v", i, a, b, x.D[a][b], x.Exposure[a][b], d[a][b], p[a][b])
				}
			}
			// Exposure of a group to all groups sums to 1 (Massey & Denton
			// 1988: the exposure indices of x are its shares of its
			// neighbourhood, from memory).
			var sum float64
			for b := range k {
				sum += x.Exposure[a][b]
			}
			if !near(sum, 1, 1e-12) {
				t.Fatalf("table %d: Σ_y %dPy = %v, want 1", i, a, sum)
			}
		}
	}
}

// M = H·E exactly (Reardon & Firebaugh 2002): H is computed from Theil's
// definition and M from the mutual-information definition, two code paths.
func TestMIsHTimesE(t *testing.T) {
	rng := rand.New(rand.NewPCG(2002, 33))
	for i := range 500 {
		counts := randomTable(rng, 1+rng.IntN(40), 2+rng.IntN(6))
		x := mustMeasure(t, counts)
		if x.Entropy == 0 {
			continue
		}
		if !near(x.M, x.H*x.Entropy, 1e-12) {
			t.Fatalf("table %d: M = %.17g, H·E = %.17g", i, x.M, x.H*x.Entropy)
		}
	}
}

// Between + within = total, to 1e-12 on random data (Reardon & Firebaugh
// 2002 for M; for H divided through by E_total, as the package doc derives
// from M = H·E).
func TestDecomposition(t *testing.T) {
	rng := rand.New(rand.NewPCG(1971, 2))
	for i := range 300 {
		k := 2 + rng.IntN(5)
		extents := make([][][]float64, 1+rng.IntN(8))
		for e := range extents {
			extents[e] = randomTable(rng, 1+rng.IntN(20), k)
		}
		if i%10 == 0 { // an extent holding one group only
			for _, row := range extents[0] {
				clear(row[1:])
			}
		}
		d, err := Decompose(extents)
		if err != nil {
			t.Fatal(err)
		}
		if got := d.Between.M + d.MWithin; !near(got, d.Total.M, 1e-12) {
			t.Fatalf("set %d: M between + within = %.17g, total %.17g", i, got, d.Total.M)
		}
		if got := d.Between.H + d.HWithin; !near(got, d.Total.H, 1e-12) {
			t.Fatalf("set %d: H between + within = %.17g, total %.17g", i, got, d.Total.H)
		}
		// The stated form: H_total·E_total = H_between·E_total + Σ (T_e/T) E_e H_e.
		rhs := d.Between.H * d.Total.Entropy
		for e, x := range d.Within {
			if x.People > 0 && x.Entropy > 0 {
				rhs += d.Weights[e] * x.Entropy * x.H
			}
		}
		if !near(d.Total.H*d.Total.Entropy, rhs, 1e-12) {
			t.Fatalf("set %d: H·E = %.17g, between + within = %.17g", i, d.Total.H*d.Total.Entropy, rhs)
		}
		if !near(d.Between.Entropy, d.Total.Entropy, 1e-12) {
			t.Fatalf("set %d: E of the extents-as-areas %v differs from the total's %v", i, d.Between.Entropy, d.Total.Entropy)
		}
	}
}

// A hand-checkable decomposition: two extents, each internally even, with
// different compositions: all segregation is between extents.
func TestDecompositionBetweenOnly(t *testing.T) {
	d, err := Decompose([][][]float64{
		{{90, 10}, {9, 1}},
		{{10, 90}, {1, 9}},
	})
	if err != nil {
		t.Fatal(err)
	}
	// The extents as areas are (99, 11) and (11, 99): each extent is even
	// inside (H_e = 0), so H_total = H_between and M_within = 0.
	if d.MWithin != 0 || d.HWithin != 0 {
		t.Errorf("within: M %v, H %v; want 0", d.MWithin, d.HWithin)
	}
	if !near(d.Total.H, d.Between.H, 1e-15) || d.Total.H <= 0 {
		t.Errorf("H total %v, between %v", d.Total.H, d.Between.H)
	}
	// (99, 11) and (11, 99) have the shares of (90, 10) and (10, 90):
	// H = 0.531004 (CHECKS.md, "Diversity measures").
	if !near(d.Between.H, 0.531004, 5e-7) {
		t.Errorf("H between = %.7f, want 0.531004", d.Between.H)
	}
}

// Entropy diversity: k equal shares give ln k, normalised 1; one group
// gives 0 (Shannon entropy; Theil 1972; Reardon & Firebaugh 2002).
func TestAreaEntropy(t *testing.T) {
	for k := 1; k <= 8; k++ {
		row := make([]float64, k)
		for m := range row {
			row[m] = 12.5
		}
		a, err := Areas([][]float64{row})
		if err != nil {
			t.Fatal(err)
		}
		if !near(a[0].Entropy, math.Log(float64(k)), 1e-12) {
			t.Errorf("k = %d equal shares: E = %v, want ln k = %v", k, a[0].Entropy, math.Log(float64(k)))
		}
		want := 1.0
		if k == 1 {
			want = 0 // one group: no mixing (ln 1 = 0, documented)
		}
		if !near(a[0].Normalized, want, 1e-12) {
			t.Errorf("k = %d equal shares: normalised %v, want %v", k, a[0].Normalized, want)
		}
		if a[0].Largest != 0 || !near(a[0].LargestShare, 1/float64(k), 1e-15) {
			t.Errorf("k = %d: largest %d share %v, want 0 (first on a tie) with 1/k", k, a[0].Largest, a[0].LargestShare)
		}
	}
	a, _ := Areas([][]float64{{0, 0, 7, 0}, {0, 0, 0, 0}})
	if a[0].Entropy != 0 || a[0].Normalized != 0 || a[0].Largest != 2 || a[0].LargestShare != 1 {
		t.Errorf("one group: %+v, want entropy 0, largest group 2 with share 1", a[0])
	}
	if a[1].People != 0 || a[1].Largest != -1 || a[1].Entropy != 0 {
		t.Errorf("empty area: %+v, want no people, no largest group", a[1])
	}
}

// Undefined measures are NaN, never a division by zero passed off as a
// value.
func TestUndefined(t *testing.T) {
	x := mustMeasure(t, [][]float64{{5, 0, 0}, {3, 0, 0}})
	if !math.IsNaN(x.H) || x.M != 0 {
		t.Errorf("one group: H %v (want NaN), M %v (want 0)", x.H, x.M)
	}
	if !math.IsNaN(x.D[0][1]) || !math.IsNaN(x.Exposure[1][0]) || x.Exposure[0][1] != 0 || x.Exposure[0][0] != 1 {
		t.Errorf("empty groups: D %v, P %v", x.D, x.Exposure)
	}
	y := mustMeasure(t, [][]float64{{0, 0}})
	if !math.IsNaN(y.H) || !math.IsNaN(y.M) || !math.IsNaN(y.D[0][1]) {
		t.Errorf("no people: %+v", y)
	}
}

func TestBadTables(t *testing.T) {
	for _, tc := range []struct {
		counts [][]float64
		want   string
	}{
		{nil, "measure: counts: no areas"},
		{[][]float64{{}}, "measure: counts: area 0: no groups"},
		{[][]float64{{1, 2}, {3}}, "measure: counts: area 1: has 1 groups, area 0 has 2"},
		{[][]float64{{1, 2}, {3, -4}}, "measure: counts: area 1, group 1: -4 is not a count (want a finite number ≥ 0)"},
		{[][]float64{{math.NaN(), 2}}, "measure: counts: area 0, group 0: NaN is not a count (want a finite number ≥ 0)"},
		{[][]float64{{1, math.Inf(1)}}, "measure: counts: area 0, group 1: +Inf is not a count (want a finite number ≥ 0)"},
	} {
		_, err := Measure(tc.counts)
		if err == nil || err.Error() != tc.want {
			t.Errorf("Measure(%v): %v, want %q", tc.counts, err, tc.want)
		}
	}
	_, err := Decompose([][][]float64{{{1, 2}}, {{1, 2, 3}}})
	if want := "measure: counts of extent 1: has 3 groups, extent 0 has 2"; err == nil || err.Error() != want {
		t.Errorf("Decompose: %v, want %q", err, want)
	}
}
