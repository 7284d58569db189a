package geo

import (
	"math"
	"testing"
)

// The accepted syntax is the decimal floating-point form of Go's own
// grammar (The Go Programming Language Specification, "Floating-point
// literals", decimal_float_lit) without underscores, plus a sign; the
// refused texts are those strconv.ParseFloat accepts beyond it (Go strconv
// documentation, ParseFloat: hexadecimal, underscores, "inf", "infinity",
// "nan").
func TestParseDecimal(t *testing.T) {
	cases := []struct {
		in      string
		want    float64
		wantErr string
	}{
		{"12", 12, ""},
		{"0", 0, ""},
		{"007", 7, ""},
		{"+7", 7, ""},
		{"-3", -3, ""},
		{"12.5", 12.5, ""},
		{".5", 0.5, ""},
		{"5.", 5, ""},
		{"1e3", 1000, ""},
		{"1.5E+2", 150, ""},
		{"25e-1", 2.5, ""},
		{"1e-400", 0, ""}, // below the smallest subnormal (IEEE 754 binary64): 0
		{"1e400", 0, `"1e400" is too large for a number`},
		{"0x1p4", 0, `"0x1p4" is not a number`},
		{"0x10", 0, `"0x10" is not a number`},
		{"1_000", 0, `"1_000" is not a number`},
		{"1,000", 0, `"1,000" is not a number`},
		{"inf", 0, `"inf" is not a finite number`},
		{"+Inf", 0, `"+Inf" is not a finite number`},
		{"-Infinity", 0, `"-Infinity" is not a finite number`},
		{"NaN", 0, `"NaN" is not a finite number`},
		{"", 0, `"" is not a number`},
		{" 12", 0, `" 12" is not a number`},
		{".", 0, `"." is not a number`},
		{"e5", 0, `"e5" is not a number`},
		{"1e", 0, `"1e" is not a number`},
		{"1.2.3", 0, `"1.2.3" is not a number`},
		{"--1", 0, `"--1" is not a number`},
		{"12 people", 0, `"12 people" is not a number`},
		{"١٢", 0, `"١٢" is not a number`}, // Arabic-Indic digits
	}
	for _, c := range cases {
		got, err := ParseDecimal(c.in)
		msg := ""
		if err != nil {
			msg = err.Error()
		}
		if msg != c.wantErr || got != c.want || math.Signbit(got) != math.Signbit(c.want) {
			t.Errorf("ParseDecimal(%q) = %v, %q; want %v, %q", c.in, got, msg, c.want, c.wantErr)
		}
	}
}
