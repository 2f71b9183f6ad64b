package measure_test

import (
	"errors"
	"fmt"
	"strings"

	"capbank/sizing/measure"
)

// Read a bench log: a header naming the columns, then one row a sample.
// Comment lines and a column capbank does not read are passed over.
func ExampleParseCSV() {
	const bench = `# 10 F cell, 1 A discharge switched on at t = 0 s
time_s,voltage_v,current_a,temp_c
-1,2.700,0.000,24.8
0,2.690,1.002,24.8
1,2.590,1.001,24.9
`
	log, err := measure.ParseCSV(strings.NewReader(bench))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(len(log.TimeS), "samples; voltages", log.VoltageV, "V; currents", log.CurrentA, "A")

	// A problem names the line, as an editor counts it, and the column.
	_, err = measure.ParseCSV(strings.NewReader("time_s,voltage_v\n0,2.7\n1,2,6\n"))
	fmt.Println(err)
	_, err = measure.ParseCSV(strings.NewReader("time_s,voltage_v\n0,2.7\n1,high\n"))
	var ce *measure.CSVError
	if errors.As(err, &ce) {
		fmt.Printf("line %d, column %s: %s\n", ce.Line, ce.Column, ce.Message)
	}
	// Output:
	// 3 samples; voltages [2.7 2.69 2.59] V; currents [0 1.002 1.001] A
	// line 3: has 3 fields but the header on line 1 has 2; every row needs one field per header column
	// line 3, column voltage_v: "high" is not a number
}

// A timed discharge through a resistor: a cell falls from 1.5 V to 0.5 V in
// 68 s through 1 kΩ. The exact capacitance is t/(R·ln(V0/V1)) =
// 68/(1000·ln 3) = 61.9 mF; the quick bench estimate t·I/ΔV, with the
// current at the mean voltage, 1 mA, reads 68 mF, 9.86 % high.
func ExampleRun() {
	v := func(x float64) *float64 { return &x }
	r, err := measure.Run(measure.Input{Method: "timed", V0V: v(1.5), V1V: v(0.5), DurationS: v(68), ResistorOhm: v(1000)})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("C = %.3g mF exact, %.3g mF quick (%.3g %% high)\n",
		1000*r.Timed.CapacitanceF, 1000*r.Timed.QuickCapacitanceF, r.Timed.QuickErrorPct)

	// What is missing is named by its field; each edge says it in its own
	// terms (--v1 on the command line, the v1_v box on the page).
	_, err = measure.Run(measure.Input{Method: "timed", V0V: v(1.5), ResistorOhm: v(1000)})
	fmt.Println(err)
	// Output:
	// C = 61.9 mF exact, 68 mF quick (9.86 % high)
	// v1_v: is required for this method
	// duration_s: is required for this method
}
