package sample

import "math/rand/v2"

// alias draws an index with probability proportional to its weight in
// constant time (A. J. Walker's alias method, in M. D. Vose's stable
// construction, IEEE Trans. Softw. Eng. 17(9), 1991): slot i is taken with
// probability prob[i], else its alias.
type alias struct {
	prob  []float64
	alias []int32
}

// newAlias builds the table for weights w (non-negative, positive sum).
// The construction only depends on w, in order.
func newAlias(w []float64) *alias {
	n := len(w)
	a := &alias{prob: make([]float64, n), alias: make([]int32, n)}
	sum := 0.0
	for _, x := range w {
		sum += x
	}
	scaled := make([]float64, n)
	small := make([]int32, 0, n)
	large := make([]int32, 0, n)
	for i, x := range w {
		scaled[i] = x * float64(n) / sum
		if scaled[i] < 1 {
			small = append(small, int32(i))
		} else {
			large = append(large, int32(i))
		}
	}
	for len(small) > 0 && len(large) > 0 {
		s := small[len(small)-1]
		small = small[:len(small)-1]
		l := large[len(large)-1]
		a.prob[s], a.alias[s] = scaled[s], l
		scaled[l] = scaled[l] + scaled[s] - 1
		if scaled[l] < 1 {
			large = large[:len(large)-1]
			small = append(small, l)
		}
	}
	// What is left is 1 up to rounding.
	for _, i := range large {
		a.prob[i], a.alias[i] = 1, i
	}
	for _, i := range small {
		a.prob[i], a.alias[i] = 1, i
	}
	return a
}

// draw returns an index: a uniform slot, then a coin against its prob.
func (a *alias) draw(p *rand.PCG) int {
	n := len(a.prob)
	if n == 1 {
		return 0
	}
	i := pick(p, n)
	if unit(p) < a.prob[i] {
		return i
	}
	return int(a.alias[i])
}
