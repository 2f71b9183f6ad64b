package sizing_test

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"capbank/sizing"
	"capbank/sizing/cellmodel"
)

// loadDemo reads a demo design (invented data) from testdata.
func loadDemo(t *testing.T, name string) *sizing.Design {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	d, err := sizing.DecodeDesign(f)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return d
}

// demoOrRegen is a demo design, or for "regen-to-top" an invented one
// whose regenerating steps drive the bank to the window top and hold it
// there (energy rejected): a 2 s discharge at 10 A, then 6 s of charging
// at 4 A and 3 s at 40 W, five times.
func demoOrRegen(t *testing.T, name string) *sizing.Design {
	if name == "input-current-limit" {
		// 400 W through a converter limited to 40 A at its input: the
		// runtime ends at 10 V, above the 6 V window bottom.
		return &sizing.Design{
			Name:      "input current limit (invented)",
			Window:    sizing.Window{MaxV: 16.2, MinV: 6},
			Converter: &sizing.Converter{MaxInputCurrentA: spiceF64(40)},
			Load:      sizing.Load{Repeat: spiceInt(1), Steps: []sizing.Step{{PowerW: spiceF64(400), DurationS: 10}}},
			Cells:     []sizing.Cell{{ID: "limit-100", RatedV: 2.7, CapacitanceF: 100, ESROhm: 10e-3}},
		}
	}
	if name != "regen-to-top" {
		d := loadDemo(t, name)
		if d.Converter != nil && len(d.Converter.EfficiencyCurve) > 0 {
			// A curve with an input current limit is not solved on a
			// model yet: check the curve alone.
			d.Converter.MaxInputCurrentA = nil
		}
		return d
	}
	return &sizing.Design{
		Name:   "regenerating to the top (invented)",
		Window: sizing.Window{MaxV: 10.8, MinV: 6},
		Load: sizing.Load{Repeat: spiceInt(5), Steps: []sizing.Step{
			{CurrentA: spiceF64(10), DurationS: 2}, {CurrentA: spiceF64(-4), DurationS: 6}, {PowerW: spiceF64(-40), DurationS: 3}}},
		Cells: []sizing.Cell{{ID: "regen-50", RatedV: 2.7, CapacitanceF: 50, ESROhm: 20e-3}},
	}
}

// idealOnly strips what the model pass does not solve yet (thermal
// limits, wiring) and the drains, which sit across the capacitor in the ideal RC
// and across the terminals in a model.
func idealOnly(d *sizing.Design) {
	d.Balancing = &sizing.Balancing{Kind: "none"}
	d.Wiring = nil
	d.Statistics = &sizing.Statistics{Candidates: "none"}
	for i := range d.Cells {
		d.Cells[i].ThermalResistanceKPerW = nil
		d.Cells[i].LeakageA = nil
	}
}

// TestModelWithoutSlowBranchesEqualsIdealRC sizes the demo designs
// (without their wiring and thermal limits, not solved on a model yet) and
// two invented ones twice: with
// the ideal cells, and with each cell given a two-branch and a
// three-branch model with Kv = 0 and slow branches of 10¹² Ω and 1 pF (effectively
// removed). Every pass figure and the runtime must agree to 1e-9
// relative: the model pass solves the same circuit by integration that
// the ideal pass solves in closed form.
func TestModelWithoutSlowBranchesEqualsIdealRC(t *testing.T) {
	t.Parallel()
	f := func(x float64) *float64 { return &x }
	for _, name := range []string{"actuator-pulses.json", "check-constant-current.json", "logger-hold-up.json", "ups-ride-through.json", "agv-regen-buffer.json", "regen-to-top", "input-current-limit"} {
		for _, kind := range []string{cellmodel.KindTwoBranch, cellmodel.KindThreeBranch} {
			t.Run(strings.TrimSuffix(name, ".json")+"/"+kind, func(t *testing.T) {
				t.Parallel()
				ideal, withModel := demoOrRegen(t, name), demoOrRegen(t, name)
				idealOnly(ideal)
				idealOnly(withModel)
				for i := range withModel.Cells {
					c := &withModel.Cells[i]
					if kind == cellmodel.KindTwoBranch {
						c.Model = &cellmodel.Spec{Kind: kind, R0Ohm: f(c.ESROhm), C0F: f(c.CapacitanceF), KvFPerV: f(0), R2Ohm: f(1e12), C2F: f(1e-12)}
					} else {
						c.Model = &cellmodel.Spec{Kind: kind, RiOhm: f(c.ESROhm), Ci0F: f(c.CapacitanceF), Ci1FPerV: f(0),
							RdOhm: f(1e12), CdF: f(1e-12), RlOhm: f(1e12), ClF: f(1e-12)}
					}
				}
				ri, err := sizing.Size(ideal)
				if err != nil {
					t.Fatalf("ideal: %v", err)
				}
				rm, err := sizing.Size(withModel)
				if err != nil {
					t.Fatalf("model: %v", err)
				}
				const tol = 1e-9
				near := func(what string, a, b float64) {
					t.Helper()
					if math.Abs(a-b) > tol*math.Max(math.Abs(b), 1e-300) && !(a == 0 && b == 0) {
						t.Errorf("%s: model %.15g, ideal %.15g (rel %.2e)", what, a, b, math.Abs(a-b)/math.Abs(b))
					}
				}
				compared := 0
				for k, ci := range ri.Candidates {
					cm := rm.Candidates[k]
					if ci.CellID != cm.CellID || ci.Series != cm.Series || ci.Parallel != cm.Parallel || ci.Feasible != cm.Feasible {
						t.Fatalf("candidate %d: model %s %d×%d feasible %v, ideal %s %d×%d feasible %v",
							k, cm.CellID, cm.Series, cm.Parallel, cm.Feasible, ci.CellID, ci.Series, ci.Parallel, ci.Feasible)
					}
					id := ci.CellID + " "
					near(id+"min_terminal_v", cm.MinTerminalV, ci.MinTerminalV)
					near(id+"end_capacitor_v", cm.EndCapacitorV, ci.EndCapacitorV)
					near(id+"peak_current_a", cm.PeakCurrentA, ci.PeakCurrentA)
					near(id+"rms_current_a", cm.RMSCurrentA, ci.RMSCurrentA)
					near(id+"bank_energy_j", cm.BankEnergyJ, ci.BankEnergyJ)
					near(id+"load_energy_j", cm.LoadEnergyJ, ci.LoadEnergyJ)
					near(id+"usable_energy_j", cm.UsableEnergyJ, ci.UsableEnergyJ)
					// The loss and the rejected energy are differences of
					// energies: 1e-9 of the energy moved, not of themselves.
					moved := math.Max(math.Abs(ci.BankEnergyJ), math.Max(ci.ESRLossJ, ci.RejectedEnergyJ))
					if d := math.Abs(cm.ESRLossJ - ci.ESRLossJ); d > tol*moved {
						t.Errorf("%s esr_loss_j: model %.12g, ideal %.12g", id, cm.ESRLossJ, ci.ESRLossJ)
					}
					if d := math.Abs(cm.RejectedEnergyJ - ci.RejectedEnergyJ); d > tol*moved {
						t.Errorf("%s rejected_energy_j: model %.12g, ideal %.12g", id, cm.RejectedEnergyJ, ci.RejectedEnergyJ)
					}
					if ci.RejectedEnergyJ > 0 {
						t.Logf("%s rejected_energy_j: model %.12g, ideal %.12g", id, cm.RejectedEnergyJ, ci.RejectedEnergyJ)
					}
					if (ci.RuntimeS == nil) != (cm.RuntimeS == nil) {
						t.Fatalf("%s runtime: model %v, ideal %v", id, cm.RuntimeS, ci.RuntimeS)
					}
					if ci.RuntimeS != nil {
						if ci.RuntimeEstimated {
							t.Fatalf("%s: the ideal runtime is estimated; pick a design whose runtime is run step by step", id)
						}
						near(id+"runtime_s", *cm.RuntimeS, *ci.RuntimeS)
						if name == "input-current-limit" && ci.RuntimeEnd != "input_current" {
							t.Errorf("%s: the ideal runtime ends at %q, want \"input_current\" (the case no longer checks the limit)", id, ci.RuntimeEnd)
						}
						if cm.RuntimeEnd != ci.RuntimeEnd {
							t.Errorf("%s runtime end: model %q, ideal %q", id, cm.RuntimeEnd, ci.RuntimeEnd)
						}
					}
					compared++
				}
				if compared == 0 {
					t.Fatal("no candidate compared")
				}
			})
		}
	}
}

// TestModelKeyDecodesAndValidates reads a design whose cell carries a
// model through the strict decoder, and checks that every problem with
// the model, and every part of the design the model pass cannot solve
// yet, is refused with the field named.
func TestModelKeyDecodesAndValidates(t *testing.T) {
	t.Parallel()
	base := `{"name":"model check (invented)","window":{"max_v":16,"min_v":8},
 "load":{"steps":[{"current_a":20,"duration_s":5}%s]},
 "balancing":{"kind":"none"}%s,
 "cells":[{"id":"m1","rated_v":2.7,"capacitance_f":100,"esr_ohm":0.01,
   "model":{"kind":"two-branch","r0_ohm":0.01,"c0_f":89,"kv_f_per_v":%s,"r2_ohm":17.5,"c2_f":13.7,"rleak_ohm":5000}}]}`
	cases := []struct {
		name, step, extra, kv string
		field                 string // "": valid
	}{
		{"valid", "", "", "29", ""},
		{"capacitance negative at the top", "", "", "-40", "cells[0].model.kv_f_per_v"},
		{"resistor and charging steps", `,{"resistance_ohm":2,"duration_s":1},{"current_a":-5,"duration_s":1}`, "", "29", ""},
		{"wiring", "", `,"wiring":{"link_resistance_ohm":0.001}`, "29", "wiring.link_resistance_ohm"},
		{"efficiency curve", "", `,"converter":{"efficiency_curve":[[8,0.9],[16,0.95]]}`, "29", ""},
		{"efficiency curve and input current limit", "", `,"converter":{"efficiency_curve":[[8,0.9],[16,0.95]],"max_input_current_a":40}`, "29", "converter.max_input_current_a"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			js := strings.Replace(strings.Replace(strings.Replace(base, "%s", tc.step, 1), "%s", tc.extra, 1), "%s", tc.kv, 1)
			d, err := sizing.DecodeDesign(strings.NewReader(js))
			if err != nil {
				t.Fatalf("decode: %v", err)
			}
			if d.Cells[0].Model == nil || *d.Cells[0].Model.C2F != 13.7 {
				t.Fatalf("model not decoded: %+v", d.Cells[0].Model)
			}
			err = sizing.Validate(d)
			if tc.field == "" {
				if err != nil {
					t.Fatalf("Validate: %v", err)
				}
				return
			}
			var ve sizing.ValidationError
			if !asValidation(err, &ve) {
				t.Fatalf("Validate: %v, want a ValidationError", err)
			}
			found := false
			for _, fe := range ve {
				found = found || fe.Field == tc.field
			}
			if !found {
				t.Errorf("Validate: %v, want a problem at %s", err, tc.field)
			}
		})
	}
}

func asValidation(err error, ve *sizing.ValidationError) bool {
	v, ok := err.(sizing.ValidationError)
	*ve = v
	return ok
}

// TestModelPassMatchesDirectSimulation sizes a design with a three-branch
// cell and checks the report against the same bank run directly through
// cellmodel: the runtime and the lowest terminal voltage, to 1e-9; and
// that the model moves the runtime away from the ideal RC of the cell's
// capacitance_f and esr_ohm (the model is not ignored).
func TestModelPassMatchesDirectSimulation(t *testing.T) {
	t.Parallel()
	f := func(x float64) *float64 { return &x }
	spec := cellmodel.Spec{Kind: cellmodel.KindThreeBranch, RiOhm: f(2.5e-3), Ci0F: f(1100), Ci1FPerV: f(190),
		RdOhm: f(0.9), CdF: f(100), RlOhm: f(5.2), ClF: f(220), RleakOhm: f(9000)}
	eolC, eolR := 0.8, 2.0
	d := sizing.Design{
		Name:       "model pass check (invented)",
		Window:     sizing.Window{MaxV: 16.2, MinV: 8},
		EOL:        &sizing.EOL{CapacitanceFactor: &eolC, ESRFactor: &eolR},
		Balancing:  &sizing.Balancing{Kind: "none"},
		Statistics: &sizing.Statistics{Candidates: "none"},
		Load: sizing.Load{Repeat: spiceInt(3), Steps: []sizing.Step{
			{PowerW: spiceF64(800), DurationS: 2}, {Rest: true, DurationS: 8}}},
		Cells: []sizing.Cell{{ID: "three", RatedV: 2.7, CapacitanceF: 1500, ESROhm: 2.5e-3, Model: &spec}},
	}
	r, err := sizing.Size(&d)
	if err != nil {
		t.Fatal(err)
	}
	c := r.Candidates[0]
	if !c.Feasible || c.RuntimeS == nil {
		t.Fatalf("candidate %+v", c)
	}
	bank := spec.Model().Derate(eolC, eolR).Bank(c.Series, c.Parallel)
	sim := cellmodel.NewSim(bank, 16.2, cellmodel.Tolerances{})
	tt, minU := 0.0, math.Inf(1)
	pass := 3 * 10.0
	for tt < 1e6 {
		a, err := sim.Run(cellmodel.Load{Kind: cellmodel.Power, Value: 800}, 2, cellmodel.Limits{MinV: 8}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if tt < pass {
			minU = math.Min(minU, a.MinTerminalV)
		}
		tt += a.DurationS
		if a.Stop != cellmodel.Completed {
			break
		}
		b, _ := sim.Run(cellmodel.Load{Kind: cellmodel.Rest}, 8, cellmodel.Limits{MinV: 8}, nil)
		if tt < pass {
			minU = math.Min(minU, b.MinTerminalV)
		}
		tt += b.DurationS
	}
	if math.Abs(*c.RuntimeS-tt) > 1e-9*tt || math.Abs(c.MinTerminalV-minU) > 1e-9*minU {
		t.Errorf("report: runtime %.12g s, min %.12g V; direct: %.12g s, %.12g V", *c.RuntimeS, c.MinTerminalV, tt, minU)
	}
	d.Cells[0].Model = nil
	ri, err := sizing.Size(&d)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%d×%d: runtime on the model %.6g s, on the ideal RC %.6g s (%d×%d)", c.Series, c.Parallel, *c.RuntimeS, *ri.Candidates[0].RuntimeS, ri.Candidates[0].Series, ri.Candidates[0].Parallel)
	if ri.Candidates[0].Parallel == c.Parallel && math.Abs(*ri.Candidates[0].RuntimeS-*c.RuntimeS) < 1e-3**c.RuntimeS {
		t.Errorf("the model did not change the runtime (%.9g s against %.9g s)", *c.RuntimeS, *ri.Candidates[0].RuntimeS)
	}
}
