package theme_test

import (
	"fmt"

	"github.com/stipple-maps/stipple/render/theme"
)

func Example() {
	t := theme.Default()
	t.Text = t.Text.Merge(theme.Text{CreditPrefix: "Quelle: ", DotNote: "1 Punkt = {n} Personen"})
	fmt.Println(t.DotNote(25))
	fmt.Println(t.CreditLine("Statistikamt, Tabelle 3"))
	fmt.Println(t.CreditLine("Quelle: Statistikamt"))
	fmt.Println(t.GroundHex())
	fmt.Println(t.Font.Family)
	// Output:
	// 1 Punkt = 25 Personen
	// Quelle: Statistikamt, Tabelle 3
	// Quelle: Statistikamt
	// #eceff3
	// Liberation Sans
}
