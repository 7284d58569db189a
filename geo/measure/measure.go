package measure

import (
	"fmt"
	"math"
)

// Error is a bad value in a counts or margins table; it names the area (row)
// and group (column).
type Error struct {
	Table   string // "counts" or "margins"
	Area    int    // row, -1 when about the table's shape
	Group   int    // column, -1 when about a whole row
	Message string
}

func (e *Error) Error() string {
	s := "measure: " + e.Table
	if e.Area >= 0 {
		s += fmt.Sprintf(": area %d", e.Area)
	}
	if e.Group >= 0 {
		s += fmt.Sprintf(", group %d", e.Group)
	}
	return s + ": " + e.Message
}

// check returns the number of groups of a table whose cells must all be
// finite and not negative, and whose rows must all have the same length.
func check(name string, t [][]float64) (int, error) {
	if len(t) == 0 {
		return 0, &Error{Table: name, Area: -1, Group: -1, Message: "no areas"}
	}
	k := len(t[0])
	if k == 0 {
		return 0, &Error{Table: name, Area: 0, Group: -1, Message: "no groups"}
	}
	for j, row := range t {
		if len(row) != k {
			return 0, &Error{Table: name, Area: j, Group: -1,
				Message: fmt.Sprintf("has %d groups, area 0 has %d", len(row), k)}
		}
		for m, v := range row {
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				return 0, &Error{Table: name, Area: j, Group: m,
					Message: fmt.Sprintf("%v is not a count (want a finite number ≥ 0)", v)}
			}
		}
	}
	return k, nil
}

// Entropy returns Σ π ln(1/π) over the shares π > 0 (Shannon entropy in
// nats; Theil 1972). Shares are not checked to sum to 1.
func Entropy(shares []float64) float64 {
	var e float64
	for _, p := range shares {
		if p > 0 {
			e -= p * math.Log(p)
		}
	}
	return e
}

// Area holds one area's composition and diversity.
type Area struct {
	// People is t_j, the area's people in all groups.
	People float64
	// Shares[m] is π_jm, group m's share of the area's people (all 0 when
	// the area has no people).
	Shares []float64
	// Entropy is E_j = Σ_m π_jm ln(1/π_jm): 0 for one group, ln k for k
	// groups in equal shares.
	Entropy float64
	// Normalized is Entropy / ln k, in [0, 1]; 0 when k = 1.
	Normalized float64
	// Largest is the group with the most people (the lowest index on a
	// tie), -1 when the area has no people; LargestShare is its share.
	Largest      int
	LargestShare float64
}

// Areas returns each row's composition and entropy diversity.
func Areas(counts [][]float64) ([]Area, error) {
	k, err := check("counts", counts)
	if err != nil {
		return nil, err
	}
	lnk := math.Log(float64(k))
	out := make([]Area, len(counts))
	for j, row := range counts {
		a := Area{Shares: make([]float64, k), Largest: -1}
		for _, v := range row {
			a.People += v
		}
		if a.People > 0 {
			for m, v := range row {
				a.Shares[m] = v / a.People
				if a.Largest < 0 || v > row[a.Largest] {
					a.Largest = m
				}
			}
			a.LargestShare = a.Shares[a.Largest]
			a.Entropy = Entropy(a.Shares)
			if k > 1 {
				a.Normalized = a.Entropy / lnk
			}
		}
		out[j] = a
	}
	return out, nil
}

// Extent holds the evenness and exposure measures of a set of areas.
type Extent struct {
	// People is T; Groups[m] is group m's people T_m; Shares[m] = T_m/T.
	People float64
	Groups []float64
	Shares []float64
	// Entropy is E, the entropy of Shares: the extent's diversity.
	Entropy float64
	// H is Theil's information index: 0 when every area has the extent's
	// shares, 1 when every area holds one group only.
	H float64
	// M is the mutual information index (= H·Entropy).
	M float64
	// D[a][b] is the dissimilarity index of groups a and b: the share of
	// either group that would have to move for the two to be spread alike.
	D [][]float64
	// Exposure[x][y] is xPy, the share of group y in the area of the
	// average member of group x; Exposure[x][x] is x's isolation.
	Exposure [][]float64
}

// Measure returns the evenness and exposure measures of the areas (rows) of
// counts taken together.
func Measure(counts [][]float64) (*Extent, error) {
	k, err := check("counts", counts)
	if err != nil {
		return nil, err
	}
	return measure(counts, k), nil
}

// measure is Measure on a checked table.
func measure(counts [][]float64, k int) *Extent {
	x := &Extent{Groups: make([]float64, k), Shares: make([]float64, k)}
	for _, row := range counts {
		for m, v := range row {
			x.Groups[m] += v
		}
	}
	for _, g := range x.Groups {
		x.People += g
	}
	x.D = square(k)
	x.Exposure = square(k)
	nan := math.NaN()
	if x.People == 0 {
		x.H, x.M, x.Entropy = nan, nan, nan
		for a := range k {
			for b := range k {
				x.D[a][b], x.Exposure[a][b] = nan, nan
			}
		}
		return x
	}
	for m, g := range x.Groups {
		x.Shares[m] = g / x.People
	}
	x.Entropy = Entropy(x.Shares)

	// H from Theil's definition, M from the mutual-information definition:
	// two code paths, so the identity M = H·E is a check (measure_test.go).
	share := make([]float64, k)
	var hSum float64 // Σ_j t_j (E − E_j)
	for _, row := range counts {
		var t float64
		for _, v := range row {
			t += v
		}
		if t == 0 {
			continue
		}
		var kl float64 // Σ_m π_jm ln(π_jm/π_m)
		for m, v := range row {
			share[m] = v / t
			if v > 0 {
				kl += share[m] * math.Log(share[m]/x.Shares[m])
			}
		}
		hSum += t * (x.Entropy - Entropy(share))
		x.M += t / x.People * kl
		for a := range k {
			if x.Groups[a] == 0 {
				continue
			}
			ra := row[a] / x.Groups[a]
			for b := range k {
				x.Exposure[a][b] += ra * share[b]
				if b > a && x.Groups[b] > 0 {
					x.D[a][b] += math.Abs(ra - row[b]/x.Groups[b])
				}
			}
		}
	}
	if x.Entropy > 0 {
		x.H = hSum / (x.People * x.Entropy)
	} else {
		x.H = nan
	}
	for a := range k {
		for b := range k {
			switch {
			case x.Groups[a] == 0 || x.Groups[b] == 0:
				x.D[a][b] = nan
				if x.Groups[a] == 0 {
					x.Exposure[a][b] = nan
				}
			case b > a:
				x.D[a][b] /= 2
				x.D[b][a] = x.D[a][b]
			}
		}
	}
	return x
}

func square(k int) [][]float64 {
	cells := make([]float64, k*k)
	s := make([][]float64, k)
	for i := range s {
		s[i] = cells[i*k : (i+1)*k]
	}
	return s
}
