package geo

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// ParseDecimal reads text as a plain decimal number, the one syntax stipple
// accepts for counts in every input format (GeoJSON and GeoPackage text,
// DBF N and F fields, CSV cells) and for sizes: an optional sign, digits with
// at most one decimal point and at least one digit ("12", "0.5", ".5",
// "12."), and an optional exponent ("1.5e3", "2E-1"). Hexadecimal ("0x10",
// "0x1p4"), digit separators ("1_000", "1,000"), "inf", "Infinity" and "NaN"
// are refused, though strconv.ParseFloat takes them. White space is not
// trimmed: callers that allow it around a value trim first.
//
// A value too large for a float64 ("1e400") is an error; one too small to
// represent reads as 0 or a subnormal, as strconv gives it. The error's text
// quotes s: `"0x10" is not a number`.
func ParseDecimal(s string) (float64, error) {
	if !isDecimal(s) {
		switch strings.ToLower(strings.TrimLeft(s, "+-")) {
		case "nan", "inf", "infinity":
			return 0, fmt.Errorf("%q is not a finite number", s)
		}
		return 0, fmt.Errorf("%q is not a number", s)
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		if errors.Is(err, strconv.ErrRange) && !math.IsInf(v, 0) {
			return v, nil // underflow: reads as 0 or a subnormal
		}
		return 0, fmt.Errorf("%q is too large for a number", s)
	}
	return v, nil
}

// isDecimal accepts [+-]digits[.digits][(e|E)[+-]digits] with at least one
// mantissa digit, and nothing else.
func isDecimal(s string) bool {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			digits++
		}
	}
	if digits == 0 {
		return false
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		ed := 0
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			ed++
		}
		if ed == 0 {
			return false
		}
	}
	return i == len(s)
}
