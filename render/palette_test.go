package render

import (
	"fmt"
	"math"
	"testing"
)

// lab is CIE 1976 L*a*b* of a linear-RGB colour (sRGB primaries, D65
// white): IEC 61966-2-1 matrix to XYZ, then the CIE 15 formulas.
func lab(c [3]float64) [3]float64 {
	X := 0.4124*c[0] + 0.3576*c[1] + 0.1805*c[2]
	Y := 0.2126*c[0] + 0.7152*c[1] + 0.0722*c[2]
	Z := 0.0193*c[0] + 0.1192*c[1] + 0.9505*c[2]
	f := func(t float64) float64 {
		if t > 216.0/24389 {
			return math.Cbrt(t)
		}
		return (24389.0/27*t + 16) / 116
	}
	fx, fy, fz := f(X/0.95047), f(Y), f(Z/1.08883)
	return [3]float64{116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)}
}

func linearRGB(hex string) ([3]float64, error) {
	c, err := ParseHex(hex)
	if err != nil {
		return [3]float64{}, err
	}
	lin := func(v uint8) float64 {
		s := float64(v) / 255
		if s <= 0.04045 {
			return s / 12.92
		}
		return math.Pow((s+0.055)/1.055, 2.4)
	}
	return [3]float64{lin(c.R), lin(c.G), lin(c.B)}, nil
}

// cvd are the matrices of Machado, Oliveira & Fernandes (2009), "A
// Physiologically-based Model for Simulation of Color Vision Deficiency",
// IEEE TVCG 15(6), for severity 1.0, applied to linear RGB (values from
// memory of the authors' published table).
var cvd = []struct {
	name string
	m    [3][3]float64
}{
	{"normal vision", [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}},
	{"protanopia", [3][3]float64{{0.152286, 1.052583, -0.204868}, {0.114503, 0.786281, 0.099216}, {-0.003882, -0.048116, 1.051998}}},
	{"deuteranopia", [3][3]float64{{0.367322, 0.860646, -0.227968}, {0.280085, 0.672501, 0.047413}, {-0.011820, 0.042940, 0.968881}}},
	{"tritanopia", [3][3]float64{{1.255528, -0.076749, -0.178779}, {-0.078411, 0.930809, 0.147602}, {0.004733, 0.691367, 0.303900}}},
}

func simulate(m [3][3]float64, c [3]float64) [3]float64 {
	var o [3]float64
	for i := range o {
		o[i] = math.Max(0, math.Min(1, m[i][0]*c[0]+m[i][1]*c[1]+m[i][2]*c[2]))
	}
	return o
}

// TestDefaultPalette checks the two rules the default palette is made to:
//   - WCAG 2.x contrast ratio (WCAG 2.1, definitions of relative luminance
//     and contrast ratio; 3:1 is Success Criterion 1.4.11 Non-text
//     Contrast) of every colour against DefaultGround at least 3:1;
//   - every two colours at least 10 apart in CIELAB ΔE*ab (a common-practice
//     threshold for marks told apart at a glance) in normal vision and in
//     the three dichromacy simulations of Machado et al. (2009).
func TestDefaultPalette(t *testing.T) {
	ground, err := ParseHex(DefaultGround)
	if err != nil {
		t.Fatal(err)
	}
	for _, h := range DefaultPalette {
		c, err := ParseHex(h)
		if err != nil {
			t.Fatal(err)
		}
		if r := Contrast(c, ground); r < 3 {
			t.Errorf("%s on the ground %s: contrast %.2f:1, want at least 3:1", h, DefaultGround, r)
		}
	}
	for _, v := range cvd {
		for i, a := range DefaultPalette {
			for _, b := range DefaultPalette[i+1:] {
				ca, _ := linearRGB(a)
				cb, _ := linearRGB(b)
				la, lb := lab(simulate(v.m, ca)), lab(simulate(v.m, cb))
				if d := math.Sqrt((la[0]-lb[0])*(la[0]-lb[0]) + (la[1]-lb[1])*(la[1]-lb[1]) + (la[2]-lb[2])*(la[2]-lb[2])); d < 10 {
					t.Errorf("%s: %s and %s are ΔE*ab %.1f apart; want at least 10", v.name, a, b, d)
				}
			}
		}
	}
}

// TestContrastOfTheOldDefaults: the values issue 15 reports for the old
// defaults, recomputed with Contrast: Okabe & Ito's yellow, orange and sky
// blue on the old ground #f2efe7 fall short of 3:1, which is why they left
// the default palette.
func TestContrastOfTheOldDefaults(t *testing.T) {
	old, _ := ParseHex("#f2efe7")
	for _, c := range []struct {
		hex  string
		want float64
	}{{"#F0E442", 1.15}, {"#E69F00", 1.96}, {"#56B4E9", 2.01}} {
		col, _ := ParseHex(c.hex)
		if got := Contrast(col, old); math.Abs(got-c.want) > 0.005 {
			t.Errorf("%s on #f2efe7: %.3f, want %.2f", c.hex, got, c.want)
		}
	}
	// The new ground is not the old one: at least 8 units apart in some
	// channel (the old was within two of a well-known map's land colour).
	g, _ := ParseHex(DefaultGround)
	d := max(absDiff(g.R, old.R), absDiff(g.G, old.G), absDiff(g.B, old.B))
	if d < 8 {
		t.Errorf("DefaultGround %s is %d units from the old ground; want at least 8", DefaultGround, d)
	}
}

func absDiff(a, b uint8) int {
	if a > b {
		return int(a - b)
	}
	return int(b - a)
}

func ExampleCreditLineWith() {
	fmt.Println(CreditLineWith("Quelle: ", "Statistikamt, Tabelle 3"))
	fmt.Println(CreditLineWith("Quelle: ", "Quelle: Statistikamt"))
	// Output:
	// Quelle: Statistikamt, Tabelle 3
	// Quelle: Statistikamt
}
