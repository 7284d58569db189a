package demo

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/paulmach/orb"
	"github.com/stipple-maps/stipple/geo"
)

// Group is one invented category of the demo.
type Group struct {
	Field string // count field in the features
	Label string
	// Color is from stipple's default palette (render.DefaultPalette).
	Color string
}

// Groups are the demo's categories, in legend order.
var Groups = []Group{
	{"orvesh", "Orvesh", "#0072B2"},
	{"tamsic", "Tamsic", "#D55E00"},
	{"veloran", "Veloran", "#00896A"},
	{"quenti", "Quenti", "#B5508A"},
	{"other", "Other languages", "#4B2F8F"},
}

// Bounds of the city in lon/lat degrees: open South Pacific, about 1,000 km
// from the nearest island (Pitcairn, from memory).
var Bounds = orb.Bound{Min: orb.Point{-128.56, -34.36}, Max: orb.Point{-128.24, -34.09}}

// Districts are the invented district names, west to east then south to
// north, one per block of the grid.
var Districts = []string{
	"Harrowfield", "Tannery Row", "Old Quay", "Saltmarsh",
	"Kestle Hill", "North Bell", "Weir End", "Marram Point",
}

const (
	nu, nvSouth, nvNorth = 30, 12, 13
	riverLow, riverHigh  = 0.47, 0.505 // the river's band in v
)

// City returns the demo layer. seed changes the jitter and the counts; the
// built-in demo uses seed 1.
func City(seed uint64) *geo.Layer {
	rng := rand.New(rand.NewPCG(seed, 0x9e3779b97f4a7c15))
	// Grid vertex rows in v: south bank, then north bank.
	var vs []float64
	for j := 0; j <= nvSouth; j++ {
		vs = append(vs, riverLow*float64(j)/nvSouth)
	}
	for j := 0; j <= nvNorth; j++ {
		vs = append(vs, riverHigh+(1-riverHigh)*float64(j)/nvNorth)
	}
	rows := len(vs)
	// Jittered vertices shared by neighbouring cells; the river banks and
	// the outer edge stay smooth.
	vert := make([][]orb.Point, rows)
	for j, v := range vs {
		vert[j] = make([]orb.Point, nu+1)
		for i := 0; i <= nu; i++ {
			u := float64(i) / nu
			ju, jv := 0.0, 0.0
			edge := j == 0 || j == rows-1 || j == nvSouth || j == nvSouth+1 || i == 0 || i == nu
			if !edge {
				ju = (rng.Float64() - 0.5) * 0.45 / nu
				jv = (rng.Float64() - 0.5) * 0.45 / float64(nvNorth)
			}
			vert[j][i] = lonLat(u+ju, v+jv)
		}
	}
	layer := &geo.Layer{Path: "quillmere (built-in demo)", Name: "quillmere"}
	layer.Fields = []string{"code", "district", "name"}
	for _, g := range Groups {
		layer.Fields = append(layer.Fields, g.Field)
	}
	n := 0
	for j := 0; j < rows-1; j++ {
		if j == nvSouth { // the river
			continue
		}
		for i := 0; i < nu; i++ {
			uc := (float64(i) + 0.5) / nu
			vc := (vs[j] + vs[j+1]) / 2
			if !onLand(uc, vc) {
				continue
			}
			ring := orb.Ring{vert[j][i], vert[j][i+1], vert[j+1][i+1], vert[j+1][i], vert[j][i]}
			poly := orb.Polygon{ring}
			if i == 9 && j == 17 { // Lanternwood Park, with its lake as a hole
				c := lonLat(uc, vc)
				poly = append(poly, lake(c, 0.0022))
			}
			area := math.Abs(geo.RingArea(ring))
			if len(poly) > 1 {
				area -= math.Abs(geo.RingArea(poly[1]))
			}
			n++
			f := geo.Feature{
				Index:    len(layer.Features),
				ID:       fmt.Sprintf("QM%04d", n),
				Geometry: orb.MultiPolygon{poly},
				Props: map[string]any{
					"code":     fmt.Sprintf("QM%04d", n),
					"district": Districts[district(uc, vc)],
					"name":     fmt.Sprintf("%s %d", Districts[district(uc, vc)], n),
				},
			}
			for k, c := range counts(rng, uc, vc, area) {
				f.Props[Groups[k].Field] = int64(c)
			}
			if i == 9 && j == 17 {
				f.Props["name"] = "Lanternwood Park"
				for _, g := range Groups {
					f.Props[g.Field] = f.Props[g.Field].(int64) / 8
				}
			}
			layer.Features = append(layer.Features, f)
		}
	}
	return layer
}

// lonLat maps grid coordinates (u east, v north, both 0..1) to degrees. The
// grid is bent so the rows, and with them the river, meander.
func lonLat(u, v float64) orb.Point {
	bend := 0.035*math.Sin(2*math.Pi*1.2*u+0.6) + 0.012*math.Sin(2*math.Pi*3.1*u)
	w := Bounds.Max[0] - Bounds.Min[0]
	h := Bounds.Max[1] - Bounds.Min[1]
	return orb.Point{
		round7(Bounds.Min[0] + w*u),
		round7(Bounds.Min[1] + h*(v+bend*math.Sin(math.Pi*v))),
	}
}

func round7(x float64) float64 { return math.Round(x*1e7) / 1e7 }

// onLand is false for the sea east of the coast, the bay, and outside the
// city's rounded edge.
func onLand(u, v float64) bool {
	coast := 0.83 + 0.07*math.Sin(5.5*v) - 0.05*math.Cos(11*v)
	if u > coast {
		return false
	}
	if bu, bv := (u-0.80)/0.16, (v-0.36)/0.11; bu*bu+bv*bv < 1 { // Gull Bay
		return false
	}
	du, dv := (u-0.45)/0.56, (v-0.5)/0.55
	return du*du+dv*dv < 1
}

func district(u, v float64) int {
	c := int(math.Min(3, u*4))
	if v > 0.5 {
		c += 4
	}
	return c
}

// lake is a 16-sided clockwise ring around c (a hole, RFC 7946 §3.1.6).
func lake(c orb.Point, r float64) orb.Ring {
	var ring orb.Ring
	for k := 0; k <= 16; k++ {
		a := -2 * math.Pi * float64(k%16) / 16
		ring = append(ring, orb.Point{round7(c[0] + r*1.3*math.Cos(a)), round7(c[1] + r*math.Sin(a))})
	}
	return ring
}

// counts makes the invented people of one area: density falls away from the
// centre near the river mouth; each group has its own home districts.
func counts(rng *rand.Rand, u, v, area float64) []int {
	const perDeg2 = 3.4e7 // people per square degree at the centre
	r := math.Hypot(u-0.62, (v-0.5)*0.9)
	density := perDeg2 * (0.08 + math.Exp(-r/0.2))
	total := density * area * math.Exp(rng.NormFloat64()*0.35)
	w := []float64{
		0.3 + 3.2*bump(u, v, 0.25, 0.78, 0.2),
		0.3 + 3.4*bump(u, v, 0.42, 0.18, 0.18),
		0.2 + 4.0*bump(u, v, 0.68, 0.55, 0.1) + 1.2*bump(u, v, 0.7, 0.85, 0.08),
		0.08 + 2.6*bump(u, v, 0.15, 0.35, 0.09) + 2.2*bump(u, v, 0.5, 0.9, 0.07),
		0.35,
	}
	var sum float64
	for k := range w {
		w[k] *= math.Exp(rng.NormFloat64() * 0.3)
		sum += w[k]
	}
	out := make([]int, len(w))
	for k := range w {
		out[k] = int(math.Round(total * w[k] / sum))
	}
	return out
}

func bump(u, v, cu, cv, s float64) float64 {
	d2 := (u-cu)*(u-cu) + (v-cv)*(v-cv)
	return math.Exp(-d2 / (2 * s * s))
}
