package page

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// Page sizes: ISO 216 (A series, millimetres) and ANSI/ASME Y14.1 (US
// sizes, inches: A = Letter 8.5 × 11, B = Tabloid 11 × 17).
func TestParseSize(t *testing.T) {
	for _, c := range []struct {
		in   string
		w, h float64 // mm
	}{
		{"A4", 210, 297},          // ISO 216
		{"a4", 210, 297},          // any case
		{" A3 ", 297, 420},        // ISO 216
		{"A5", 148, 210},          // ISO 216
		{"A2", 420, 594},          // ISO 216
		{"Letter", 215.9, 279.4},  // ANSI/ASME Y14.1 size A, 8.5 × 11 in
		{"Tabloid", 279.4, 431.8}, // ANSI/ASME Y14.1 size B, 11 × 17 in
		{"Ledger", 431.8, 279.4},  // size B, landscape
		{"Legal", 215.9, 355.6},   // 8.5 × 14 in
		{"300x200mm", 300, 200},
		{"300 x 200 mm", 300, 200},
		{"300×200mm", 300, 200},
		{"11x17in", 279.4, 431.8},
		{"8.5x11in", 215.9, 279.4},
		{"30x20cm", 300, 200},
		{"420x297", 420, 297}, // bare numbers are mm
		{"612x792pt", 215.9, 279.4},
	} {
		got, err := ParseSize(c.in)
		if err != nil {
			t.Errorf("ParseSize(%q): %v", c.in, err)
			continue
		}
		if math.Abs(got.W-c.w) > 1e-9 || math.Abs(got.H-c.h) > 1e-9 {
			t.Errorf("ParseSize(%q) = %.6g × %.6g mm, want %g × %g", c.in, got.W, got.H, c.w, c.h)
		}
	}
}

func TestParseSizeErrors(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"A9", `page: size "A9": want a name`},
		{"", `page: size "": want a name`},
		{"300x", `page: size "300x": want a name`},
		{"axbmm", `page: size "axbmm": "a" is not a number`},
		{"10x10mm", "each side must be between 50 and 1500 mm"},
		{"100x99999mm", "each side must be between 50 and 1500 mm"},
		{"-210x297mm", "each side must be between 50 and 1500 mm"},
		{"NaNxNaN", "each side must be between"},
	} {
		_, err := ParseSize(c.in)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("ParseSize(%q) error = %v, want it to contain %q", c.in, err, c.want)
		}
	}
}

func TestOrientation(t *testing.T) {
	if got := A4.Landscape(); got != (Size{297, 210}) {
		t.Errorf("A4 landscape = %v", got)
	}
	if got := A4.Landscape().Portrait(); got != A4 {
		t.Errorf("A4 landscape portrait = %v", got)
	}
	if got := A4.Portrait(); got != A4 {
		t.Errorf("A4 portrait = %v", got)
	}
}

// mm → px: px = round(mm / 25.4 × dpi); CHECKS.md "Print": A4 at 300 dpi
// is 2480 × 3508 px. PNG pHYs: W3C PNG specification §11.3.5.3, pixels
// per metre = dpi / 0.0254 rounded: 300 dpi → 11811, 600 → 23622.
func TestPixels(t *testing.T) {
	for _, c := range []struct {
		mm, dpi float64
		px      int
	}{
		{210, 300, 2480}, // 2480.31
		{297, 300, 3508}, // 3507.87
		{25.4, 300, 300}, // one inch
		{25.4, 72, 72},
		{215.9, 300, 2550}, // Letter 8.5 in
		{279.4, 300, 3300}, // Letter 11 in
		{210, 600, 4961},   // 4960.63
		{297, 150, 1754},   // 1753.94
		{0, 300, 0},
	} {
		if got := Pixels(c.mm, c.dpi); got != c.px {
			t.Errorf("Pixels(%v mm, %v dpi) = %d, want %d", c.mm, c.dpi, got, c.px)
		}
	}
	if w, h := A4.Pixels(300); w != 2480 || h != 3508 {
		t.Errorf("A4 at 300 dpi = %d × %d px, want 2480 × 3508", w, h)
	}
	for _, c := range []struct {
		dpi float64
		ppm uint32
	}{{300, 11811}, {600, 23622}, {72, 2835}, {96, 3780}, {150, 5906}} {
		if got := PixelsPerMetre(c.dpi); got != c.ppm {
			t.Errorf("PixelsPerMetre(%v) = %d, want %d", c.dpi, got, c.ppm)
		}
	}
}

// PDF points: 1/72 inch (ISO 32000-1 §8.3.2); A4 = 595.28 × 841.89 pt.
func TestPoints(t *testing.T) {
	w, h := A4.Points()
	if math.Abs(w-595.28) > 0.005 || math.Abs(h-841.89) > 0.005 {
		t.Errorf("A4 = %.3f × %.3f pt, want 595.28 × 841.89", w, h)
	}
	w, h = Letter.Points()
	if math.Abs(w-612) > 1e-9 || math.Abs(h-792) > 1e-9 {
		t.Errorf("Letter = %v × %v pt, want 612 × 792", w, h)
	}
}

func TestParseLength(t *testing.T) {
	for _, c := range []struct {
		in string
		mm float64
	}{{"12", 12}, {"12mm", 12}, {"1.5cm", 15}, {"0.5in", 12.7}, {"72pt", 25.4}, {" 3 mm ", 3}, {"0", 0}} {
		got, err := ParseLength(c.in)
		if err != nil || math.Abs(got-c.mm) > 1e-9 {
			t.Errorf("ParseLength(%q) = %v, %v; want %v", c.in, got, err, c.mm)
		}
	}
	for _, in := range []string{"", "mm", "twelve", "1e999", "NaN"} {
		if _, err := ParseLength(in); err == nil || !strings.HasPrefix(err.Error(), "page: length") {
			t.Errorf("ParseLength(%q) error = %v", in, err)
		}
	}
}

func ExampleParseSize() {
	for _, name := range []string{"A4", "Letter", "300x200mm"} {
		s, _ := ParseSize(name)
		w, h := s.Pixels(300)
		fmt.Printf("%s: %s = %d × %d px at 300 dpi\n", name, s, w, h)
	}
	fmt.Println("300 dpi =", PixelsPerMetre(300), "px/m")
	// Output:
	// A4: 210 × 297 mm = 2480 × 3508 px at 300 dpi
	// Letter: 215.9 × 279.4 mm = 2550 × 3300 px at 300 dpi
	// 300x200mm: 300 × 200 mm = 3543 × 2362 px at 300 dpi
	// 300 dpi = 11811 px/m
}
