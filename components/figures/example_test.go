package figures_test

import (
	"fmt"
	"math"

	"capbank/components/figures"
	"capbank/sizing"
)

// SI writes a quantity with the prefix that keeps its number between 1 and
// 1000. For a page it joins number and unit with a no-break space and
// writes the minus sign U+2212; ASCII makes plain text of it for a
// terminal.
func ExampleSI() {
	fmt.Printf("%q\n", figures.SI(117600, "J", 4))
	for _, s := range []string{
		figures.SI(0.0028, "Ω", 3),
		figures.SI(999.96, "V", 4), // rounds into the next prefix
		figures.SI(1200, "F", 4),   // capacitance stays in F from 1 F up
		figures.SI(0.47, "F", 4),
		figures.SI(0.285, "J", 3),
		figures.SI(0.0045, "s", 3),
		figures.SI(0.062, "kg", 3), // a mass below 1 kg reads in g
		figures.SI(25.9, "°C", 3),  // no prefix for a temperature
		figures.SI(-2500000, "J", 4),
		figures.SI(math.NaN(), "V", 3),
	} {
		fmt.Println(figures.ASCII(s))
	}
	// Output:
	// "117.6\u00a0kJ"
	// 2.8 mΩ
	// 1 kV
	// 1200 F
	// 470 mF
	// 285 mJ
	// 4.5 ms
	// 62 g
	// 25.9 °C
	// -2.5 MJ
	// —
}

// Column picks one prefix for a table column from its largest figure, so
// that the header can name the unit.
func ExampleColumn() {
	usable := []float64{53760, 1536000}
	scale, unit := figures.Column(usable, "J", 4)
	fmt.Printf("usable (%s)\n", unit)
	for _, v := range usable {
		fmt.Println(figures.Number(v/scale, 4))
	}
	// Output:
	// usable (MJ)
	// 0.05376
	// 1.536
}

// Number, Duration and Money write the figures that take no SI prefix.
func ExampleNumber() {
	fmt.Println(figures.Number(34.33221, 4))
	fmt.Println(figures.Number(22585.4, 3)) // digits before the point stay
	fmt.Println(figures.Number(1.5e-5, 2))
	fmt.Println(figures.ASCII(figures.Duration(4251, 4)))
	fmt.Println(figures.ASCII(figures.Duration(0.5, 3)))
	fmt.Println(figures.Money(1234.5), figures.Money(0.0125))
	// Output:
	// 34.33
	// 22585
	// 1.5e−5
	// 70.85 min
	// 500 ms
	// 1,234.50 0.0125
}

// Estimated is the one way every output marks an estimate.
func ExampleEstimated() {
	fmt.Println(figures.ASCII(figures.Estimated(figures.Duration(23.3, 3), true)))
	fmt.Println(figures.EstimatedNote)
	// Output:
	// ≈23.3 s
	// estimated from the drain per period
}

// Candidate lays a candidate bank out as titled groups of labelled rows:
// label, value, unit and note. A page shows Text (value and unit) in one
// cell; a spreadsheet may keep the unit in a column of its own.
func ExampleCandidate() {
	runtime := 34.33
	c := sizing.Candidate{
		CellID: "c400", Feasible: true, Series: 15, Parallel: 5, Cells: 75, Limit: "voltage",
		CellV: 2.8, CellCeilingV: 2.8, CapacitanceF: 400.0 * 5 / 15, WorstCapacitanceF: 0.8 * 400 * 5 / 15,
		ESROhm: 0.0084, WorstESROhm: 0.0168, ColdESRFactor: 1,
		StoredEnergyJ: 117600, UsableEnergyJ: 70560, RuntimeS: &runtime, RuntimeEnd: "voltage",
		MinTerminalV: 25.23, PeakCurrentA: 147.5, CellPeakCurrentA: 29.5, RMSCurrentA: 67.47, CellRMSCurrentA: 13.49,
	}
	r := sizing.Report{MaxV: 42, MinV: 21}
	for _, g := range figures.Candidate(&c, &r)[:2] {
		fmt.Println(g.Title)
		for _, row := range g.Rows[:3] {
			fmt.Printf("  %s: %s (%s)\n", row.Label, figures.ASCII(row.Text()), figures.ASCII(row.Note))
		}
	}
	// Output:
	// Bank
	//   Arrangement: 15 in series × 5 strings, 75 cells (strings set by the window bottom)
	//   Cell voltage at the window top: 2.8 V (ceiling 2.8 V)
	//   Capacitance: 133.3 F (worst case 106.7 F)
	// Energy and runtime, worst case
	//   Stored energy at the window top: 117.6 kJ (32.7 Wh, beginning of life)
	//   Usable energy in the window: 70.56 kJ (19.6 Wh)
	//   Runtime: 34.3 s (until the window bottom, repeating the steps)
}
