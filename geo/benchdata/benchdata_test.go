package benchdata

import "testing"

func TestCountryHoldsExactlyThePeopleAsked(t *testing.T) {
	for _, people := range []int64{0, 1, 12345, 10_000_000} {
		l := Country(people, 20, 10, 1)
		if len(l.Features) != 200 {
			t.Fatalf("%d areas; want 200", len(l.Features))
		}
		var sum int64
		for _, f := range l.Features {
			for _, k := range Fields {
				v := f.Props[k].(int64)
				if v < 0 {
					t.Fatalf("%s: %s = %d", f.ID, k, v)
				}
				sum += v
			}
		}
		if sum != people {
			t.Errorf("people %d; want %d", sum, people)
		}
	}
}

func TestCountryIsSeeded(t *testing.T) {
	a, b := Country(1000, 5, 5, 7), Country(1000, 5, 5, 7)
	for i := range a.Features {
		if a.Features[i].Props["grp_a"] != b.Features[i].Props["grp_a"] || a.Features[i].Geometry[0][0][3] != b.Features[i].Geometry[0][0][3] {
			t.Fatal("same seed, different country")
		}
	}
}
