package tiles

import (
	"strings"
	"testing"

	"github.com/paulmach/orb"
)

// ReferenceJS escapes names for a script (encoding/json escapes <, > and
// &, and U+2028/U+2029, which ECMAScript before 2019 ends lines on), and
// writes labels in placement order: rank, then name.
func TestReferenceJS(t *testing.T) {
	js, err := ReferenceJS([]Reference{{Kind: "labels", Above: true, Color: "#222222", Labels: []Label{
		{Name: "Zed</script>", Rank: 2, At: orb.Point{1.23456789, 2}},
		{Name: "Bee", Rank: 1, At: orb.Point{0, 0}},
		{Name: "Ant", Rank: 2, At: orb.Point{0, 0}},
	}}})
	if err != nil {
		t.Fatal(err)
	}
	s := string(js)
	if strings.Contains(s, "</script>") || !strings.Contains(s, `Zed\u003c/script\u003e`) {
		t.Errorf("name not escaped for a script: %s", s)
	}
	if i, j, k := strings.Index(s, "Bee"), strings.Index(s, "Ant"), strings.Index(s, "Zed"); !(i < j && j < k) {
		t.Errorf("labels not in order Bee (1), Ant (2), Zed (2): %s", s)
	}
	if !strings.Contains(s, "[1.234568,2]") {
		t.Errorf("coordinates not rounded to 1e-6: %s", s)
	}
	if !strings.HasPrefix(s, "window.stippleReference = {") {
		t.Errorf("script starts %q", s[:30])
	}
}
