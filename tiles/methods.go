package tiles

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/render/theme"
)

// MethodsFile is the name of the methods note written beside map.json.
const MethodsFile = "methods.txt"

// Methods is how a map was made, in the terms a reader of the story needs:
// the "methods" block of map.json, and the source of methods.txt.
type Methods struct {
	// Source is the credit line: the data's source and vintage as the map
	// file's credit gives them.
	Source       string  `json:"source"`
	PeoplePerDot float64 `json:"people_per_dot"`
	Seed         uint64  `json:"seed"`
	// Rounding is the map file's rounding rule, "random" or "exact", and
	// RoundingRule says what it does in a sentence.
	Rounding     string `json:"rounding"`
	RoundingRule string `json:"rounding_rule"`
	// People and Dots are the totals over the categories: counted, and
	// drawn on the tiles.
	People float64 `json:"people"`
	Dots   int     `json:"dots_drawn"`
	Groups int     `json:"groups"`
	// NotDrawn lists the people who have no dot on the tiles, by reason.
	NotDrawn []MethodsNotDrawn `json:"not_drawn"`
	// GeometryNotes counts the notes made while reading the areas (each a
	// repair or a warning naming the area), and Repairs the repairs by
	// kind (only kinds that happened).
	GeometryNotes int            `json:"geometry_notes"`
	Repairs       map[string]int `json:"repairs"`
	Caution       string         `json:"caution"`
}

// MethodsNotDrawn is the people with no dot for one reason.
type MethodsNotDrawn struct {
	Reason string  `json:"reason"`
	Areas  int     `json:"areas,omitempty"`
	People float64 `json:"people"`
}

// MethodsText is the methods note of a map, plain text that a desk can
// paste under a story: the source, the dot value, how dots were placed
// and rounded (with the seed), what was not drawn and why, the repairs
// made to the areas, and the caution, in the words of the map's theme
// (Metadata.Theme).
func MethodsText(m *Metadata) string {
	th := theme.Or(m.Theme)
	tx := th.Text
	var b strings.Builder
	line := func(s string) {
		b.WriteString(s)
		b.WriteString("\n")
	}
	me := m.Methods
	if me == nil {
		me = &Methods{Source: m.Theme.CreditLine(m.Credit), PeoplePerDot: m.PeoplePerDot, Seed: m.Seed, Caution: m.Caution}
	}
	title := m.Title
	if title == "" {
		title = tx.MethodsUntitled
	}
	line(theme.Fill(tx.MethodsTitle, "title", title) + "\n")
	if me.Source != "" {
		line(me.Source + "\n")
	} else {
		line(tx.MethodsNoSource + "\n")
	}
	line(theme.Fill(tx.MethodsTotals, "dot_note", th.DotNote(me.PeoplePerDot), "people", render.FormatCount(me.People),
		"groups", count(me.Groups, tx.MethodsGroupsOne, tx.MethodsGroups), "dots", render.FormatCount(float64(me.Dots))))
	line(theme.Fill(tx.MethodsPlacement, "seed", strconv.FormatUint(me.Seed, 10)))
	if me.RoundingRule != "" {
		line(theme.Fill(tx.MethodsRounding, "rule", me.RoundingRule))
	}
	b.WriteString("\n")
	if len(me.NotDrawn) == 0 {
		line(tx.MethodsAllDrawn)
	} else {
		line(tx.MethodsNotDrawn)
		for _, n := range me.NotDrawn {
			people := render.FormatCount(n.People)
			if n.Areas > 0 {
				line("- " + theme.Fill(tx.MethodsNotDrawnIn, "people", people, "areas", count(n.Areas, tx.MethodsAreasOne, tx.MethodsAreas), "reason", n.Reason))
			} else {
				line("- " + theme.Fill(tx.MethodsNotDrawnRow, "people", people, "reason", n.Reason))
			}
		}
	}
	var parts []string
	for _, r := range repairOrder {
		if n := me.Repairs[r.key]; n > 0 {
			parts = append(parts, theme.Fill(*r.text(&tx), "n", strconv.Itoa(n)))
		}
	}
	repairs := 0
	for _, n := range me.Repairs {
		repairs += n
	}
	if me.GeometryNotes == 0 && repairs == 0 {
		line(tx.MethodsNoRepairs)
	} else {
		rs := count(repairs, tx.MethodsRepairsCountOne, tx.MethodsRepairsCount)
		notes := count(me.GeometryNotes, tx.MethodsNotesCountOne, tx.MethodsNotesCount)
		if len(parts) > 0 {
			line(theme.Fill(tx.MethodsRepairs, "repairs", rs, "kinds", strings.Join(parts, ", "), "notes", notes))
		} else {
			line(theme.Fill(tx.MethodsRepairsNoKinds, "repairs", rs, "notes", notes))
		}
	}
	if ms := m.Measures; ms != nil && ms.H != nil && ms.M != nil {
		b.WriteString("\n")
		line(theme.Fill(tx.MethodsMeasures, "file", ms.AreaTable))
		line("- " + theme.Fill(tx.MethodsTheilH, "h", fmt.Sprintf("%.3f", *ms.H)))
		line("- " + theme.Fill(tx.MethodsMutualInformation, "m", fmt.Sprintf("%.3f", *ms.M)))
		if iv := ms.Intervals; iv != nil && iv.H[0] != nil && iv.H[1] != nil {
			line("- " + theme.Fill(tx.MethodsInterval, "draws", strconv.Itoa(iv.Draws), "seed", strconv.FormatUint(iv.Seed, 10),
				"level", fmt.Sprintf("%.0f%%", 100*iv.Level), "low", fmt.Sprintf("%.3f", *iv.H[0]), "high", fmt.Sprintf("%.3f", *iv.H[1])))
		}
		line(tx.MethodsEvenness)
	}
	b.WriteString("\n")
	line(theme.Fill(tx.MethodsCaution, "caution", me.Caution))
	if m.Version != "" {
		b.WriteString("\n")
		line(theme.Fill(tx.MethodsMadeWith, "version", m.Version))
	}
	return b.String()
}

// repairOrder names the keys of Methods.Repairs in the order the note
// lists them, each with its words in a theme.
var repairOrder = []struct {
	key  string
	text func(*theme.Text) *string
}{
	{"closed_rings", func(t *theme.Text) *string { return &t.MethodsRepairClosedRings }},
	{"dropped_points", func(t *theme.Text) *string { return &t.MethodsRepairDroppedPoints }},
	{"dropped_rings", func(t *theme.Text) *string { return &t.MethodsRepairDroppedRings }},
	{"self_intersecting", func(t *theme.Text) *string { return &t.MethodsRepairSelfIntersecting }},
	{"antimeridian", func(t *theme.Text) *string { return &t.MethodsRepairAntimeridian }},
	{"polar_rings", func(t *theme.Text) *string { return &t.MethodsRepairPolarRings }},
	{"empty_features", func(t *theme.Text) *string { return &t.MethodsRepairEmptyFeatures }},
}

// RepairKeys lists the keys Methods.Repairs may hold.
func RepairKeys() []string {
	k := make([]string, len(repairOrder))
	for i, r := range repairOrder {
		k[i] = r.key
	}
	return k
}

// count is one when n is 1, else many with {n} filled in ("1,204 areas").
func count(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return theme.Fill(many, "n", render.FormatCount(float64(n)))
}
