package sizing_test

import (
	"fmt"
	"strings"

	"capbank/sizing"
)

func f(x float64) *float64 { return &x }

// Size a 24 V bank for a 150 W hold-up of 20 s through a 92 % converter,
// down to 12 V, with one invented demo cell (not a real product).
func ExampleSize() {
	d := &sizing.Design{
		Name:   "example hold-up",
		Window: sizing.Window{MaxV: 24, MinV: 12},
		Load: sizing.Load{Efficiency: f(0.92), Steps: []sizing.Step{
			{PowerW: f(150), DurationS: 20},
		}},
		Cells: []sizing.Cell{{ID: "demo-100f", RatedV: 2.7, CapacitanceF: 100, ESROhm: 0.012, UnitPrice: f(2.5)}},
	}
	r, err := sizing.Size(d)
	if err != nil {
		fmt.Println(err)
		return
	}
	c := r.Candidates[0]
	fmt.Printf("%d s × %d p, %d cells, runtime %.1f s, lowest terminal %.2f V\n",
		c.Series, c.Parallel, c.Cells, *c.RuntimeS, c.MinTerminalV)
	// The runtime checks by hand with REFERENCES.md 3.10: C = 100·0.8·2/9 F,
	// R = 0.012·2·9/2 Ω, P = 150/0.92 W, u1 = (24 + √(24² − 4PR))/2, so
	// t = C(u1² − 12²)/(2P) − RC·ln(u1/12) = 20.33 s.

	// Output:
	// 9 s × 2 p, 18 cells, runtime 20.3 s, lowest terminal 12.28 V
}

// SeriesCount judges the quotient in decimal: 42.0 V over 2.8 V cells is 15.
func ExampleSeriesCount() {
	fmt.Println(sizing.SeriesCount(42.0, 2.8), sizing.SeriesCount(42.1, 2.8))
	// Output: 15 16
}

// Validate names the field of every problem.
func ExampleValidate() {
	d := &sizing.Design{
		Window: sizing.Window{MaxV: 20, MinV: 21},
		Load:   sizing.Load{Steps: []sizing.Step{{PowerW: f(100), DurationS: 0}}},
		Cells:  []sizing.Cell{{ID: "x", RatedV: 2.7, CapacitanceF: 10, ESROhm: 0.05}},
	}
	fmt.Println(sizing.Validate(d))
	// Output:
	// load.steps[0].duration_s: must be greater than 0
	// window.min_v: must be below window.max_v (21 V ≥ 20 V)
}

// Read a logged load profile: each row's power holds until the next row's
// time, and the last row for the interval before it. Rows of the same value
// join into one step and a zero is a rest.
func ExampleParseProfileCSV() {
	const logged = `# actuator, power at the converter output
time_s,power_w
0,150
10,150
20,0
30,-50
`
	p, err := sizing.ParseProfileCSV(strings.NewReader(logged))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d rows from %s, %g s in %d steps:\n", p.Rows, p.Column, p.DurationS, len(p.Steps))
	for _, s := range p.Steps {
		switch {
		case s.Rest:
			fmt.Printf("  rest for %g s\n", s.DurationS)
		default:
			fmt.Printf("  %g W for %g s\n", *s.PowerW, s.DurationS)
		}
	}

	// A problem names the line and the column.
	_, err = sizing.ParseProfileCSV(strings.NewReader("time_s,power_w\n0,150\n10,1,5\n"))
	fmt.Println(err)
	// Output:
	// 4 rows from power_w, 40 s in 3 steps:
	//   150 W for 20 s
	//   rest for 10 s
	//   -50 W for 10 s
	// line 3: has 3 fields but the header on line 1 has 2; every row needs one field per header column
}

// Without a formatter installed (sizing on its own), a figure in a message
// is written plainly in its base unit; a program that links
// components/figures writes it with the one SI formatter ("117.6 kJ").
func ExampleQuantity() {
	fmt.Println(sizing.Quantity(117600, "J", 4))
	// Output: 1.176e+05 J
}
