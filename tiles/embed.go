package tiles

import (
	"fmt"
	"html"
	"math"
	"strings"
)

// Aspect is an iframe's width : height.
type Aspect struct{ W, H int }

// aspects are the shapes an embed may take, wide to tall.
var aspects = []Aspect{{16, 9}, {3, 2}, {4, 3}, {1, 1}, {4, 5}}

// EmbedAspect picks the iframe shape that fits the map's bounds best: the
// shape of the bounds in Web Mercator, rounded to the nearest of 16:9, 3:2,
// 4:3, 1:1 and 4:5 (a phone column cannot take anything taller).
func EmbedAspect(m *Metadata) Aspect {
	w, s, e, n := m.Bounds[0], m.Bounds[1], m.Bounds[2], m.Bounds[3]
	if !(e > w) || !(n > s) {
		return Aspect{4, 3}
	}
	dx := (e - w) / 360
	dy := mercY(s) - mercY(n)
	if !(dy > 0) {
		return Aspect{4, 3}
	}
	r := math.Log(dx / dy)
	best := aspects[0]
	for _, a := range aspects[1:] {
		if math.Abs(math.Log(float64(a.W)/float64(a.H))-r) < math.Abs(math.Log(float64(best.W)/float64(best.H))-r) {
			best = a
		}
	}
	return best
}

// EmbedSnippet returns the HTML a story pastes to host the map: an iframe
// of embed.html at src (the URL where the output folder will be published,
// ending in embed.html; "embed.html" when empty), full width with the
// fixed aspect ratio of EmbedAspect, lazy-loaded, with the map's title as
// the frame's accessible name. The iframe is sandboxed to scripts only:
// the map cannot navigate, open windows or reach the host page.
func EmbedSnippet(m *Metadata, src string) string {
	if src == "" {
		src = EmbedPage
	}
	a := EmbedAspect(m)
	var b strings.Builder
	fmt.Fprintf(&b, `<iframe src="%s" title="%s" `, html.EscapeString(src), html.EscapeString(m.Title))
	fmt.Fprintf(&b, `style="display:block;width:100%%;aspect-ratio:%d/%d;border:0" `, a.W, a.H)
	b.WriteString(`loading="lazy" referrerpolicy="no-referrer" sandbox="allow-scripts"></iframe>`)
	return b.String()
}
