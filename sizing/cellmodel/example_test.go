package cellmodel_test

import (
	"fmt"

	"capbank/sizing/cellmodel"
)

// A two-branch cell (REFERENCES.md 9.2) in a 6-series string delivers
// 30 W from a long rest at 15 V until its terminals reach 8 V, then rests
// for a minute while the slow branch lifts the terminal voltage.
func Example() {
	r0, c0, kv, r2, c2 := 10.0478e-3, 89.03, 29.1062, 17.4976, 13.7162
	spec := cellmodel.Spec{Kind: cellmodel.KindTwoBranch, R0Ohm: &r0, C0F: &c0, KvFPerV: &kv, R2Ohm: &r2, C2F: &c2}
	if err := spec.Validate(2.7); err != nil {
		fmt.Println(err)
		return
	}
	bank := spec.Model().Bank(6, 1)
	sim := cellmodel.NewSim(bank, 15, cellmodel.Tolerances{})
	pulse, err := sim.Run(cellmodel.Load{Kind: cellmodel.Power, Value: 30}, 600, cellmodel.Limits{MinV: 8}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	rest, err := sim.Run(cellmodel.Load{Kind: cellmodel.Rest}, 60, cellmodel.Limits{}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("stopped at the %v after %.1f s, %.0f J delivered\n", pulse.Stop, pulse.DurationS, pulse.EnergyOutJ)
	fmt.Printf("after a minute's rest: %.3f V\n", rest.EndTerminalV)
	// Output:
	// stopped at the window bottom after 64.0 s, 1920 J delivered
	// after a minute's rest: 8.365 V
}
