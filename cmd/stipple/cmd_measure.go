package main

import (
	"cmp"
	"context"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"

	"github.com/stipple-maps/stipple/geo/measure"
	"github.com/stipple-maps/stipple/render"
	"github.com/stipple-maps/stipple/tiles/mapfile"
	"github.com/stipple-maps/stipple/tiles/mapjob"
)

// measureTop is how many of the most diverse areas measure prints.
const measureTop = 5

// One sentence per measure, printed beside its value.
const (
	defH = "Theil's entropy index H: how much less diverse the average person's area is than the whole map, " +
		"as a share of the map's diversity (0 = every area mixed like the map, 1 = every area holds one group; " +
		"Theil & Finizza 1971, Reardon & Firebaugh 2002)."
	defM = "Mutual information index M: the same gap in nats, the map's diversity minus the average person's area's; " +
		"M = H × E (Reardon & Firebaugh 2002)."
	defE = "Entropy E: the map's diversity, Σ share × ln(1/share) over the groups; ln k when k groups are equal in size."
	defD = "Dissimilarity D: the share of either group that would have to move to another area " +
		"for the two groups to be spread alike (Duncan & Duncan 1955)."
	defP = "Exposure xPy: the share of group y in the area of the average member of group x; " +
		"isolation xPx is the share of x's own group (Massey & Denton 1988)."
	defArea = "Entropy of an area: Σ share × ln(1/share) over its groups; normalised, divided by ln k " +
		"(1 = all groups in equal shares, 0 = one group)."
)

var measureDoc = register(cmdDoc{Name: "measure", Order: 100, Usage: "measure MAP.toml [--csv FILE]",
	Short: "print how mixed or separated the map's groups are (entropy, H, M, D, exposure)",
	About: "Reads the map's areas and counts, draws nothing, and prints evenness (entropy E, Theil's H, mutual " +
		"information M, dissimilarity D for each pair of groups), exposure and isolation, and the most diverse " +
		"areas, each number with a one-sentence definition. All of them depend on the areas the people were counted in.",
	Examples: []string{
		"stipple measure map.toml",
		"stipple measure map.toml --csv areas.csv     # also the per-area table",
	}})

func cmdMeasure(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("measure", flag.ContinueOnError)
	fs.SetOutput(stderr)
	draws := fs.Int("draws", 1000, "with fields_moe: seeded draws of the counts for the measures' intervals")
	csvPath := fs.String("csv", "", "also write the per-area table (id, people, shares, entropy, largest group) to this CSV file (default: none)")
	pos, err := parse(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usageError{"measure takes one map file"}
	}
	m, err := mapfile.Read(pos[0])
	if err != nil {
		return err
	}
	in, err := mapjob.Load(m, nil)
	if err != nil {
		return err
	}
	if len(in.Counts) == 0 {
		return fmt.Errorf("%s: no areas to measure", in.Layer.Path)
	}
	areas, err := measure.Areas(in.Counts)
	if err != nil {
		return err
	}
	x, err := measure.Measure(in.Counts)
	if err != nil {
		return err
	}
	if *csvPath != "" {
		table, err := mapjob.AreaTable(in, m, nil)
		if err != nil {
			return err
		}
		if err := os.WriteFile(*csvPath, table, 0o644); err != nil {
			return err
		}
	}
	printMeasures(stdout, m, in, areas, x)
	if in.Margins != nil {
		iv, err := measure.Simulate(ctx, in.Counts, in.Margins, measure.Options{Draws: *draws, Seed: m.Seed})
		if err != nil {
			return err
		}
		fmt.Fprintf(stdout, "\nThe counts are survey estimates (fields_moe: published 90%% margins, standard error = margin / %.3f).\n", measure.Z90)
		fmt.Fprintf(stdout, "Intervals holding %.0f%% of the values over %d seeded draws of the counts (seed %d):\n", 100*iv.Level, iv.Draws, iv.Seed)
		fmt.Fprintf(stdout, "  H from %s to %s\n  M from %s to %s\n", measureValue(iv.H.Lo), measureValue(iv.H.Hi), measureValue(iv.M.Lo), measureValue(iv.M.Hi))
		for a := range iv.D {
			for b := a + 1; b < len(iv.D); b++ {
				fmt.Fprintf(stdout, "  D %s / %s from %s to %s\n", m.Categories[a].Label, m.Categories[b].Label, measureValue(iv.D[a][b].Lo), measureValue(iv.D[a][b].Hi))
			}
		}
	}
	if *csvPath != "" {
		fmt.Fprintf(stdout, "\nper-area table: %s\n", *csvPath)
	}
	return nil
}

// measureValue prints a measure, or says why it has none.
func measureValue(v float64) string {
	if math.IsNaN(v) {
		return "undefined"
	}
	return strconv.FormatFloat(v, 'f', 6, 64)
}

func printMeasures(w io.Writer, m *mapfile.Map, in *mapjob.Input, areas []measure.Area, x *measure.Extent) {
	withPeople := 0
	for _, a := range areas {
		if a.People > 0 {
			withPeople++
		}
	}
	label := func(k int) string { return m.Categories[k].Label }
	fmt.Fprintf(w, "map:     %s\n", m.Title)
	fmt.Fprintf(w, "areas:   %d (%d with people)\n", len(areas), withPeople)
	fmt.Fprintf(w, "groups:  %d\n", len(m.Categories))
	fmt.Fprintf(w, "people:  %s\n", render.FormatCount(x.People))

	fmt.Fprintln(w, "\nEvenness: how evenly the groups are spread over the areas")
	fmt.Fprintf(w, "  H = %s   %s\n", measureValue(x.H), defH)
	fmt.Fprintf(w, "  M = %s   %s\n", measureValue(x.M), defM)
	fmt.Fprintf(w, "  E = %s   %s\n", measureValue(x.Entropy), defE)
	fmt.Fprintf(w, "  %s\n", defD)
	for a := range x.D {
		for b := a + 1; b < len(x.D); b++ {
			fmt.Fprintf(w, "    D %s / %s = %s\n", label(a), label(b), measureValue(x.D[a][b]))
		}
	}

	fmt.Fprintln(w, "\nExposure: whom the members of each group share their areas with")
	fmt.Fprintf(w, "  %s\n", defP)
	for a := range x.Exposure {
		for b := range x.Exposure[a] {
			if a == b {
				fmt.Fprintf(w, "    isolation of %s = %s\n", label(a), measureValue(x.Exposure[a][b]))
			} else {
				fmt.Fprintf(w, "    exposure of %s to %s = %s\n", label(a), label(b), measureValue(x.Exposure[a][b]))
			}
		}
	}

	fmt.Fprintln(w, "\nMost diverse areas")
	fmt.Fprintf(w, "  %s\n", defArea)
	order := make([]int, 0, len(areas))
	for i, a := range areas {
		if a.People > 0 {
			order = append(order, i)
		}
	}
	// Most diverse first; ties in file order.
	slices.SortStableFunc(order, func(i, j int) int { return cmp.Compare(areas[j].Entropy, areas[i].Entropy) })
	for n, i := range order[:min(measureTop, len(order))] {
		a := areas[i]
		fmt.Fprintf(w, "  %d. %s  people %s  entropy %s  normalised %s  largest %s (%s)\n",
			n+1, in.Layer.Features[i].ID, render.FormatCount(a.People), measureValue(a.Entropy),
			measureValue(a.Normalized), label(a.Largest), measureValue(a.LargestShare))
	}

	fmt.Fprintln(w, "\nEvenness and exposure are two of the five dimensions of segregation Massey & Denton (1988) name;")
	fmt.Fprintln(w, "concentration, centralization and clustering are not measured.")
}
