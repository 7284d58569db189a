package geo

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Text formats an attribute value as text: integers without a decimal point,
// strings as they are. It is how ids are compared across files.
func Text(v any) string {
	switch x := v.(type) {
	case nil:
		return ""
	case string:
		return x
	case int64:
		return strconv.FormatInt(x, 10)
	case int:
		return strconv.Itoa(x)
	case float64:
		if x == math.Trunc(x) && math.Abs(x) < 1e15 {
			return strconv.FormatInt(int64(x), 10)
		}
		return strconv.FormatFloat(x, 'g', -1, 64)
	case bool:
		return strconv.FormatBool(x)
	default:
		return fmt.Sprint(x)
	}
}

// Number reads one attribute value as a count of people: a non-negative,
// finite number, given as a number or as text in the syntax of
// ParseDecimal, white space around it ignored ("1200", " 12.5 ", "1.2e3").
func Number(v any) (float64, error) {
	var f float64
	switch x := v.(type) {
	case nil:
		return 0, fmt.Errorf("value is null; want a number")
	case int64:
		f = float64(x)
	case int:
		f = float64(x)
	case float64:
		f = x
	case string:
		p, err := ParseDecimal(strings.TrimSpace(x))
		if err != nil {
			return 0, fmt.Errorf("value %v", err)
		}
		f = p
	case bool:
		return 0, fmt.Errorf("value %v is a boolean; want a number", x)
	default:
		return 0, fmt.Errorf("value %v is not a number", x)
	}
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return 0, fmt.Errorf("value %v is not finite", v)
	}
	if f < 0 {
		return 0, fmt.Errorf("value %v is negative; counts of people cannot be", v)
	}
	return f, nil
}

// Count sums the named fields of f as people. path names the source file in
// the error, which also names the feature and the first bad field.
func Count(path string, f *Feature, fields []string) (float64, error) {
	var sum float64
	for _, name := range fields {
		v, ok := f.Props[name]
		if !ok {
			return 0, &Error{Path: path, Index: f.Index, ID: f.ID, Field: name, Message: "count field is missing"}
		}
		n, err := Number(v)
		if err != nil {
			return 0, &Error{Path: path, Index: f.Index, ID: f.ID, Field: name, Message: err.Error()}
		}
		sum += n
	}
	return sum, nil
}
