package sizing

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func fp(x float64) *float64 { return &x }
func ip(x int) *int         { return &x }

// testCell is an invented cell for solver tests (not a real product).
func testCell(id string) Cell {
	return Cell{ID: id, Name: "test cell " + id, RatedV: 2.7, SurgeV: fp(2.85), CapacitanceF: 300,
		ESROhm: 0.004, MassKg: fp(0.06), VolumeL: fp(0.05), UnitPrice: fp(5)}
}

func mustSize(t *testing.T, d *Design) *Report {
	t.Helper()
	r, err := Size(d)
	if err != nil {
		t.Fatalf("Size: %v", err)
	}
	return r
}

func loadDesign(t *testing.T, name string) *Design {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	d, err := DecodeDesign(f)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return d
}

func TestSizeConstantCurrentAnalytic(t *testing.T) {
	t.Parallel()
	// One constant-current step I for T seconds, no leakage. At worst case
	// (C × 0.8, R × 2, REFERENCES.md 4.4) the terminal voltage at the end is
	// max − I·T/C_b − I·R_b (REFERENCES.md 3.5) with C_b = 0.8·C·p/s and
	// R_b = 2·R·s/p, so the fewest strings are
	//   p = ⌈I·s·(T/(0.8·C) + 2·R)/(max − min)⌉.
	cell := testCell("cc")
	d := &Design{Name: "cc", Window: Window{MaxV: 27, MinV: 13.5},
		Load:  Load{Steps: []Step{{CurrentA: fp(25), DurationS: 60}}},
		Cells: []Cell{cell}}
	r := mustSize(t, d)
	c := r.Candidates[0]
	s := 10.0 // 27 / 2.7 = 10 cells in series
	wantP := math.Ceil(25 * s * (60/(0.8*300) + 2*0.004) / (27 - 13.5))
	if !c.Feasible || c.Series != 10 || c.Parallel != int(wantP) {
		t.Fatalf("got %d s × %d p (feasible %v), want 10 s × %v p", c.Series, c.Parallel, c.Feasible, wantP)
	}
	cb := 0.8 * 300 * wantP / s
	rb := 2 * 0.004 * s / wantP
	near(t, "min terminal voltage", c.MinTerminalV, 27-25*60/cb-25*rb, 1e-12)
	// The runtime repeats the step until the cut-off: t = C_b·(max − I·R_b − min)/I (REFERENCES.md 3.5).
	near(t, "runtime", *c.RuntimeS, cb*(27-25*rb-13.5)/25, 1e-12)
	// RMS of a constant current is the current; stored and usable energy at
	// beginning and end of life (REFERENCES.md 3.1, 3.2).
	near(t, "rms current", c.RMSCurrentA, 25, 1e-12)
	near(t, "stored energy", c.StoredEnergyJ, 0.5*300*wantP/s*27*27, 1e-12)
	near(t, "usable energy", c.UsableEnergyJ, 0.5*cb*(27*27-13.5*13.5), 1e-12)
	near(t, "bank ESR", c.ESROhm, 0.004*s/wantP, 1e-12)
	if c.Limit != "voltage" {
		t.Errorf("limit = %q, want voltage", c.Limit)
	}
}

// cpTime is REFERENCES.md 3.10: constant power P from open-circuit v0
// through R and C to terminal u2, t = C(u1² − u2²)/(2P) − R·C·ln(u1/u2),
// u1 = (v0 + √(v0² − 4PR))/2.
func cpTime(c, r, p, v0, u2 float64) float64 {
	u1 := (v0 + math.Sqrt(v0*v0-4*p*r)) / 2
	return c*(u1*u1-u2*u2)/(2*p) - r*c*math.Log(u1/u2)
}

func TestSizeConstantPowerMinimalStrings(t *testing.T) {
	t.Parallel()
	// 1.5 kW at the converter output, efficiency 0.9, for 40 s, window 27 → 12 V.
	cell := testCell("cp")
	d := &Design{Name: "cp", Window: Window{MaxV: 27, MinV: 12},
		Load:  Load{Efficiency: fp(0.9), Steps: []Step{{PowerW: fp(1500), DurationS: 40}}},
		Cells: []Cell{cell}}
	c := mustSize(t, d).Candidates[0]
	if !c.Feasible {
		t.Fatalf("infeasible: %s", c.Reason)
	}
	p := 1500 / 0.9
	bank := func(par int) (float64, float64) { return 0.8 * 300 * float64(par) / 10, 2 * 0.004 * 10 / float64(par) }
	cb, rb := bank(c.Parallel)
	if tt := cpTime(cb, rb, p, 27, 12); tt < 40 {
		t.Errorf("%d strings run only %.4g s by the closed form, want ≥ 40 s", c.Parallel, tt)
	}
	cb1, rb1 := bank(c.Parallel - 1)
	if tt := cpTime(cb1, rb1, p, 27, 12); tt >= 40 {
		t.Errorf("%d strings already run %.4g s by the closed form: the solver did not find the fewest", c.Parallel-1, tt)
	}
	// Runtime: the single step repeats back to back, so the runtime is the
	// closed-form time to the cut-off.
	near(t, "runtime", *c.RuntimeS, cpTime(cb, rb, p, 27, 12), 1e-9)
	near(t, "delivered energy", c.BankEnergyJ, p*40, 1e-12)
}

func TestSizeLimits(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name      string
		cell      func(*Cell)
		steps     []Step
		minV      float64
		wantP     int
		wantLimit string
	}{
		// 100 A on cells rated 30 A peak: ⌈100/30⌉ = 4 strings (hand computed),
		// more than the energy needs (1 string).
		{"peak current", func(c *Cell) { c.PeakCurrentA = fp(30) }, []Step{{CurrentA: fp(100), DurationS: 0.1}}, 13.5, 4, "peak_current"},
		// 90 A for 1 s in every 10 s: I_rms = 90·√0.1 = 28.46 A (REFERENCES.md 3.14);
		// a 10 A continuous rating needs ⌈2.846⌉ = 3 strings.
		{"rms current", func(c *Cell) { c.MaxCurrentA = fp(10) }, []Step{{CurrentA: fp(90), DurationS: 1}, {Rest: true, DurationS: 9}}, 13.5, 3, "rms_current"},
		// 3 kW on one string of R_b = 2·0.004·10 = 0.08 Ω: 4·P·R = 960 V² is more
		// than 27² = 729 V², so even the full bank is below its maximum-power
		// point 2√(PR) = 31 V (REFERENCES.md 3.8) and the load collapses at once;
		// two strings halve R: 4·P·R = 480 V² < 729 V², and the energy is ample.
		{"power limit", nil, []Step{{PowerW: fp(3000), DurationS: 0.5}}, 5, 2, "power"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			cell := testCell("x")
			if c.cell != nil {
				c.cell(&cell)
			}
			d := &Design{Name: c.name, Window: Window{MaxV: 27, MinV: c.minV}, Load: Load{Steps: c.steps}, Cells: []Cell{cell}}
			got := mustSize(t, d).Candidates[0]
			if !got.Feasible || got.Parallel != c.wantP || got.Limit != c.wantLimit {
				t.Errorf("got %d strings, limit %q (feasible %v, %s); want %d, %q", got.Parallel, got.Limit, got.Feasible, got.Reason, c.wantP, c.wantLimit)
			}
		})
	}
}

func TestSizeInfeasibleAndRanking(t *testing.T) {
	t.Parallel()
	leaky := testCell("leaky")
	leaky.LeakageA = fp(0.05) // Rp·C = 2.7/0.05·300 = 16 200 s per cell
	cheap := testCell("cheap")
	cheap.UnitPrice = fp(1)
	light := testCell("light")
	light.UnitPrice = fp(9)
	light.MassKg = fp(0.01)
	// A rest of 2 h: the leaky cell loses 1 − e^(−7200/16200) = 36 % of its
	// voltage, below the 27 → 20 V window whatever the string count; the others
	// have no leakage.
	d := &Design{Name: "rank", Window: Window{MaxV: 27, MinV: 20},
		Load:  Load{Steps: []Step{{CurrentA: fp(5), DurationS: 10}, {Rest: true, DurationS: 7200}}},
		Cells: []Cell{leaky, light, cheap}}
	r := mustSize(t, d)
	ids := []string{}
	for _, c := range r.Candidates {
		ids = append(ids, c.CellID)
	}
	if strings.Join(ids, ",") != "cheap,light,leaky" || r.Recommended == nil || *r.Recommended != "cheap" {
		t.Fatalf("order %v, recommended %v; want cheap,light,leaky and cheap", ids, r.Recommended)
	}
	bad := r.Candidates[2]
	if bad.Feasible || !strings.Contains(bad.Reason, "drain alone") {
		t.Errorf("leaky cell: feasible %v, reason %q; want infeasible, blamed on leakage", bad.Feasible, bad.Reason)
	}
	d.RankBy = "mass"
	r = mustSize(t, d)
	if *r.Recommended != "light" {
		t.Errorf("rank by mass recommends %s, want light", *r.Recommended)
	}
	d.Cells = []Cell{leaky}
	r = mustSize(t, d)
	if r.Recommended != nil || r.Curve != nil {
		t.Errorf("no feasible cell: recommended %v, want null and no curve", *r.Recommended)
	}
}

func TestMoreStringsNeverWorse(t *testing.T) {
	t.Parallel()
	// Invariant (more strings never make it worse; own derivation): runtime and the lowest terminal
	// voltage never get worse with more strings.
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json", "logger-hold-up.json"} {
		d := loadDesign(t, name)
		p := newPlan(d)
		for i := range d.Cells {
			var flags []Flag
			l := p.limits(&d.Cells[i], &flags)
			prevMin, prevRun := math.Inf(-1), math.Inf(-1)
			for par := 1; par <= 40; par++ {
				m := l.bank(par)
				s := m.run(p.steps, p.repeat, p.maxV, p.minV, p.maxV)
				rt := m.runtime(p.steps, p.period, p.minV, p.maxV, runtimeStepBudget)
				run := rt.t
				if !rt.within {
					run = math.Inf(1)
				}
				if s.stop == stopNone && s.minU < prevMin-1e-12 || run < prevRun-1e-9 {
					t.Fatalf("%s %s: %d strings: min %v (was %v), runtime %v (was %v)", name, d.Cells[i].ID, par, s.minU, prevMin, run, prevRun)
				}
				if s.stop == stopNone {
					prevMin = s.minU
				}
				prevRun = run
			}
		}
	}
}

func TestRuntimeRepeatsAndAveraging(t *testing.T) {
	t.Parallel()
	// A slow drain: 1 A for 1 s, rest 9 s, on a bank that lasts thousands of
	// periods. The averaged count (small budget) must agree with running every
	// period (large budget) to well within one period.
	m := newBankModel(20, 0.01, 1e-4)
	steps := []compiledStep{{kind: kindCurrent, x: 1, dur: 1}, {kind: kindRest, dur: 9}}
	exact := m.runtime(steps, 10, 10, 20, 1<<30)
	est := m.runtime(steps, 10, 10, 20, 200)
	if !exact.within || exact.estimated || !est.within || !est.estimated {
		t.Fatalf("exact %+v, estimated %+v", exact, est)
	}
	if math.Abs(est.t-exact.t) > 10 {
		t.Errorf("averaged runtime %v s, exact %v s: off by more than one 10 s period", est.t, exact.t)
	}
	// The exact count against the closed form of the same affine ODE: per
	// period, v → v·e^(−10k) − (1 A/C)·… is awkward by hand, so check the
	// no-leak case instead: 200 C of usable charge ((20 − 10 − 0.01) V × 20 F
	// → 199.8 C at the last pulse) at 1 C per period ends in period 200, 0.8 s
	// into its pulse: 199·10 + 0.8 s (hand computed from REFERENCES.md 3.5).
	m = newBankModel(m.c, m.r, 0)
	got := m.runtime(steps, 10, 10, 20, 1<<30)
	near(t, "runtime of 200 periods", got.t, 1990.8, 1e-9)
	// A period that ends where it started never runs out: nil runtime.
	charge := []compiledStep{{kind: kindCurrent, x: 2, dur: 1}, {kind: kindCurrent, x: -1, dur: 4}}
	if rt := m.runtime(charge, 5, 10, 20, 1<<30); rt.within {
		t.Errorf("a recharging profile ran out at %v s; want nil runtime", rt.t)
	}
}

func TestDemoDesigns(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json", "logger-hold-up.json"} {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			d := loadDesign(t, name)
			r := mustSize(t, d)
			if r.Recommended == nil || r.Curve == nil {
				t.Fatalf("no recommendation for a demo design")
			}
			for _, c := range r.Candidates {
				if !c.Feasible {
					continue
				}
				// Every feasible bank: terminal voltage stays in the window, the
				// runtime covers the pass, the energy bookkeeping closes
				// (REFERENCES.md 3.11; leakage by difference, never negative).
				if c.MinTerminalV < d.Window.MinV || c.RuntimeS == nil || *c.RuntimeS < r.PassDurationS-1e-9 {
					t.Errorf("%s: min %v V, runtime %v for a %v s pass", c.CellID, c.MinTerminalV, c.RuntimeS, r.PassDurationS)
				}
				if c.Cells != c.Series*c.Parallel || c.CellV > c.CellCeilingV*(1+1e-12) {
					t.Errorf("%s: %d s × %d p = %d cells at %v V per cell (ceiling %v V)", c.CellID, c.Series, c.Parallel, c.Cells, c.CellV, c.CellCeilingV)
				}
				if c.LeakageLossJ < 0 || c.ESRLossJ <= 0 {
					t.Errorf("%s: losses ESR %v J, leakage %v J", c.CellID, c.ESRLossJ, c.LeakageLossJ)
				}
			}
			// The curve holds the reported extreme and starts at rest at the top.
			cv := r.Curve
			minU := math.Inf(1)
			for _, u := range cv.TerminalV {
				minU = math.Min(minU, u)
			}
			near(t, "curve minimum", minU, r.Candidates[0].MinTerminalV, 1e-12)
			if cv.TimeS[0] != 0 || cv.TerminalV[0] != d.Window.MaxV || len(cv.TimeS) > curvePoints+10 {
				t.Errorf("curve starts at (%v s, %v V) with %d points", cv.TimeS[0], cv.TerminalV[0], len(cv.TimeS))
			}
		})
	}
}

func TestUPSDemoFigures(t *testing.T) {
	t.Parallel()
	d := loadDesign(t, "ups-ride-through.json")
	r := mustSize(t, d)
	var c *Candidate
	for i := range r.Candidates {
		if r.Candidates[i].CellID == "demo-c400-2v8" {
			c = &r.Candidates[i]
		}
	}
	// 42.0 V over a 2.8 V ceiling: 15 cells (decimal intent, issue text).
	if c == nil || c.Series != 15 {
		t.Fatalf("demo-c400-2v8: %+v", c)
	}
	// Cold ESR at −30 °C: log-linear between 25 °C (×1) and −40 °C (×2.2):
	// 2.2^(55/65) (ColdESRFactor); worst ESR = 2.8 mΩ × 2.0 (EOL) × that × 15/p.
	k := math.Pow(2.2, 55.0/65.0)
	near(t, "cold factor", c.ColdESRFactor, k, 1e-12)
	near(t, "worst ESR", c.WorstESROhm, 0.0028*2*k*15/float64(c.Parallel), 1e-12)
	// Worst capacitance: rated × end of life 0.8 × the −10 % tolerance
	// (applied by default: end-of-life criteria are relative to the
	// initial measured value, common practice, no source).
	near(t, "worst capacitance", c.WorstCapacitanceF, 400*0.8*0.9*float64(c.Parallel)/15, 1e-12)
	// The pass: the first step is 3500 W / 0.94 at the bank; the delivered
	// energy is exactly P·t for it plus the other steps' exact integrals, so at
	// least 3500/0.94·11 J.
	if c.BankEnergyJ < 3500/0.94*11 {
		t.Errorf("delivered %v J, less than the power step alone", c.BankEnergyJ)
	}
	// The curve's cell temperature peaks at the hot spot: the curve holds
	// every step end, where the first-order rise of a heating step peaks.
	hot := math.Inf(-1)
	for _, x := range r.Curve.TemperatureC {
		hot = math.Max(hot, x)
	}
	if len(r.Curve.TemperatureC) != len(r.Curve.TimeS) {
		t.Fatalf("temperature curve has %d points, time %d", len(r.Curve.TemperatureC), len(r.Curve.TimeS))
	}
	near(t, "curve hot spot", hot, c.Thermal.HotSpotC, 1e-12)
}

func TestReportJSONKeys(t *testing.T) {
	t.Parallel()
	// The report keys the issue fixes (never renamed).
	r := mustSize(t, loadDesign(t, "ups-ride-through.json"))
	b, err := json.Marshal(r)
	if err != nil {
		t.Fatal(err)
	}
	var top map[string]any
	if err := json.Unmarshal(b, &top); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"design", "recommended", "candidates"} {
		if _, ok := top[k]; !ok {
			t.Errorf("report has no %q", k)
		}
	}
	cand := top["candidates"].([]any)[0].(map[string]any)
	for _, k := range []string{"cell_id", "feasible", "reason", "series", "parallel", "cells", "capacitance_f", "esr_ohm",
		"stored_energy_j", "usable_energy_j", "runtime_s", "min_terminal_v", "peak_current_a", "rms_current_a", "flags"} {
		if _, ok := cand[k]; !ok && k != "reason" {
			t.Errorf("candidate has no %q", k)
		}
	}
}

func TestLongProfileCurveDecimated(t *testing.T) {
	t.Parallel()
	// 20 000 alternating power steps: more edges than the curve budget, so the
	// curve is bucketed, and must still hold the pass's lowest terminal voltage.
	steps := make([]Step, 20000)
	for i := range steps {
		steps[i] = Step{PowerW: fp(float64(40 + 30*(i%3))), DurationS: 1}
	}
	d := &Design{Name: "long", Window: Window{MaxV: 27, MinV: 12}, Load: Load{Steps: steps}, Cells: []Cell{testCell("a")}}
	r := mustSize(t, d)
	cv := r.Curve
	if !cv.Decimated || len(cv.TimeS) > curvePoints {
		t.Fatalf("decimated %v with %d points", cv.Decimated, len(cv.TimeS))
	}
	minU := math.Inf(1)
	for i, u := range cv.TerminalV {
		minU = math.Min(minU, u)
		if i > 0 && cv.TimeS[i] < cv.TimeS[i-1] {
			t.Fatalf("curve time goes back at point %d", i)
		}
	}
	near(t, "decimated curve minimum", minU, r.Candidates[0].MinTerminalV, 1e-12)
}

func TestCandidateCurve(t *testing.T) {
	t.Parallel()
	d := loadDesign(t, "ups-ride-through.json")
	r := mustSize(t, d)
	for _, c := range r.Candidates[:2] {
		cv, err := CandidateCurve(d, r, c.CellID)
		if err != nil {
			t.Fatal(err)
		}
		minU := math.Inf(1)
		for _, u := range cv.TerminalV {
			minU = math.Min(minU, u)
		}
		// The curve holds every step end, where the pass's lowest terminal
		// voltage lies (the terminal voltage is monotone within a discharge step; own derivation).
		near(t, c.CellID+" curve minimum", minU, c.MinTerminalV, 1e-12)
	}
	if _, err := CandidateCurve(d, r, "nope"); err == nil {
		t.Errorf("curve of an unknown cell")
	}
}

// TestSizePicowattLoadOnAHighVoltageBank is issue 14, item 5: a 5000 V to
// 24 V window, one step of 1e-12 W for 10 s and a 3.0 V 500 F cell with
// passive balancing was refused as "a computed figure is not finite". The
// load is negligible, so the runtime is the drain's alone: with the
// leakage and balancing resistor per cell as a conductance g_cell across
// the worst-case cell capacitance C_w, the bank falls as
// v = max_v·e^(−t·g_cell/C_w) (the same for any string count), and the
// terminal (v less a current of 2e-16 A through the ESR) reaches min_v at
//
//	t = (C_w/g_cell)·ln(max_v/min_v)
//
// (own arithmetic from REFERENCES.md 3.6). The load's 1e-12 W × 1200 s
// moves it by ~1e-16 of the 3 MJ the bank holds, far inside the tolerance.
func TestSizePicowattLoadOnAHighVoltageBank(t *testing.T) {
	t.Parallel()
	d := &Design{Name: "issue 14 item 5", Window: Window{MaxV: 5000, MinV: 24},
		Load:  Load{Steps: []Step{{PowerW: fp(1e-12), DurationS: 10}}},
		Cells: []Cell{{ID: "c500", RatedV: 3.0, CapacitanceF: 500, ESROhm: 0.01, LeakageA: fp(0.001)}}}
	c := mustSize(t, d).Candidates[0]
	if !c.Feasible || c.Series != 1667 || c.Parallel != 1 {
		t.Fatalf("%d s × %d p, feasible %v (%s); want 1667 s × 1 p (⌈5000/3⌉, one string carries 1e-12 W)",
			c.Series, c.Parallel, c.Feasible, c.Reason)
	}
	if c.Balancing == nil || c.Balancing.ResistorOhm == nil || c.RuntimeS == nil {
		t.Fatalf("balancing %+v, runtime %v; want a passive resistor and a runtime", c.Balancing, c.RuntimeS)
	}
	gCell := 0.001/3.0 + 1 / *c.Balancing.ResistorOhm // leakage at rated voltage as a resistance, and the resistor
	cw := 500 * DefaultEOLCapacitanceFactor
	want := cw / gCell * math.Log(5000.0/24)
	if math.Abs(*c.RuntimeS-want) > 1e-9*want {
		t.Errorf("runtime %.12g s, want (C_w/g_cell)·ln(max_v/min_v) = %.12g s", *c.RuntimeS, want)
	}
	// RMS current ≈ P/v ≈ 1e-12/4900 A, between the figures at the ends of
	// the pass (the terminal voltage falls from 5000 V).
	if !(c.RMSCurrentA >= 1e-12/5000 && c.RMSCurrentA <= 1e-12/c.MinTerminalV*(1+1e-12)) {
		t.Errorf("RMS current %g A, want within [P/5000 V, P/%g V]", c.RMSCurrentA, c.MinTerminalV)
	}
}
