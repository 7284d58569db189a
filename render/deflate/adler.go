package deflate

// adlerMod is the largest prime below 2^16 (RFC 1950 §8.2).
const adlerMod = 65521

// adlerBlock is how many bytes are summed between reductions: with 64-bit
// sums and at most two blocks between reductions, s2 stays far below
// overflow (s2 < 2·adlerBlock · (adlerMod + 255 · 2·adlerBlock)).
const adlerBlock = 1 << 16

// adler sums an Adler-32 checksum (RFC 1950 §8.2) piece by piece.
type adler struct {
	s1, s2 uint64
	since  int // bytes summed since the last reduction
}

// bytes adds p.
func (a *adler) bytes(p []byte) {
	s1, s2 := a.s1, a.s2
	for len(p) > 0 {
		c := p[:min(len(p), adlerBlock)]
		p = p[len(c):]
		// Four bytes a step: s2 gains 4·s1 and the bytes weighted 4, 3,
		// 2, 1, which keeps the step-to-step chain short.
		n4 := len(c) &^ 3
		for i := 0; i < n4; i += 4 {
			q := c[i : i+4 : i+4]
			b0, b1, b2, b3 := uint64(q[0]), uint64(q[1]), uint64(q[2]), uint64(q[3])
			s2 += 4*s1 + 4*b0 + 3*b1 + 2*b2 + b3
			s1 += b0 + b1 + b2 + b3
		}
		for _, b := range c[n4:] {
			s1 += uint64(b)
			s2 += s1
		}
		a.since += len(c)
		if a.since >= adlerBlock {
			s1 %= adlerMod
			s2 %= adlerMod
			a.since = 0
		}
	}
	a.s1, a.s2 = s1, s2
}

// run adds l copies of v in closed form: s1 grows by l·v, and s2 by l·s1
// plus v·(1 + 2 + … + l).
func (a *adler) run(v byte, l int) {
	for l > 0 {
		c := min(l, adlerBlock)
		l -= c
		L := uint64(c)
		a.s2 += L*a.s1 + uint64(v)*(L*(L+1)/2)
		a.s1 += L * uint64(v)
		a.since += c
		if a.since >= adlerBlock {
			a.s1 %= adlerMod
			a.s2 %= adlerMod
			a.since = 0
		}
	}
}

// sum is the checksum of everything added.
func (a *adler) sum() uint32 { return uint32(a.s2%adlerMod)<<16 | uint32(a.s1%adlerMod) }

// Adler32 is the Adler-32 checksum of data (RFC 1950 §8.2).
func Adler32(data []byte) uint32 {
	a := adler{s1: 1}
	a.bytes(data)
	return a.sum()
}
