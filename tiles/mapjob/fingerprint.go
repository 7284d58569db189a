package mapjob

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"hash"
	"io"
	"math"

	"github.com/stipple-maps/stipple/geo"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/mapfile"
)

// sampleFormat names the dot store layout and the sampling rules behind it;
// change it when sample places dots differently, so old stores are redone.
// 3: one fingerprint for every command; category keys. 4: world cells from
// the sine the sampler drew (dotstore.WorldFromSin), which moves a rare dot
// to the neighbouring cell.
const sampleFormat = "stipple-dots/4"

// tileFormat names how tiles are drawn; change it when pixels change, so
// a rerun redraws instead of keeping old tiles.
const tileFormat = "stipple-tiles/2"

// samplingFingerprint hashes everything the placed dots depend on: the
// sampling rules, the id field, seed, people per dot, rounding, each
// category's key (it seeds the category's dots) and fields, the masks'
// contents (maskHash), and every area's id, counts and vertices. It is
// the one definition every command uses (Input.Fingerprint).
func samplingFingerprint(m *mapfile.Map, layer *geo.Layer, counts [][]float64, maskHash string) string {
	h := sha256.New()
	fmt.Fprintf(h, "%s\nid=%q\nseed=%d\nperdot=%x\nrounding=%q\nmasks=%s\n", sampleFormat, m.Input.ID, m.Seed,
		math.Float64bits(m.PeoplePerDot), m.Rounding, maskHash)
	for _, c := range m.Categories {
		fmt.Fprintf(h, "category key=%q fields=%q\n", c.Key, c.Fields)
	}
	hashAreas(h, layer, counts)
	return hex.EncodeToString(h.Sum(nil))
}

// hashAreas writes every area's index, id, counts and vertices into h.
func hashAreas(h hash.Hash, layer *geo.Layer, counts [][]float64) {
	var b [8]byte
	f64 := func(w io.Writer, v float64) { binary.LittleEndian.PutUint64(b[:], math.Float64bits(v)); w.Write(b[:]) }
	for i, f := range layer.Features {
		fmt.Fprintf(h, "f%d %q %d\n", f.Index, f.ID, len(f.Geometry))
		for _, c := range counts[i] {
			f64(h, c)
		}
		for _, poly := range f.Geometry {
			fmt.Fprintf(h, "p%d", len(poly))
			for _, ring := range poly {
				fmt.Fprintf(h, "r%d", len(ring))
				for _, p := range ring {
					f64(h, p[0])
					f64(h, p[1])
				}
			}
		}
	}
}

// LookFingerprint hashes everything a map's tiles depend on besides the
// zoom: the dots (the sampling fingerprint), the tile size, @2x tiles, the
// colours and the dot schedule. A rerun with the same one keeps finished
// tiles; the parts of a sharded render and its final step refuse to mix
// different ones.
func LookFingerprint(in *Input, m *mapfile.Map, hidpi bool) string {
	h := sha256.New()
	fmt.Fprintf(h, "%s\ndots=%s\nsize=%d\nhidpi=%v\n", tileFormat, in.Fingerprint, m.Tiles.Size, hidpi)
	for _, c := range m.RGBA() {
		fmt.Fprintf(h, "color=%v\n", c)
	}
	hashLook(h, Look(m))
	return hex.EncodeToString(h.Sum(nil))
}

func hashLook(h io.Writer, look func(int) render.Dot) {
	for z := 0; z <= 24; z++ {
		d := look(z)
		fmt.Fprintf(h, "z%d %x %x\n", z, math.Float64bits(d.Diameter), math.Float64bits(d.Opacity))
	}
}
