package page

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

// Size is a page size in millimetres, width W across and height H down.
type Size struct {
	W, H float64
}

// Named page sizes, portrait. ISO 216 (2007) defines the A series in
// millimetres: A4 = 210 × 297, A3 = 297 × 420. ANSI/ASME Y14.1 defines
// the US sizes in inches: A (Letter) = 8.5 × 11, B (Tabloid, Ledger when
// landscape) = 11 × 17; Legal = 8.5 × 14 is the common North American
// size (common practice).
var (
	A5      = Size{148, 210}
	A4      = Size{210, 297}
	A3      = Size{297, 420}
	A2      = Size{420, 594}
	Letter  = Size{8.5 * mmPerInch, 11 * mmPerInch}
	Legal   = Size{8.5 * mmPerInch, 14 * mmPerInch}
	Tabloid = Size{11 * mmPerInch, 17 * mmPerInch}
)

// namedSizes maps lower-case names to sizes.
var namedSizes = map[string]Size{
	"a5": A5, "a4": A4, "a3": A3, "a2": A2,
	"letter": Letter, "legal": Legal, "tabloid": Tabloid, "ledger": {Tabloid.H, Tabloid.W},
}

const (
	mmPerInch = 25.4
	mmPerPt   = mmPerInch / 72 // PDF user space unit, ISO 32000-1 §8.3.2
	// Page limits: large enough for an A0 poster, small enough that a
	// mistyped size fails with a message instead of exhausting memory.
	minPageMM = 50
	maxPageMM = 1500
)

// Names returns the page size names ParseSize knows, sorted.
func Names() []string {
	var n []string
	for k := range namedSizes {
		n = append(n, k)
	}
	sort.Strings(n)
	return n
}

// ParseSize reads a page size: a name (A5, A4, A3, A2, Letter, Legal,
// Tabloid, Ledger; any case) or a custom size WxH with a unit, such as
// "300x200mm", "11x17in", "30x20cm" or "420x297" (millimetres when no unit
// is given). Named sizes are portrait except Ledger.
func ParseSize(s string) (Size, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	if sz, ok := namedSizes[t]; ok {
		return sz, nil
	}
	unit, num := 1.0, t
	for _, u := range []struct {
		suffix string
		mm     float64
	}{{"mm", 1}, {"cm", 10}, {"in", mmPerInch}, {"pt", mmPerPt}} {
		if strings.HasSuffix(t, u.suffix) {
			unit, num = u.mm, strings.TrimSpace(strings.TrimSuffix(t, u.suffix))
			break
		}
	}
	parts := strings.FieldsFunc(num, func(r rune) bool { return r == 'x' || r == '×' || r == '*' })
	if len(parts) != 2 {
		return Size{}, fmt.Errorf("page: size %q: want a name (%s) or WxH with a unit, e.g. 300x200mm or 11x17in", s, strings.Join(Names(), ", "))
	}
	var v [2]float64
	for i, p := range parts {
		f, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
		if err != nil {
			return Size{}, fmt.Errorf("page: size %q: %q is not a number", s, p)
		}
		v[i] = f * unit
	}
	sz := Size{v[0], v[1]}
	if err := sz.check(); err != nil {
		return Size{}, fmt.Errorf("page: size %q: %v", s, err)
	}
	return sz, nil
}

func (s Size) check() error {
	for _, v := range []float64{s.W, s.H} {
		if !(v >= minPageMM && v <= maxPageMM) {
			return fmt.Errorf("each side must be between %d and %d mm (got %.4g × %.4g mm)", minPageMM, maxPageMM, s.W, s.H)
		}
	}
	return nil
}

// Portrait returns the size with the longer side down.
func (s Size) Portrait() Size {
	if s.W > s.H {
		return Size{s.H, s.W}
	}
	return s
}

// Landscape returns the size with the longer side across.
func (s Size) Landscape() Size {
	if s.H > s.W {
		return Size{s.H, s.W}
	}
	return s
}

// Points returns the size in PDF points (1/72 inch, ISO 32000-1 §8.3.2).
func (s Size) Points() (w, h float64) { return s.W / mmPerPt, s.H / mmPerPt }

// Pixels returns the size in whole pixels at dpi dots per inch.
func (s Size) Pixels(dpi float64) (w, h int) { return Pixels(s.W, dpi), Pixels(s.H, dpi) }

// String writes the size as "210 × 297 mm".
func (s Size) String() string {
	return fmt.Sprintf("%s × %s mm", strconv.FormatFloat(round(s.W, 1), 'f', -1, 64), strconv.FormatFloat(round(s.H, 1), 'f', -1, 64))
}

func round(v float64, digits int) float64 {
	p := math.Pow(10, float64(digits))
	return math.Round(v*p) / p
}

// Pixels converts a length in millimetres to whole pixels at dpi, rounding
// to the nearest pixel: 210 mm at 300 dpi is 2480.3 → 2480 px.
func Pixels(mm, dpi float64) int { return int(math.Round(mm / mmPerInch * dpi)) }

// PixelsPerMetre is the pHYs unit of a PNG (W3C PNG specification,
// §11.3.5.3): dpi / 0.0254, rounded; 300 dpi is 11811.
func PixelsPerMetre(dpi float64) uint32 { return uint32(math.Round(dpi / 0.0254)) }

// ParseLength reads a length with an optional unit (mm, cm, in, pt;
// millimetres when none is given), e.g. "12", "12mm", "0.5in", and
// returns millimetres.
func ParseLength(s string) (float64, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	unit := 1.0
	for _, u := range []struct {
		suffix string
		mm     float64
	}{{"mm", 1}, {"cm", 10}, {"in", mmPerInch}, {"pt", mmPerPt}} {
		if strings.HasSuffix(t, u.suffix) {
			unit, t = u.mm, strings.TrimSpace(strings.TrimSuffix(t, u.suffix))
			break
		}
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("page: length %q: want a number with an optional unit mm, cm, in or pt", s)
	}
	return v * unit, nil
}
