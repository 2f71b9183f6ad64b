package sizing_test

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"capbank/sizing"
	"capbank/sizing/internal/approx"
)

// The efficiency curve (converter.efficiency_curve) through the whole
// sizing, and against ngspice. The designs, cells and curves are invented
// test data; no datasheet or converter is quoted.

// curveHoldUp is a 48 V hold-up bank behind a converter that delivers
// 2 kW in 5 s steps repeated 6 times; conv is its converter (nil: none)
// and eff its load.efficiency (nil: none). The leakage is exaggerated
// (0.3 A per cell), so that it moves the figures by more than the
// tolerances, as in the constant-power case of ngspice_test.go.
func curveHoldUp(conv *sizing.Converter, eff *float64) sizing.Design {
	return sizing.Design{
		Name:      "efficiency curve check",
		Balancing: &sizing.Balancing{Kind: "none"},
		Window:    sizing.Window{MaxV: 48, MinV: 24},
		Converter: conv,
		Load: sizing.Load{
			Efficiency: eff,
			Repeat:     spiceInt(6),
			Steps:      []sizing.Step{{PowerW: spiceF64(2000), DurationS: 5}},
		},
		Cells: []sizing.Cell{{ID: "holdup-400", RatedV: 2.7, CapacitanceF: 400, ESROhm: 2.5e-3, LeakageA: spiceF64(0.3)}},
	}
}

// sizeTop sizes d and returns its first candidate, which must be feasible
// with a runtime.
func sizeTop(t *testing.T, d *sizing.Design) (*sizing.Report, sizing.Candidate) {
	t.Helper()
	r, err := sizing.Size(d)
	if err != nil {
		t.Fatalf("Size: %v", err)
	}
	if len(r.Candidates) == 0 {
		t.Fatal("Size returned no candidates")
	}
	c := r.Candidates[0]
	if !c.Feasible || c.RuntimeS == nil {
		t.Fatalf("candidate %s: feasible %v, runtime %v: %s", c.CellID, c.Feasible, c.RuntimeS, c.Reason)
	}
	return r, c
}

// TestSizeFlatCurveEqualsLoadEfficiency: a converter curve flat at 0.9
// is the same converter as load.efficiency 0.9, so every figure of the
// sizing must agree within 1e-9 relative (the step solutions agree to
// about 1e-14: TestPowerCurveFlatEqualsPowerStep; source: the closed forms
// of REFERENCES.md 3.8–3.10 behind load.efficiency).
func TestSizeFlatCurveEqualsLoadEfficiency(t *testing.T) {
	t.Parallel()
	flat := curveHoldUp(nil, spiceF64(0.9))
	curve := curveHoldUp(&sizing.Converter{EfficiencyCurve: [][]float64{{20, 0.9}, {36, 0.9}, {50, 0.9}}}, nil)
	_, want := sizeTop(t, &flat)
	_, got := sizeTop(t, &curve)
	if got.Parallel != want.Parallel || got.Series != want.Series {
		t.Errorf("curve: %d × %d, load.efficiency: %d × %d", got.Series, got.Parallel, want.Series, want.Parallel)
	}
	if got.RuntimeEnd != want.RuntimeEnd {
		t.Errorf("runtime_end %q, want %q", got.RuntimeEnd, want.RuntimeEnd)
	}
	approx.Near(t, "runtime_s", *got.RuntimeS, *want.RuntimeS, 1e-9)
	approx.Near(t, "min_terminal_v", got.MinTerminalV, want.MinTerminalV, 1e-9)
	approx.Near(t, "end_capacitor_v", got.EndCapacitorV, want.EndCapacitorV, 1e-9)
	approx.Near(t, "bank_energy_j", got.BankEnergyJ, want.BankEnergyJ, 1e-9)
	approx.Near(t, "load_energy_j", got.LoadEnergyJ, want.LoadEnergyJ, 1e-9)
	t.Logf("%d × %d, runtime %.12g s / %.12g s, min terminal %.12g V / %.12g V, load energy %.12g J / %.12g J (curve / load.efficiency)",
		got.Series, got.Parallel, *got.RuntimeS, *want.RuntimeS, got.MinTerminalV, want.MinTerminalV, got.LoadEnergyJ, want.LoadEnergyJ)
}

// TestSizeFallingCurveCostsStrings: a curve that falls towards low input
// voltage is nowhere better than its best point, so the bank must have
// at least as many strings as with that best efficiency flat and, on the
// same bank, run for a shorter time and give more energy at its terminals
// for the same load energy (the bank power P/η(u) is at least P/η_best at
// every voltage, so the capacitor empties at least as fast; own
// derivation from the converter's balance P_b = P/η). At 6 outage
// steps both need the same string count, so the runtimes compare on one
// bank; at 5 the curve needs a string more, and the runtime is not compared.
func TestSizeFallingCurveCostsStrings(t *testing.T) {
	t.Parallel()
	for _, repeat := range []int{5, 6} {
		best := curveHoldUp(nil, spiceF64(0.95))
		falling := curveHoldUp(&sizing.Converter{EfficiencyCurve: [][]float64{{24, 0.80}, {36, 0.90}, {48, 0.95}}}, nil)
		best.Load.Repeat, falling.Load.Repeat = &repeat, &repeat
		_, b := sizeTop(t, &best)
		_, f := sizeTop(t, &falling)
		t.Logf("%d steps: %d strings, runtime %.6g s (curve); %d strings, runtime %.6g s (0.95 flat)",
			repeat, f.Parallel, *f.RuntimeS, b.Parallel, *b.RuntimeS)
		if f.Parallel < b.Parallel {
			t.Errorf("%d steps: falling curve %d strings, fewer than the %d of its best point flat", repeat, f.Parallel, b.Parallel)
		}
		approx.Near(t, "load energy of the pass (2 kW × 5 s × steps)", f.LoadEnergyJ, 2000*5*float64(repeat), 1e-9)
		if repeat == 5 {
			continue
		}
		if f.Parallel != b.Parallel {
			t.Fatalf("%d steps: %d and %d strings; the runtime comparison needs one bank", repeat, f.Parallel, b.Parallel)
		}
		if !(*f.RuntimeS < *b.RuntimeS) {
			t.Errorf("falling curve: runtime %.6g s, not below the %.6g s of its best point flat", *f.RuntimeS, *b.RuntimeS)
		}
		if !(f.BankEnergyJ > b.BankEnergyJ) {
			t.Errorf("falling curve: bank energy %.6g J, not above the %.6g J of its best point flat", f.BankEnergyJ, b.BankEnergyJ)
		}
	}
}

// spiceEfficiency writes η(V(vt)) of a curve [[v, η], …] as nested
// conditional expressions: linear between the points, clamped outside.
func spiceEfficiency(pts [][]float64) string {
	n := len(pts)
	expr := spiceNum(pts[n-1][1])
	for k := n - 1; k >= 1; k-- {
		v0, e0, v1, e1 := pts[k-1][0], pts[k-1][1], pts[k][0], pts[k][1]
		slope := (e1 - e0) / (v1 - v0)
		expr = fmt.Sprintf("(V(vt) <= %s ? %s + (V(vt) - %s) * %s : %s)", spiceNum(v1), spiceNum(e0), spiceNum(v0), spiceNum(slope), expr)
	}
	return fmt.Sprintf("(V(vt) <= %s ? %s : %s)", spiceNum(pts[0][0]), spiceNum(pts[0][1]), expr)
}

// TestNgspiceAgreesWithEfficiencyCurve sizes a design whose converter
// follows a three-point efficiency curve, rebuilds the top candidate's
// worst-case bank in ngspice with the load as a behavioural source,
// I = P/(η(V)·V) (REFERENCES.md 12.8), and compares the runtime to the
// window bottom, the lowest terminal voltage and the end capacitor
// voltage of the sizing pass within ngspiceRelTol (0.1 %, REFERENCES.md
// 12.1).
func TestNgspiceAgreesWithEfficiencyCurve(t *testing.T) {
	bin := ngspiceOrSkip(t)
	t.Parallel()
	const loadW = 2000.0
	pts := [][]float64{{24, 0.80}, {36, 0.90}, {48, 0.95}}
	d := curveHoldUp(&sizing.Converter{EfficiencyCurve: pts}, nil)
	r, c := sizeTop(t, &d)
	if c.RuntimeEnd != "voltage" {
		t.Fatalf("runtime ends at %q, want \"voltage\" (min_v² stays far above P·R)", c.RuntimeEnd)
	}
	eta := spiceEfficiency(pts)
	if strings.Count(eta, "?") != 3 {
		t.Fatalf("efficiency expression %q: want one condition per point", eta)
	}
	n := spiceBankNetlist{
		title:      d.Name,
		capF:       c.WorstCapacitanceF,
		esrOhm:     c.WorstESROhm,
		leakageOhm: c.LeakageOhm,
		v0:         r.MaxV,
		load:       []string{fmt.Sprintf("BLOAD vt 0 I = %s / (%s * max(V(vt), 1e-6))", spiceNum(loadW), eta)},
		passS:      r.PassDurationS,
		minV:       r.MinV,
		stopS:      1.02*math.Max(*c.RuntimeS, r.PassDurationS) + r.ProfileDurationS,
	}
	got := runNgspice(t, bin, t.TempDir(), "curve", n.String())
	// Expected values: ngspice 39 transient simulation, independent circuit
	// simulator; tolerance ngspiceRelTol.
	compareWithNgspice(t, c.CellID, "min_terminal_v (V)", c.MinTerminalV, got["umin"])
	compareWithNgspice(t, c.CellID, "end_capacitor_v (V)", c.EndCapacitorV, got["vcend"])
	compareWithNgspice(t, c.CellID, "runtime_s (s)", *c.RuntimeS, got["trun"])
}

// curveInputStopV returns the terminal voltage where a discharge of loadW
// through a converter with curve pts draws imaxA from the bank: the root
// of u·η(u) = loadW/imaxA, by bisection on the linear interpolation of the
// curve (the converter's input current is P/(η·u): the test's own
// arithmetic, independent of stepcurve.go's per-piece quadratic).
func curveInputStopV(pts [][]float64, loadW, imaxA float64) float64 {
	eta := func(u float64) float64 {
		if u <= pts[0][0] {
			return pts[0][1]
		}
		for k := 1; k < len(pts); k++ {
			if u <= pts[k][0] {
				f := (u - pts[k-1][0]) / (pts[k][0] - pts[k-1][0])
				return pts[k-1][1] + f*(pts[k][1]-pts[k-1][1])
			}
		}
		return pts[len(pts)-1][1]
	}
	lo, hi := 1e-3, 1e4
	for range 200 {
		mid := (lo + hi) / 2
		if mid*eta(mid) < loadW/imaxA {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// TestNgspiceAgreesWithInputCurrentStop: the converter of
// TestNgspiceAgreesWithEfficiencyCurve with an input current limit of
// 90 A. The runtime must end at the input current (issue 19: the voltage
// where P/η(V)/V reaches the limit), and ngspice's time to that voltage
// with the behavioural load I = P/(η(V)·V) must agree within
// ngspiceRelTol (REFERENCES.md 12.1, 12.8).
func TestNgspiceAgreesWithInputCurrentStop(t *testing.T) {
	bin := ngspiceOrSkip(t)
	t.Parallel()
	const loadW, imaxA = 2000.0, 90.0
	pts := [][]float64{{24, 0.80}, {36, 0.90}, {48, 0.95}}
	d := curveHoldUp(&sizing.Converter{EfficiencyCurve: pts, MaxInputCurrentA: spiceF64(imaxA)}, nil)
	r, err := sizing.Size(&d)
	if err != nil {
		t.Fatal(err)
	}
	c := r.Candidates[0]
	if !c.Feasible || c.RuntimeS == nil || c.RuntimeEnd != "input_current" {
		t.Fatalf("top candidate: feasible %v, runtime end %q, want a feasible bank whose runtime ends at \"input_current\" (%s)", c.Feasible, c.RuntimeEnd, c.Reason)
	}
	uStop := curveInputStopV(pts, loadW, imaxA)
	if !(uStop > r.MinV) {
		t.Fatalf("input-current stop %v V is not above the window bottom %v V: the case checks nothing", uStop, r.MinV)
	}
	n := spiceBankNetlist{
		title:      d.Name + " (input current limit)",
		capF:       c.WorstCapacitanceF,
		esrOhm:     c.WorstESROhm,
		leakageOhm: c.LeakageOhm,
		v0:         r.MaxV,
		load:       []string{fmt.Sprintf("BLOAD vt 0 I = %s / (%s * max(V(vt), 1e-6))", spiceNum(loadW), spiceEfficiency(pts))},
		passS:      r.PassDurationS,
		minV:       uStop, // trun: when the terminal falls to the input-current stop
		stopS:      1.02*math.Max(*c.RuntimeS, r.PassDurationS) + r.ProfileDurationS,
	}
	got := runNgspice(t, bin, t.TempDir(), "imax", n.String())
	// Expected values: ngspice 39 transient simulation; tolerance ngspiceRelTol.
	compareWithNgspice(t, c.CellID, "runtime_s to the input-current stop (s)", *c.RuntimeS, got["trun"])
	compareWithNgspice(t, c.CellID, "min_terminal_v (V)", c.MinTerminalV, got["umin"])
}

// TestNgspiceAgreesWithCurveRegeneration: a profile that discharges at
// 2 kW and then takes back 1.5 kW of regenerated power through the same
// converter curve (the bank then receives |P|·η(V), stepcurve.go), from a
// start voltage of 40 V so that the regeneration never meets the window
// top. ngspice's behavioural source I = P/(η·V) while discharging and
// P·η/V while charging, with P from a piecewise-linear source, must give
// the same lowest terminal voltage and end capacitor voltage of the pass
// within ngspiceRelTol (REFERENCES.md 12.1, 12.8). The design is invented.
func TestNgspiceAgreesWithCurveRegeneration(t *testing.T) {
	bin := ngspiceOrSkip(t)
	t.Parallel()
	pts := [][]float64{{24, 0.80}, {36, 0.90}, {48, 0.95}}
	d := curveHoldUp(&sizing.Converter{EfficiencyCurve: pts}, nil)
	d.Load.StartV = spiceF64(40)
	d.Load.Steps = []sizing.Step{{PowerW: spiceF64(2000), DurationS: 5}, {PowerW: spiceF64(-1500), DurationS: 3}}
	r, c := sizeTop(t, &d)
	if c.EndCapacitorV >= 48 || c.MinTerminalV <= r.MinV {
		t.Fatalf("end %v V, lowest %v V: the case must stay inside the window", c.EndCapacitorV, c.MinTerminalV)
	}
	// P(t): 2 kW for 5 s, −1.5 kW for 3 s, repeated; 1 µs edges centred on
	// each change, so that every plateau carries its energy.
	const edge = 1e-6
	reps := *d.Load.Repeat
	pwl := []string{"0 2000"}
	for k := 0; k < reps; k++ {
		t0 := float64(k) * 8
		pwl = append(pwl,
			fmt.Sprintf("%s 2000 %s -1500", spiceNum(t0+5-edge/2), spiceNum(t0+5+edge/2)))
		if k < reps-1 {
			pwl = append(pwl, fmt.Sprintf("%s -1500 %s 2000", spiceNum(t0+8-edge/2), spiceNum(t0+8+edge/2)))
		}
	}
	eta := spiceEfficiency(pts)
	n := spiceBankNetlist{
		title:      d.Name + " (regeneration)",
		capF:       c.WorstCapacitanceF,
		esrOhm:     c.WorstESROhm,
		leakageOhm: c.LeakageOhm,
		v0:         40,
		load: []string{
			fmt.Sprintf("VPW pw 0 PWL(%s)", strings.Join(pwl, " ")),
			fmt.Sprintf("BLOAD vt 0 I = V(pw) >= 0 ? V(pw) / (%s * max(V(vt), 1e-6)) : V(pw) * %s / max(V(vt), 1e-6)", eta, eta),
		},
		passS: r.PassDurationS,
		minV:  r.MinV,
		stopS: r.PassDurationS * 1.01,
	}
	got := runNgspice(t, bin, t.TempDir(), "regen", n.String(), "umin", "vcend")
	// Expected values: ngspice 39 transient simulation; tolerance ngspiceRelTol.
	compareWithNgspice(t, c.CellID, "min_terminal_v (V)", c.MinTerminalV, got["umin"])
	compareWithNgspice(t, c.CellID, "end_capacitor_v (V)", c.EndCapacitorV, got["vcend"])
}
