// Package deflate writes zlib streams (RFC 1950 around RFC 1951 DEFLATE)
// for PNG scanlines, fast.
//
// Dot tiles are mostly runs: transparent space between dots, flat colour
// inside them, and after the Up filter whole rows of zeros. The encoder
// finds only those: runs of one byte (distance 1) and repeats of the pixel
// before (distance = bytes per pixel). Everything else is a literal. Each
// stream is one dynamic-Huffman block whose codes are built from the
// stream's own symbol counts. It makes no hash table and searches no
// window, so its cost is one pass over the bytes (a word at a time through
// runs) plus one pass writing codes. A caller that already knows where the
// data is zero (a tile knows its empty pixels) passes that layout to
// ZlibRuns and the empty stretches are not read at all.
//
// Output is a function of the input bytes and the pixel size alone, and any
// zlib decoder reads it.
package deflate

import (
	"encoding/binary"
	"math/bits"
	"slices"
)

// minRun is the shortest run taken as a match: a shorter one costs about
// as many bits as its literals.
const minRun = 4

// maxMatch is the longest match DEFLATE can express (RFC 1951 §3.2.5).
const maxMatch = 258

// Encoder compresses whole buffers. Its scratch space is reused from call
// to call, so keep one per goroutine; an Encoder is not safe for
// concurrent use. The zero value is ready to use.
type Encoder struct {
	segs []seg
	lit  [numLitLen]uint32 // literal/length symbol counts
	dist [numDist]uint32   // distance symbol counts
	h    huff
}

// seg is a stretch of the input: lits literal bytes, then a match of mlen
// bytes at distance dist (mlen 0: no match, the input's end).
type seg struct {
	lits uint32
	mlen uint16
	dist uint16
}

const (
	numLitLen = 286 // 0–255 literals, 256 end of block, 257–285 lengths
	numDist   = 30
	endBlock  = 256
)

// Zlib appends the zlib stream of data to dst and returns the extended
// slice. bpp is the distance, in bytes, at which repeats are looked for
// besides runs of one byte: 4 for RGBA scanlines, 1 for 8-bit indices.
func (e *Encoder) Zlib(dst, data []byte, bpp int) []byte {
	if bpp < 1 || bpp > 32768 {
		bpp = 1
	}
	sum := e.parse(data, bpp)
	// RFC 1950 §2.2: CMF 0x78 (deflate, 32 KiB window), FLG 0x01 (fastest
	// level; 0x7801 is a multiple of 31).
	dst = append(dst, 0x78, 0x01)
	dst = e.block(dst, data)
	return binary.BigEndian.AppendUint32(dst, sum)
}

// ZlibRuns is Zlib for data whose layout the caller already knows, such as
// a tile's scanlines with their empty space: runs lists, in turn, a number
// of bytes to code as literals and a number of zero bytes that follow them
// (their sum is len(data)). Runs of zeros become matches and nothing else
// is searched, so the cost is one pass over the literal bytes. The bytes in
// the zero stretches must be zero; they are not read.
func (e *Encoder) ZlibRuns(dst, data []byte, runs []uint32) []byte {
	e.segs = e.segs[:0]
	clear(e.lit[:])
	clear(e.dist[:])
	a := adler{s1: 1}
	pos, start := 0, 0
	for k := 0; k+1 < len(runs); k += 2 {
		l, z := int(runs[k]), int(runs[k+1])
		e.literals(data[pos:pos+l], &a)
		pos += l
		if z == 0 {
			continue
		}
		if pos == 0 || data[pos-1] != 0 {
			// A run repeats the byte before it: the first zero is a
			// literal.
			e.literals(data[pos:pos+1], &a)
			pos++
			z--
		}
		if z < 3 {
			e.literals(data[pos:pos+z], &a)
			pos += z
			continue
		}
		a.run(0, z)
		start, pos = e.matches(start, pos, z, 1), pos+z
	}
	e.segs = append(e.segs, seg{lits: uint32(len(data) - start)})
	e.lit[endBlock]++
	dst = append(dst, 0x78, 0x01)
	dst = e.block(dst, data)
	return binary.BigEndian.AppendUint32(dst, a.sum())
}

// matches records a match of l ≥ 3 bytes at distance d starting at i, the
// literals since start before it, as matches of at most maxMatch bytes,
// none shorter than 3 (a tail of 1 or 2 is folded into the match before
// it). It returns the position after the match.
func (e *Encoder) matches(start, i, l, d int) int {
	for l > 0 {
		m := min(l, maxMatch)
		if r := l - m; r > 0 && r < 3 {
			m -= 3 - r
		}
		e.segs = append(e.segs, seg{lits: uint32(i - start), mlen: uint16(m), dist: uint16(d)})
		e.lit[257+int(lengthCode[m-3])]++
		e.dist[distCode(d)]++
		i += m
		l -= m
		start = i
	}
	return i
}

// parse splits data into segments, counts the symbols they will use and
// returns the Adler-32 checksum of data (RFC 1950 §8.2), summed along: a
// run of one byte costs one step there too.
func (e *Encoder) parse(data []byte, bpp int) uint32 {
	e.segs = e.segs[:0]
	clear(e.lit[:])
	clear(e.dist[:])
	a := adler{s1: 1}
	n := len(data)
	start := 0 // first literal of the current segment
	i := 0
	for i < n {
		k, d := nextMatch(data, i, bpp)
		k = min(k, n)
		e.literals(data[i:k], &a)
		i = k
		if d == 0 {
			break
		}
		var l int
		if d == 1 {
			l = runLen(data, i, data[i-1])
			a.run(data[i-1], l)
		} else {
			l = repeatLen(data, i, d)
			a.bytes(data[i : i+l])
		}
		i = e.matches(start, i, l, d)
		start = i
	}
	e.segs = append(e.segs, seg{lits: uint32(n - start)})
	e.lit[endBlock]++
	return a.sum()
}

// literals counts the literal bytes p and adds them to the checksum.
func (e *Encoder) literals(p []byte, a *adler) {
	if len(p)+a.since >= adlerBlock {
		for _, b := range p {
			e.lit[b]++
		}
		a.bytes(p)
		return
	}
	s1, s2 := a.s1, a.s2
	for _, b := range p {
		e.lit[b]++
		s1 += uint64(b)
		s2 += s1
	}
	a.s1, a.s2 = s1, s2
	a.since += len(p)
}

// nextMatch returns the first position from k on where a match of at least
// minRun bytes starts, and its distance: 1 (a run of the byte before) where
// that matches, else bpp. With no match ahead it returns len(data), 0.
func nextMatch(data []byte, k, bpp int) (int, int) {
	n := len(data)
	at := func(k int) int {
		if k > 0 && runLen(data, k, data[k-1]) >= minRun {
			return 1
		}
		if bpp > 1 && k >= bpp && repeatLen(data, k, bpp) >= minRun {
			return bpp
		}
		return 0
	}
	// Byte by byte until a word can look back bpp bytes.
	for ; k < n && k < bpp; k++ {
		if d := at(k); d != 0 {
			return k, d
		}
	}
	// Five positions a word (SWAR, see matchStarts).
	for ; k+8 <= n; k += 5 {
		w := binary.LittleEndian.Uint64(data[k:])
		m1 := matchStarts(w ^ binary.LittleEndian.Uint64(data[k-1:]))
		var mb uint64
		if bpp > 1 {
			mb = matchStarts(w ^ binary.LittleEndian.Uint64(data[k-bpp:]))
		}
		if m := m1 | mb; m != 0 {
			off := bits.TrailingZeros64(m)
			if m1>>off&1 != 0 {
				return k + off>>3, 1
			}
			return k + off>>3, bpp
		}
	}
	// The last few bytes.
	for ; k < n; k++ {
		if d := at(k); d != 0 {
			return k, d
		}
	}
	return n, 0
}

// matchStarts marks, in bit 8k+7, each k in 0..4 where bytes k..k+3 of x
// are all zero: with x the XOR of a word with the word d bytes before it,
// a match at distance d of at least four bytes starts at byte k.
func matchStarts(x uint64) uint64 {
	const lo7 = 0x7f7f7f7f7f7f7f7f
	z := ^((x&lo7 + lo7) | x | lo7) // 0x80 in each zero byte, exactly
	return z & (z >> 8) & (z >> 16) & (z >> 24) & 0x000000ffffffffff
}

// runLen is the number of bytes from data[i] on that equal b.
func runLen(data []byte, i int, b byte) int {
	j := i
	pat := uint64(b) * 0x0101010101010101
	// Long runs, such as the empty space of a tile, 32 bytes a step.
	for ; j+32 <= len(data); j += 32 {
		p := data[j : j+32 : j+32]
		if (binary.LittleEndian.Uint64(p)^pat)|(binary.LittleEndian.Uint64(p[8:])^pat)|
			(binary.LittleEndian.Uint64(p[16:])^pat)|(binary.LittleEndian.Uint64(p[24:])^pat) != 0 {
			break
		}
	}
	for j+8 <= len(data) {
		if x := binary.LittleEndian.Uint64(data[j:]) ^ pat; x != 0 {
			return j - i + bits.TrailingZeros64(x)>>3
		}
		j += 8
	}
	for j < len(data) && data[j] == b {
		j++
	}
	return j - i
}

// repeatLen is the number of bytes from data[i] on that equal the byte d
// places before them.
func repeatLen(data []byte, i, d int) int {
	j := i
	for j+8 <= len(data) {
		if x := binary.LittleEndian.Uint64(data[j:]) ^ binary.LittleEndian.Uint64(data[j-d:]); x != 0 {
			return j - i + bits.TrailingZeros64(x)>>3
		}
		j += 8
	}
	for j < len(data) && data[j] == data[j-d] {
		j++
	}
	return j - i
}

// block writes the segments as one final dynamic-Huffman block (RFC 1951
// §3.2.7).
func (e *Encoder) block(dst, data []byte) []byte {
	h := &e.h
	h.litLen.build(e.lit[:], 15)
	h.distC.build(e.dist[:], 15)
	w := bitWriter{out: dst}
	w.put(1, 1) // BFINAL
	w.put(2, 2) // BTYPE 10: dynamic codes
	h.writeHeader(&w)
	// Each literal's code and length in one word: code | length<<16.
	var lit [256]uint32
	longest := uint8(0)
	for b := range lit {
		lit[b] = h.litLen.code[b] | uint32(h.litLen.len[b])<<16
		longest = max(longest, h.litLen.len[b])
	}
	// Four literals fit a step when no literal code is longer than 14
	// bits: 4 × 14 + 7 left over ≤ 64.
	four := longest <= 14
	ll, dc := &h.litLen, &h.distC
	// Room for the longest codes (15 bits a literal, 48 a match) and for
	// the 8-byte stores below.
	o := len(w.out)
	need := o + (15*len(data)+48*len(e.segs))/8 + 16
	out := slices.Grow(w.out, need-o)[:need]
	// acc holds nb < 8 bits between steps: a step adds at most 48 bits,
	// stores all eight bytes of acc and keeps the last partial byte.
	acc, nb := w.acc, w.nbits
	for nb >= 8 {
		out[o] = byte(acc)
		o++
		acc >>= 8
		nb -= 8
	}
	pos := 0
	for _, s := range e.segs {
		lits := data[pos : pos+int(s.lits)]
		pos += int(s.lits)
		j := 0
		if four {
			// Four literals (at most 4 × 14 bits) a step.
			for ; j+4 <= len(lits); j += 4 {
				acc, nb = put(acc, nb, lit[lits[j]])
				acc, nb = put(acc, nb, lit[lits[j+1]])
				acc, nb = put(acc, nb, lit[lits[j+2]])
				acc, nb = put(acc, nb, lit[lits[j+3]])
				o, acc, nb = store(out, o, acc, nb)
			}
		}
		// Three literals (at most 45 bits) a step.
		for ; j+3 <= len(lits); j += 3 {
			acc, nb = put(acc, nb, lit[lits[j]])
			acc, nb = put(acc, nb, lit[lits[j+1]])
			acc, nb = put(acc, nb, lit[lits[j+2]])
			o, acc, nb = store(out, o, acc, nb)
		}
		for _, l := range lits[j:] {
			acc, nb = put(acc, nb, lit[l])
		}
		o, acc, nb = store(out, o, acc, nb)
		if s.mlen == 0 {
			continue
		}
		// Length code and extra bits, distance code and extra bits: at
		// most 15 + 5 + 15 + 13 = 48 bits.
		m := int(s.mlen) - 3
		lc := int(lengthCode[m])
		acc |= uint64(ll.code[257+lc]) << nb
		nb += uint(ll.len[257+lc])
		acc |= uint64(m-int(lengthBase[lc])) << nb
		nb += uint(lengthExtra[lc])
		d := int(s.dist)
		c := distCode(d)
		acc |= uint64(dc.code[c]) << nb
		nb += uint(dc.len[c])
		acc |= uint64(d-1-int(distBase[c])) << nb
		nb += uint(distExtra[c])
		o, acc, nb = store(out, o, acc, nb)
		pos += int(s.mlen)
	}
	out = out[:o]
	w.out, w.acc, w.nbits = out, acc, nb
	w.put(ll.code[endBlock], uint(ll.len[endBlock]))
	return w.flush()
}

// put adds a literal's code, packed code | length<<16, to the bit
// accumulator acc of nb bits.
func put(acc uint64, nb uint, code uint32) (uint64, uint) {
	return acc | uint64(code&0xffff)<<nb, nb + uint(code>>16)
}

// store writes all eight bytes of acc at out[o:] and keeps the bits of the
// last partial byte: out advances by the whole bytes of its nb bits.
func store(out []byte, o int, acc uint64, nb uint) (int, uint64, uint) {
	binary.LittleEndian.PutUint64(out[o:], acc)
	return o + int(nb>>3), acc >> (nb &^ 7), nb & 7
}

// Length symbols (RFC 1951 §3.2.5): lengthCode[len-3] is the symbol minus
// 257; lengthBase[c] + 3 its shortest length, lengthExtra[c] its extra bits.
var (
	lengthCode  [256]uint8
	lengthBase  = [29]uint8{0, 1, 2, 3, 4, 5, 6, 7, 8, 10, 12, 14, 16, 20, 24, 28, 32, 40, 48, 56, 64, 80, 96, 112, 128, 160, 192, 224, 255}
	lengthExtra = [29]uint8{0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2, 3, 3, 3, 3, 4, 4, 4, 4, 5, 5, 5, 5, 0}
	// Distance symbols: distBase[c] + 1 is the shortest distance of code c.
	distBase  = [30]uint16{0, 1, 2, 3, 4, 6, 8, 12, 16, 24, 32, 48, 64, 96, 128, 192, 256, 384, 512, 768, 1024, 1536, 2048, 3072, 4096, 6144, 8192, 12288, 16384, 24576}
	distExtra = [30]uint8{0, 0, 0, 0, 1, 1, 2, 2, 3, 3, 4, 4, 5, 5, 6, 6, 7, 7, 8, 8, 9, 9, 10, 10, 11, 11, 12, 12, 13, 13}
)

func init() {
	for c := range 28 {
		for l := int(lengthBase[c]); l < int(lengthBase[c])+1<<lengthExtra[c]; l++ {
			lengthCode[l] = uint8(c)
		}
	}
	lengthCode[255] = 28 // length 258 has a code of its own
}

// distCode is the distance symbol of distance d (1 ≤ d ≤ 32768).
func distCode(d int) int {
	if d <= 4 {
		return d - 1
	}
	// Two codes per power of two: the top bit's place and the next bit.
	v := uint32(d - 1)
	hb := bits.Len32(v) - 1
	return 2*hb + int(v>>(hb-1)&1)
}

// bitWriter packs codes least significant bit first (RFC 1951 §3.1.1).
type bitWriter struct {
	out   []byte
	acc   uint64
	nbits uint
}

// put writes the n low bits of v (n ≤ 32).
func (w *bitWriter) put(v uint32, n uint) {
	w.acc |= uint64(v) << w.nbits
	w.nbits += n
	if w.nbits >= 32 {
		w.out = binary.LittleEndian.AppendUint32(w.out, uint32(w.acc))
		w.acc >>= 32
		w.nbits -= 32
	}
}

// flush writes the bits left, padding the last byte with zeros.
func (w *bitWriter) flush() []byte {
	for w.nbits > 0 {
		w.out = append(w.out, byte(w.acc))
		w.acc >>= 8
		if w.nbits > 8 {
			w.nbits -= 8
		} else {
			w.nbits = 0
		}
	}
	return w.out
}
