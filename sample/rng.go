package sample

import "math/rand/v2"

// mix is the splitmix64 finaliser (Steele, Lea & Flood 2014): a bijection
// of uint64 that spreads nearby inputs over the whole range.
func mix(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// IDHash is the 64-bit FNV-1a hash of a feature id; with the seed, the
// category and the dot index it keys every random choice for that feature.
func IDHash(id string) uint64 {
	h := uint64(14695981039346656037)
	for i := 0; i < len(id); i++ {
		h ^= uint64(id[i])
		h *= 1099511628211
	}
	return h
}

// countIndex is the dot index reserved for the stream that rounds a count.
const countIndex = ^uint64(0)

// stream returns the generator for one (seed, feature, category, index).
func stream(seed, id uint64, cat uint64, index uint64) rand.PCG {
	var p rand.PCG
	p.Seed(mix(seed^mix(id)), mix(cat<<48^mix(index)))
	return p
}

// unit returns a float64 uniform in [0, 1) from 53 random bits.
func unit(p *rand.PCG) float64 {
	return float64(p.Uint64()>>11) * (1.0 / (1 << 53))
}

// CategoryStream is the stream number of a category named key: maps give
// each category the hash of its key (Options.Streams), so that listing the
// categories in another order moves no dot.
func CategoryStream(key string) uint64 { return IDHash("category:" + key) }

// streamOf is category k's stream number: streams[k] when given, else k.
func streamOf(streams []uint64, k int) uint64 {
	if k < len(streams) {
		return streams[k]
	}
	return uint64(k)
}
