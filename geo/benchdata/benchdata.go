// Package benchdata makes an invented country for benchmarks: a few
// thousand areas on a grid of wobbly polygons, with made-up counts of five
// groups (fields grp_a … grp_e) that add up to a chosen number of people,
// concentrated around invented cities as real populations are. Nothing in it
// describes real people or places.
//
// Coordinate space: lon/lat degrees (WGS 84), inside a box of
// 56° × 24° of mid latitudes.
package benchdata

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// Fields are the count fields of every area.
var Fields = []string{"grp_a", "grp_b", "grp_c", "grp_d", "grp_e"}

// Box is the country's extent: west, south, east, north.
var Box = [4]float64{-124, 25, -68, 49}

// Country returns an invented layer of cols × rows areas holding people
// people in all, made from seed alone.
func Country(people int64, cols, rows int, seed uint64) *geo.Layer {
	rng := rand.New(rand.NewPCG(seed, 0x5eed))
	w := (Box[2] - Box[0]) / float64(cols)
	h := (Box[3] - Box[1]) / float64(rows)
	type city struct{ x, y, r, pull float64 }
	cities := make([]city, 24)
	for i := range cities {
		cities[i] = city{Box[0] + rng.Float64()*(Box[2]-Box[0]), Box[1] + rng.Float64()*(Box[3]-Box[1]),
			0.3 + rng.Float64()*1.2, 20 + rng.Float64()*200}
	}
	n := cols * rows
	weights := make([]float64, n)
	polys := make([]orb.Polygon, n)
	total := 0.0
	for r := 0; r < rows; r++ {
		for c := 0; c < cols; c++ {
			i := r*cols + c
			cx, cy := Box[0]+(float64(c)+0.5)*w, Box[1]+(float64(r)+0.5)*h
			// A 24-sided wobbly area, most of its cell.
			ring := make(orb.Ring, 0, 25)
			phase := rng.Float64() * 2 * math.Pi
			for k := 0; k < 24; k++ {
				a := 2 * math.Pi * float64(k) / 24
				f := 0.42 + 0.06*math.Sin(3*a+phase)
				ring = append(ring, orb.Point{cx + f*w*math.Cos(a), cy + f*h*math.Sin(a)})
			}
			ring = append(ring, ring[0])
			polys[i] = orb.Polygon{ring}
			wt := math.Exp(rng.NormFloat64() * 1.1)
			for _, ct := range cities {
				d2 := ((cx-ct.x)*(cx-ct.x) + (cy-ct.y)*(cy-ct.y)) / (ct.r * ct.r)
				wt += ct.pull * math.Exp(-d2)
			}
			weights[i] = wt
			total += wt
		}
	}
	alpha := []float64{4, 2, 1.2, 0.8, 0.5}
	layer := &geo.Layer{Path: fmt.Sprintf("invented country (%d people, seed %d)", people, seed), Name: "country", Fields: append([]string{"code"}, Fields...)}
	left := people
	for i := 0; i < n; i++ {
		var p int64
		if i == n-1 {
			p = left
		} else {
			p = min(left, int64(math.Round(float64(people)*weights[i]/total)))
		}
		left -= p
		shares := make([]float64, len(alpha))
		sum := 0.0
		for k, a := range alpha {
			shares[k] = a * (0.25 + rng.Float64())
			sum += shares[k]
		}
		props := map[string]any{"code": fmt.Sprintf("A%05d", i)}
		rest := p
		for k, f := range Fields {
			v := int64(math.Floor(float64(p) * shares[k] / sum))
			if k == len(Fields)-1 {
				v = rest
			}
			rest -= v
			props[f] = v
		}
		layer.Features = append(layer.Features, geo.Feature{Index: i, ID: props["code"].(string), Geometry: orb.MultiPolygon{polys[i]}, Props: props})
	}
	return layer
}
