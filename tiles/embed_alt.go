package tiles

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/theme"
)

// AltText describes one or more maps in plain text, for screen readers and
// for the alt attribute of a picture of the map: what the map shows, each
// category with its total and share, the dot value, where the dots sit,
// the caution and the source. Several maps (a viewer's layers) get one
// paragraph each. The words are each map's theme's (Metadata.Theme; the
// first map's for the opening sentence of several).
func AltText(maps ...*Metadata) string {
	var b strings.Builder
	if len(maps) > 1 {
		tx := theme.Or(maps[0].Theme).Text
		b.WriteString(theme.Fill(tx.AltViewer, "n", strconv.Itoa(len(maps))))
		b.WriteString("\n\n")
	}
	for i, m := range maps {
		if i > 0 {
			b.WriteString("\n")
		}
		if len(maps) > 1 {
			tx := theme.Or(m.Theme).Text
			label := m.LayerLabel
			if label == "" {
				label = m.Layer
			}
			n := strconv.Itoa(i + 1)
			if label != "" {
				b.WriteString(theme.Fill(tx.AltMapNumberNamed, "n", n, "name", label))
			} else {
				b.WriteString(theme.Fill(tx.AltMapNumber, "n", n))
			}
			b.WriteString(" ")
		}
		b.WriteString(altOne(m))
		b.WriteString("\n")
	}
	return b.String()
}

func altOne(m *Metadata) string {
	tx := theme.Or(m.Theme).Text
	var b strings.Builder
	// sentence adds s after a space.
	sentence := func(s string) {
		if b.Len() > 0 {
			b.WriteString(" ")
		}
		b.WriteString(s)
	}
	title := strings.TrimSpace(m.Title)
	if title == "" {
		title = tx.AltUntitled
	}
	sentence(theme.Fill(tx.AltTitle, "title", strings.TrimSuffix(title, ".")))
	if m.PeoplePerDot == 1 {
		sentence(tx.AltDotsOne)
	} else {
		sentence(theme.Fill(tx.AltDots, "n", render.FormatCount(m.PeoplePerDot)))
	}
	total := 0.0
	for _, c := range m.Categories {
		total += c.People
	}
	switch len(m.Categories) {
	case 0:
	case 1:
		c := m.Categories[0]
		sentence(theme.Fill(tx.AltOneGroup, "label", c.Label, "people", render.FormatCount(c.People)))
	default:
		sentence(theme.Fill(tx.AltGroups, "n", strconv.Itoa(len(m.Categories)), "people", render.FormatCount(total)))
		for i, c := range m.Categories {
			sep := ";"
			if i == len(m.Categories)-1 {
				sep = "."
			}
			share := 0.0
			if total > 0 {
				share = 100 * c.People / total
			}
			sentence(theme.Fill(tx.AltGroup, "label", c.Label, "people", render.FormatCount(c.People), "share", fmt.Sprintf("%.1f%%", share)) + sep)
		}
	}
	if n := m.NotDrawn.People + m.NotDrawn.RowsWithoutArea; n > 0 {
		sentence(theme.Fill(tx.AltNotDrawn, "people", render.FormatCount(n)))
	}
	if m.NotDrawn.BeyondTileLimit > 0 {
		sentence(theme.Fill(tx.AltBeyondLimit, "people", render.FormatCount(m.NotDrawn.BeyondTileLimit)))
	}
	if ms := m.Measures; ms != nil && ms.H != nil && ms.M != nil {
		sentence(theme.Fill(tx.AltTheilH, "h", fmt.Sprintf("%.3f", *ms.H)))
		sentence(theme.Fill(tx.AltMutualInformation, "m", fmt.Sprintf("%.3f", *ms.M)))
		if iv := ms.Intervals; iv != nil && iv.H[0] != nil && iv.H[1] != nil {
			sentence(theme.Fill(tx.AltInterval, "draws", strconv.Itoa(iv.Draws), "level", fmt.Sprintf("%.0f%%", 100*iv.Level),
				"low", fmt.Sprintf("%.3f", *iv.H[0]), "high", fmt.Sprintf("%.3f", *iv.H[1])))
		}
	}
	if where := boundsText(tx, m.Bounds); where != "" {
		sentence(where)
	}
	if c := strings.TrimSpace(m.Caution); c != "" {
		sentence(c)
	}
	if c := m.Theme.CreditLine(m.Credit); c != "" {
		if !strings.HasSuffix(c, ".") {
			c += "."
		}
		sentence(c)
	}
	return b.String()
}

// boundsText says where [west, south, east, north] is, in the theme's
// words (AltCovers): "The map covers longitudes 128.56°W to 128.26°W and
// latitudes 34.36°S to 34.09°S."; "" for bounds that are not finite or
// all zero.
func boundsText(tx theme.Text, bb [4]float64) string {
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
		return theme.Fill(h, "degrees", fmt.Sprintf("%.2f", v))
	}
	return theme.Fill(tx.AltCovers,
		"west", deg(bb[0], tx.LongitudeEast, tx.LongitudeWest), "east", deg(bb[2], tx.LongitudeEast, tx.LongitudeWest),
		"south", deg(bb[1], tx.LatitudeNorth, tx.LatitudeSouth), "north", deg(bb[3], tx.LatitudeNorth, tx.LatitudeSouth))
}
