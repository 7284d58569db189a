package geo

import (
	"fmt"
	"math"
	"testing"
)

func TestNumber(t *testing.T) {
	cases := []struct {
		in      any
		want    float64
		wantErr string
	}{
		{int64(12), 12, ""},
		{12.5, 12.5, ""},
		{"340", 340, ""},
		{" 7.25 ", 7.25, ""},
		{int64(0), 0, ""},
		{nil, 0, "value is null; want a number"},
		{"lots", 0, `value "lots" is not a number`},
		{"", 0, `value "" is not a number`},
		{int64(-3), 0, "value -3 is negative; counts of people cannot be"},
		{"-1", 0, "value -1 is negative; counts of people cannot be"},
		{math.Inf(1), 0, "value +Inf is not finite"},
		{"NaN", 0, `value "NaN" is not a finite number`},
		{math.NaN(), 0, "value NaN is not finite"},
		// strconv.ParseFloat reads these three as 16, 1000 and +Inf (Go
		// strconv documentation, ParseFloat); counts refuse them.
		{"0x1p4", 0, `value "0x1p4" is not a number`},
		{"1_000", 0, `value "1_000" is not a number`},
		{"inf", 0, `value "inf" is not a finite number`},
		{"1e3", 1000, ""},
		{true, 0, "value true is a boolean; want a number"},
	}
	for _, c := range cases {
		got, err := Number(c.in)
		msg := ""
		if err != nil {
			msg = err.Error()
		}
		if msg != c.wantErr || got != c.want {
			t.Errorf("Number(%#v) = %v, %q; want %v, %q", c.in, got, msg, c.want, c.wantErr)
		}
	}
}

func TestCountSumsFieldsAndNamesTheBadOne(t *testing.T) {
	f := &Feature{Index: 4, ID: "0042", Props: map[string]any{"a": int64(3), "b": "4.5", "c": "n/a"}}
	if n, err := Count("t.geojson", f, []string{"a", "b"}); err != nil || n != 7.5 {
		t.Errorf("Count(a, b) = %v, %v; want 7.5", n, err)
	}
	_, err := Count("t.geojson", f, []string{"a", "c"})
	if want := `t.geojson: feature 4 (id "0042"): field "c": value "n/a" is not a number`; err == nil || err.Error() != want {
		t.Errorf("err = %v; want %s", err, want)
	}
	_, err = Count("t.geojson", f, []string{"zz"})
	if want := `t.geojson: feature 4 (id "0042"): field "zz": count field is missing`; err == nil || err.Error() != want {
		t.Errorf("err = %v; want %s", err, want)
	}
}

func TestText(t *testing.T) {
	for _, c := range []struct {
		in   any
		want string
	}{{"01001", "01001"}, {int64(1001), "1001"}, {1001.0, "1001"}, {10.5, "10.5"}, {nil, ""}, {true, "true"}} {
		if got := Text(c.in); got != c.want {
			t.Errorf("Text(%#v) = %q; want %q", c.in, got, c.want)
		}
	}
}

func ExampleError() {
	err := &Error{Path: "tracts.geojson", Index: 12, ID: "06075", Field: "pop_a", Message: "value -3 is negative"}
	fmt.Println(err)
	// Output: tracts.geojson: feature 12 (id "06075"): field "pop_a": value -3 is negative
}
