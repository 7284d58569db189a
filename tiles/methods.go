package tiles

import (
	"fmt"
	"strings"

	"github.com/stipple-maps/stipple/render"
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
// made to the areas, and the caution.
func MethodsText(m *Metadata) string {
	var b strings.Builder
	me := m.Methods
	if me == nil {
		me = &Methods{Source: render.CreditLine(m.Credit), PeoplePerDot: m.PeoplePerDot, Seed: m.Seed, Caution: m.Caution}
	}
	title := m.Title
	if title == "" {
		title = "this map"
	}
	fmt.Fprintf(&b, "About the map: %s\n\n", title)
	if me.Source != "" {
		fmt.Fprintf(&b, "%s\n\n", me.Source)
	} else {
		b.WriteString("Source: not given in the map file.\n\n")
	}
	fmt.Fprintf(&b, "%s. The map shows %s people in %s with %s dots.\n",
		render.DotNote(me.PeoplePerDot), render.FormatCount(me.People), plural(me.Groups, "group", "groups"), render.FormatCount(float64(me.Dots)))
	fmt.Fprintf(&b, "Each dot is placed at random inside the area its people were counted in, by a generator seeded with %d: the same data and seed place every dot in the same spot.\n", me.Seed)
	if me.RoundingRule != "" {
		fmt.Fprintf(&b, "Rounding: %s\n", me.RoundingRule)
	}
	b.WriteString("\n")
	if len(me.NotDrawn) == 0 {
		b.WriteString("Not drawn: none; every person counted has a dot.\n")
	} else {
		b.WriteString("Not drawn:\n")
		for _, n := range me.NotDrawn {
			where := ""
			if n.Areas > 0 {
				where = " in " + plural(n.Areas, "area", "areas")
			}
			fmt.Fprintf(&b, "- %s people%s: %s\n", render.FormatCount(n.People), where, n.Reason)
		}
	}
	var parts []string
	for _, r := range repairOrder {
		if n := me.Repairs[r.key]; n > 0 {
			parts = append(parts, fmt.Sprintf("%s %d", r.text, n))
		}
	}
	repairs := 0
	for _, n := range me.Repairs {
		repairs += n
	}
	if me.GeometryNotes == 0 && repairs == 0 {
		b.WriteString("Repairs: none; the area boundaries were used as they were.\n")
	} else {
		fmt.Fprintf(&b, "Repairs: %s made while reading the area boundaries", plural(repairs, "repair", "repairs"))
		if len(parts) > 0 {
			fmt.Fprintf(&b, " (%s)", strings.Join(parts, ", "))
		}
		fmt.Fprintf(&b, "; %s on the areas (stipple inspect lists them).\n", plural(me.GeometryNotes, "geometry note", "geometry notes"))
	}
	if ms := m.Measures; ms != nil && ms.H != nil && ms.M != nil {
		b.WriteString("\nMixing measures (Theil & Finizza 1971; Reardon & Firebaugh 2002; per-area figures in " + ms.AreaTable + "):\n")
		fmt.Fprintf(&b, "- Theil's H = %.3f: how unevenly the groups are spread over the areas, from 0 (every area has the whole map's mix) to 1 (each area holds one group only).\n", *ms.H)
		fmt.Fprintf(&b, "- Mutual information M = %.3f: H times the entropy of the whole map's mix of groups, in natural units.\n", *ms.M)
		if iv := ms.Intervals; iv != nil && iv.H[0] != nil && iv.H[1] != nil {
			fmt.Fprintf(&b, "- The counts are survey estimates: over %d draws of the counts within their margins of error (seed %d), %.0f%% of the values of H lie between %.3f and %.3f.\n",
				iv.Draws, iv.Seed, 100*iv.Level, *iv.H[0], *iv.H[1])
		}
		b.WriteString("These measure evenness; exposure, concentration, centralization and clustering are other sides of segregation (Massey & Denton 1988).\n")
	}
	fmt.Fprintf(&b, "\nCaution: %s\n", me.Caution)
	if m.Version != "" {
		fmt.Fprintf(&b, "\nMade with stipple %s.\n", m.Version)
	}
	return b.String()
}

// repairOrder names the keys of Methods.Repairs in the order the note
// lists them.
var repairOrder = []struct{ key, text string }{
	{"closed_rings", "rings closed"},
	{"dropped_points", "repeated points dropped"},
	{"dropped_rings", "rings without area dropped"},
	{"self_intersecting", "self-intersecting rings filled even-odd"},
	{"antimeridian", "rings unwrapped at 180°"},
	{"polar_rings", "rings closed along a pole"},
	{"empty_features", "areas without a polygon"},
}

// RepairKeys lists the keys Methods.Repairs may hold.
func RepairKeys() []string {
	k := make([]string, len(repairOrder))
	for i, r := range repairOrder {
		k[i] = r.key
	}
	return k
}

func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return render.FormatCount(float64(n)) + " " + many
}
