package tiles

import (
	"fmt"
	"math"
	"strings"

	"github.com/stipple-maps/stipple/render"
)

// AltText describes one or more maps in plain text, for screen readers and
// for the alt attribute of a picture of the map: what the map shows, each
// category with its total and share, the dot value, where the dots sit,
// the caution and the source. Several maps (a viewer's layers) get one
// paragraph each.
func AltText(maps ...*Metadata) string {
	var b strings.Builder
	if len(maps) > 1 {
		fmt.Fprintf(&b, "A viewer of %d dot-density maps, which can be shown one at a time or two side by side.\n\n", len(maps))
	}
	for i, m := range maps {
		if i > 0 {
			b.WriteString("\n")
		}
		if len(maps) > 1 {
			label := m.LayerLabel
			if label == "" {
				label = m.Layer
			}
			if label != "" {
				fmt.Fprintf(&b, "Map %d (%s): ", i+1, label)
			} else {
				fmt.Fprintf(&b, "Map %d: ", i+1)
			}
		}
		b.WriteString(altOne(m))
		b.WriteString("\n")
	}
	return b.String()
}

func altOne(m *Metadata) string {
	var b strings.Builder
	title := strings.TrimSpace(m.Title)
	if title == "" {
		title = "untitled"
	}
	fmt.Fprintf(&b, "Dot-density map: %s.", strings.TrimSuffix(title, "."))
	if m.PeoplePerDot == 1 {
		b.WriteString(" Each dot stands for one person")
	} else {
		fmt.Fprintf(&b, " Each dot stands for %s people", render.FormatCount(m.PeoplePerDot))
	}
	b.WriteString(", coloured by group and placed at random inside the area where they were counted.")
	total := 0.0
	for _, c := range m.Categories {
		total += c.People
	}
	switch len(m.Categories) {
	case 0:
	case 1:
		fmt.Fprintf(&b, " One group: %s, %s people.", m.Categories[0].Label, render.FormatCount(m.Categories[0].People))
	default:
		fmt.Fprintf(&b, " %d groups, %s people in all:", len(m.Categories), render.FormatCount(total))
		for i, c := range m.Categories {
			sep := ";"
			if i == len(m.Categories)-1 {
				sep = "."
			}
			share := 0.0
			if total > 0 {
				share = 100 * c.People / total
			}
			fmt.Fprintf(&b, " %s, %s people (%.1f%%)%s", c.Label, render.FormatCount(c.People), share, sep)
		}
	}
	if m.NotDrawn.People+m.NotDrawn.RowsWithoutArea > 0 {
		fmt.Fprintf(&b, " %s people are not drawn.", render.FormatCount(m.NotDrawn.People+m.NotDrawn.RowsWithoutArea))
	}
	if m.NotDrawn.BeyondTileLimit > 0 {
		fmt.Fprintf(&b, " %s people are beyond the tile projection's latitude limit (85.05° north or south) and are not on the tiles.", render.FormatCount(m.NotDrawn.BeyondTileLimit))
	}
	if ms := m.Measures; ms != nil && ms.H != nil && ms.M != nil {
		fmt.Fprintf(&b, " Theil's H, how unevenly the groups are spread over the areas (0 when every area has the whole map's mix, 1 when each area holds one group), is %.3f.", *ms.H)
		fmt.Fprintf(&b, " The mutual information index M, H times the diversity of the whole map, is %.3f.", *ms.M)
		if iv := ms.Intervals; iv != nil && iv.H[0] != nil && iv.H[1] != nil {
			fmt.Fprintf(&b, " The counts are survey estimates: over %d seeded draws of the counts within their margins of error, %.0f%% of the values of H lie between %.3f and %.3f.",
				iv.Draws, 100*iv.Level, *iv.H[0], *iv.H[1])
		}
	}
	if where := boundsText(m.Bounds); where != "" {
		fmt.Fprintf(&b, " The map covers %s.", where)
	}
	if c := strings.TrimSpace(m.Caution); c != "" {
		fmt.Fprintf(&b, " %s", c)
	}
	if c := render.CreditLine(m.Credit); c != "" {
		fmt.Fprintf(&b, " %s", c)
		if !strings.HasSuffix(c, ".") {
			b.WriteString(".")
		}
	}
	return b.String()
}

// boundsText writes [west, south, east, north] as "128.56°W to 128.26°W,
// 34.36°S to 34.09°S".
func boundsText(bb [4]float64) string {
	for _, v := range bb {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return ""
		}
	}
	if bb[0] == 0 && bb[1] == 0 && bb[2] == 0 && bb[3] == 0 {
		return ""
	}
	deg := func(v float64, pos, neg string) string {
		h := pos
		if v < 0 {
			h, v = neg, -v
		}
		return fmt.Sprintf("%.2f°%s", v, h)
	}
	return fmt.Sprintf("longitudes %s to %s and latitudes %s to %s",
		deg(bb[0], "E", "W"), deg(bb[2], "E", "W"), deg(bb[1], "N", "S"), deg(bb[3], "N", "S"))
}
