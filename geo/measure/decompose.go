package measure

import "fmt"

// Decomposition splits the segregation of a set of extents (the metros of
// a nation) into the part between extents and the part within them.
type Decomposition struct {
	// Total measures all areas of all extents as one extent.
	Total *Extent
	// Between measures the extents as if each were one area.
	Between *Extent
	// Within[e] measures extent e alone; Weights[e] = T_e / T.
	Within  []*Extent
	Weights []float64
	// MWithin = Σ_e (T_e/T) M_e, so Total.M = Between.M + MWithin.
	MWithin float64
	// HWithin = Σ_e (T_e/T)(E_e/E) H_e, so Total.H = Between.H + HWithin.
	// An extent with one group (E_e = 0, H_e undefined) adds 0: its term
	// E_e H_e is its M_e, which is 0.
	HWithin float64
}

// Decompose measures each extent's table of counts[area][group], the
// extents as areas, and all areas together, and splits H and M into between
// and within parts (see the package doc for the identities).
func Decompose(extents [][][]float64) (*Decomposition, error) {
	if len(extents) == 0 {
		return nil, &Error{Table: "counts", Area: -1, Group: -1, Message: "no extents"}
	}
	var all [][]float64
	between := make([][]float64, len(extents))
	k := -1
	for e, t := range extents {
		ke, err := check("counts", t)
		if err != nil {
			err.(*Error).Table = fmt.Sprintf("counts of extent %d", e)
			return nil, err
		}
		if k >= 0 && ke != k {
			return nil, &Error{Table: fmt.Sprintf("counts of extent %d", e), Area: -1, Group: -1,
				Message: fmt.Sprintf("has %d groups, extent 0 has %d", ke, k)}
		}
		k = ke
		between[e] = make([]float64, k)
		for _, row := range t {
			for m, v := range row {
				between[e][m] += v
			}
		}
		all = append(all, t...)
	}
	d := &Decomposition{Total: measure(all, k), Between: measure(between, k)}
	for _, t := range extents {
		x := measure(t, k)
		d.Within = append(d.Within, x)
		w := x.People / d.Total.People
		d.Weights = append(d.Weights, w)
		if x.People == 0 {
			continue
		}
		d.MWithin += w * x.M
		if x.Entropy > 0 {
			d.HWithin += w * x.Entropy / d.Total.Entropy * x.H
		}
	}
	return d, nil
}
