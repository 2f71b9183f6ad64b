package sizing

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// systemCell is an invented cell (not a real product) with the worst case
// switched off (end-of-life factors 1, no tolerance, no cold), so that the
// closed forms below can use its own figures.
func systemCell() Cell {
	return Cell{ID: "sys", RatedV: 2.7, CapacitanceF: 360, ESROhm: 0.0032}
}

func plainDesign(steps ...Step) *Design {
	return &Design{Name: "system", Window: Window{MaxV: 27, MinV: 12},
		EOL:   &EOL{CapacitanceFactor: fp(1), ESRFactor: fp(1)},
		Load:  Load{Steps: steps},
		Cells: []Cell{systemCell()}}
}

// Recharge and first charge by a constant-current, constant-voltage
// charger, no leakage: t = C·(max_v − I·R − v0)/I at constant current,
// then R·C·ln(1/f) at constant voltage (REFERENCES.md 3.13, the handbook RC
// charge). The series loss is I²·R·t_CC plus the constant-voltage phase's
// ½·C·(I·R)²·(1 − f²) (∫i²R dt of an exponential decay from I to f·I).
func TestChargerConstantCurrentClosedForm(t *testing.T) {
	t.Parallel()
	d := plainDesign(Step{CurrentA: fp(40), DurationS: 120})
	d.Charger = &Charger{CurrentA: 15, EndCurrentPct: fp(2), Efficiency: fp(0.9)}
	d.Load.PeriodS = fp(3600)
	c := mustSize(t, d).Candidates[0]
	if !c.Feasible || c.RechargeS == nil || c.FirstChargeS == nil {
		t.Fatalf("feasible %v, recharge %v, first charge %v: %s", c.Feasible, c.RechargeS, c.FirstChargeS, c.Reason)
	}
	C, R, I, f, top := c.WorstCapacitanceF, c.WorstESROhm, 15.0, 0.02, 27.0
	tCC := C * (top - I*R - c.EndCapacitorV) / I
	tCV := R * C * math.Log(1/f)
	near(t, "recharge_s", *c.RechargeS, tCC+tCV, 1e-9)
	near(t, "first_charge_s", *c.FirstChargeS, c.CapacitanceF*(top-I*c.ESROhm)/I+c.ESROhm*c.CapacitanceF*math.Log(1/f), 1e-9)
	loss := I*I*R*tCC + 0.5*C*(I*R)*(I*R)*(1-f*f)
	near(t, "charge_series_loss_j", *c.ChargeSeriesLossJ, loss, 1e-9)
	// Energy into the bank: what the capacitor gains plus the series loss,
	// drawn from the supply through the charger's 90 %.
	vEnd := top - f*I*R
	gain := 0.5 * C * (vEnd*vEnd - c.EndCapacitorV*c.EndCapacitorV)
	near(t, "charge_energy_j", *c.ChargeEnergyJ, (gain+loss)/0.9, 1e-9)
}

// A power limit: constant current to P/I, then constant power to max_v,
// with g = 0 t = C·(u1² − u0²)/(2P) + R·C·ln(u1/u0) (REFERENCES.md 3.13,
// 3.10 with P < 0), then constant voltage from the current P/max_v.
func TestChargerPowerLimitClosedForm(t *testing.T) {
	t.Parallel()
	d := plainDesign(Step{CurrentA: fp(40), DurationS: 120})
	d.Charger = &Charger{CurrentA: 20, PowerW: fp(300)}
	c := mustSize(t, d).Candidates[0]
	if c.RechargeS == nil {
		t.Fatalf("no recharge: %+v", c.Flags)
	}
	C, R, I, P, top, f := c.WorstCapacitanceF, c.WorstESROhm, 20.0, 300.0, 27.0, 0.05
	u0, u1 := P/I, top // the terminal voltage where the power limit binds, and the top
	tCC := C * (u0 - I*R - c.EndCapacitorV) / I
	tCP := C*(u1*u1-u0*u0)/(2*P) + R*C*math.Log(u1/u0)
	tCV := R * C * math.Log(1/f) // from P/max_v down to 5 % of it
	near(t, "recharge_s", *c.RechargeS, tCC+tCP+tCV, 1e-9)
}

// With the leakage and balancing drain g the constant-voltage phase
// approaches v∞ = U/(1 + g·R) with τ = R·C/(1 + g·R) (REFERENCES.md 3.13);
// an end current below the drain's own current never ends, and says so.
func TestChargerWithLeakage(t *testing.T) {
	t.Parallel()
	m := newBankModel(50, 0.02, 0.05)                     // 20 Ω of drain across 50 F
	cp := &chargerPlan{currentA: 5, endFrac: 0.2, eff: 1} // ends at 1 A; the drain takes 0.8 A at the top
	top := 16.0
	res := m.charge(cp, 4, top)
	if !res.ends {
		t.Fatalf("does not end: %s", res.why)
	}
	// Constant current: C·dv/dt = I − g·v from 4 V to top − I·R.
	vA := top - 5*0.02
	tCC := 50 / 0.05 * math.Log((5/0.05-4)/(5/0.05-vA))
	k := 1 + 0.05*0.02
	vInf, tau := top/k, 0.02*50/k
	tCV := tau * math.Log((vInf-vA)/(vInf-(top-1*0.02)))
	near(t, "charge time", res.t, tCC+tCV, 1e-12)

	// The drain at 16 V takes about 0.8 A, more than an end current of 0.5 A:
	// the charge never ends.
	cp.endFrac = 0.01
	cp.currentA = 50
	mm := newBankModel(50, 0.02, 0.05)
	res = mm.charge(cp, 4, top)
	if res.ends || !strings.Contains(res.why, "never ends") {
		t.Errorf("an end current below the drain's: ends %v (%q)", res.ends, res.why)
	}
	// A charger weaker than the drain never reaches the top.
	cp.currentA = 0.5
	res = mm.charge(cp, 4, top)
	if res.ends || !strings.Contains(res.why, "does not exceed") {
		t.Errorf("a charger weaker than the drain: ends %v (%q)", res.ends, res.why)
	}
}

// A repeated event whose recharge does not fit between events is not
// feasible, with the reason; with a longer period it is.
func TestChargerPeriodTooShort(t *testing.T) {
	t.Parallel()
	d := plainDesign(Step{CurrentA: fp(40), DurationS: 120})
	d.Charger = &Charger{CurrentA: 2}
	d.Load.PeriodS = fp(600)
	c := mustSize(t, d).Candidates[0]
	if c.Feasible || c.Limit != "recharge" || !strings.Contains(c.Reason, "charger.current_a") {
		t.Fatalf("feasible %v, limit %q, reason %q; want infeasible by the recharge", c.Feasible, c.Limit, c.Reason)
	}
	if *c.RechargeS <= 600-120 {
		t.Errorf("recharge %g s fits in the 480 s idle time, yet refused", *c.RechargeS)
	}
	d.Load.PeriodS = fp(*c.RechargeS + 120 + 1)
	if c := mustSize(t, d).Candidates[0]; !c.Feasible {
		t.Errorf("with room for the recharge: %s", c.Reason)
	}
}

// The precharge resistor (REFERENCES.md 3.16): R ≥ U/I_max − ESR rounded up
// to E24 (IEC 60063), peak current U/(R + ESR), energy ½·C·U², 99 % after
// (R + ESR)·C·ln 100 — and 5·(R + ESR)·C leaves e⁻⁵ = 0.67 %, the
// textbook's 99.3 %.
func TestPrechargePlan(t *testing.T) {
	t.Parallel()
	pc := PrechargePlan(48, 58, 0.012, 10)
	near(t, "needed", pc.NeededOhm, 4.8-0.012, 1e-12)
	if pc.ResistanceOhm != 5.1 { // E24: 4.7 < 4.788 ≤ 5.1
		t.Errorf("resistance %g Ω, want the E24 value 5.1 Ω", pc.ResistanceOhm)
	}
	near(t, "peak current", pc.PeakCurrentA, 48/(5.1+0.012), 1e-12)
	if pc.PeakCurrentA > 10 {
		t.Errorf("peak %g A above the 10 A limit", pc.PeakCurrentA)
	}
	near(t, "peak power", pc.PeakPowerW, pc.PeakCurrentA*pc.PeakCurrentA*5.1, 1e-12)
	near(t, "energy", pc.EnergyJ, 0.5*58*48*48, 1e-12)
	tau := (5.1 + 0.012) * 58
	near(t, "time to 99 %", pc.TimeTo99S, tau*math.Log(100), 1e-12)
	if left := math.Exp(-5 * tau / tau); math.Abs(left-0.0067) > 0.0001 {
		t.Errorf("5 time constants leave %.4f, want 0.0067", left)
	}
	// The ESR alone keeps the current within a loose limit: no resistor.
	if pc := PrechargePlan(48, 58, 0.012, 1e5); pc.ResistanceOhm != 0 || pc.PeakCurrentA != 48/0.012 {
		t.Errorf("loose limit: %+v, want no resistor", pc)
	}
}

// The inrush: without charger the prospective current max_v/ESR is
// reported and flagged; a charger's current limit caps it and the flag
// goes; system.inrush_limit_a sizes the precharge on the new bank at the
// top of its tolerance.
func TestInrush(t *testing.T) {
	t.Parallel()
	d := plainDesign(Step{CurrentA: fp(40), DurationS: 120})
	c := mustSize(t, d).Candidates[0]
	near(t, "prospective inrush", c.InrushCurrentA, 27/c.ESROhm, 1e-12)
	if !hasFlag(c.Flags, "inrush-unlimited") {
		t.Error("no inrush-unlimited flag without charger or limit")
	}
	d.Charger = &Charger{CurrentA: 15}
	c = mustSize(t, d).Candidates[0]
	if c.InrushCurrentA != 15 || hasFlag(c.Flags, "inrush-unlimited") {
		t.Errorf("with a 15 A charger: inrush %g A, flags %v", c.InrushCurrentA, c.Flags)
	}
	d.Charger = nil
	d.System = &System{InrushLimitA: fp(20)}
	d.Cells[0].CapacitanceTolerancePct = []float64{-10, 20}
	c = mustSize(t, d).Candidates[0]
	if c.Precharge == nil || hasFlag(c.Flags, "inrush-unlimited") {
		t.Fatalf("with a limit: precharge %v, flags %v", c.Precharge, c.Flags)
	}
	near(t, "precharge capacitance", c.Precharge.CapacitanceF, c.CapacitanceF*1.2, 1e-12)
	if c.Precharge.PeakCurrentA > 20 {
		t.Errorf("precharge peak %g A above the 20 A limit", c.Precharge.PeakCurrentA)
	}
}

// Wiring (REFERENCES.md 3.17): the bank ESR is (s·R + (s − 1)·R_link +
// R_end)/p + R_bank, and a constant-current step drops I·ESR_bank at once
// (REFERENCES.md 3.5), so the lowest terminal voltage of one step is
// max_v − I·T/C − I·ESR_bank, exactly. The wiring's own loss is reported
// apart from the cells'.
func TestWiringResistance(t *testing.T) {
	t.Parallel()
	d := plainDesign(Step{CurrentA: fp(60), DurationS: 30})
	d.Wiring = &Wiring{LinkResistanceOhm: fp(0.0002), StringResistanceOhm: fp(0.0005), BankResistanceOhm: fp(0.001)}
	c := mustSize(t, d).Candidates[0]
	s, p := float64(c.Series), float64(c.Parallel)
	esr := (s*0.0032+(s-1)*0.0002+0.0005)/p + 0.001
	near(t, "bank ESR", c.ESROhm, esr, 1e-12)
	near(t, "worst ESR", c.WorstESROhm, esr, 1e-12)
	near(t, "lowest terminal voltage", c.MinTerminalV, 27-60*30/c.WorstCapacitanceF-60*esr, 1e-12)
	cells := s * 0.0032 / p
	near(t, "cells' loss", c.ESRLossJ, 60*60*30*cells, 1e-12)
	near(t, "wiring loss", c.WiringLossJ, 60*60*30*(esr-cells), 1e-12)
	near(t, "short-circuit current", c.Hazards.ShortCircuitCurrentA, 27/esr, 1e-12)

	// Without wiring the same design has the cells' ESR alone and no
	// wiring loss; the wiring costs terminal voltage.
	d.Wiring = nil
	bare := mustSize(t, d).Candidates[0]
	if bare.WiringLossJ != 0 || bare.MinTerminalV <= c.MinTerminalV && bare.Parallel == c.Parallel {
		t.Errorf("without wiring: wiring loss %g J, lowest %g V (with wiring %g V)", bare.WiringLossJ, bare.MinTerminalV, c.MinTerminalV)
	}
}

// load.start_v: the pass starts at rest at the start voltage. A
// regenerative step first is absorbed from a part-charged start instead of
// being rejected at the top, and a discharge from start_v ends at
// start_v − I·T/C − I·R (REFERENCES.md 3.5).
func TestStartVoltage(t *testing.T) {
	t.Parallel()
	d := plainDesign(Step{CurrentA: fp(-30), DurationS: 2}, Step{CurrentA: fp(60), DurationS: 30})
	full := mustSize(t, d).Candidates[0]
	if full.RejectedEnergyJ <= 0 {
		t.Fatalf("from the top a charging step is rejected; got %g J", full.RejectedEnergyJ)
	}
	d.Load.StartV = fp(24)
	part := mustSize(t, d).Candidates[0]
	if part.RejectedEnergyJ != 0 {
		t.Errorf("from 24 V: %g J rejected, want none", part.RejectedEnergyJ)
	}
	C, R := part.WorstCapacitanceF, part.WorstESROhm
	v1 := 24 + 30*2/C
	near(t, "end voltage", part.EndCapacitorV, v1-60*30/C, 1e-12)
	near(t, "lowest terminal voltage", part.MinTerminalV, v1-60*30/C-60*R, 1e-12)
}

// converter.min_input_v raises the window bottom; the input current limit
// ends a constant-power step where P/u = I_max, at the terminal voltage
// P/I_max: the runtime of one constant-power step from rest at v0, with no
// leakage, is C·(u0² − u²)/(2P) − R·C·ln(u0/u), u0 = (v0 + √(v0² −
// 4PR))/2, u = P/I_max (REFERENCES.md 3.10).
func TestConverterLimits(t *testing.T) {
	t.Parallel()
	d := plainDesign(Step{PowerW: fp(500), DurationS: 60})
	d.Converter = &Converter{MinInputV: fp(14)}
	c := mustSize(t, d).Candidates[0]
	if c.MinV != 14 {
		t.Errorf("window bottom %g V, want the converter's 14 V", c.MinV)
	}
	d.Converter = &Converter{MaxInputCurrentA: fp(25)}
	c = mustSize(t, d).Candidates[0]
	if !c.Feasible || c.Limit != "input_current" || c.RuntimeEnd != "input_current" {
		t.Fatalf("feasible %v, limit %q, runtime end %q; want the input current limit to set both", c.Feasible, c.Limit, c.RuntimeEnd)
	}
	C, R, P := c.WorstCapacitanceF, c.WorstESROhm, 500.0
	u0 := (27 + math.Sqrt(27*27-4*P*R)) / 2
	u := P / 25
	near(t, "runtime", *c.RuntimeS, C*(u0*u0-u*u)/(2*P)-R*C*math.Log(u0/u), 1e-9)
	if c.MinTerminalV < u*(1-1e-12) {
		t.Errorf("terminal voltage fell to %g V, below the %g V where the converter reaches its limit", c.MinTerminalV, u)
	}
	// A limit that needs more than the window top: no number of strings helps.
	d.Converter = &Converter{MaxInputCurrentA: fp(15)}
	c = mustSize(t, d).Candidates[0]
	if c.Feasible || !strings.Contains(c.Reason, "no number of strings helps") {
		t.Errorf("500 W at 15 A needs 33 V: feasible %v, reason %q", c.Feasible, c.Reason)
	}
}

// Each new key refuses bad input by its field path (the same cases as
// testdata/bad/designs/{charger,converter,wiring,system,start-v}-*.json).
func TestSystemKeysRefusedByField(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name  string
		edit  func(d *Design)
		field string
	}{
		{"charger current", func(d *Design) { d.Charger = &Charger{CurrentA: -5} }, "charger.current_a"},
		{"charger NaN power", func(d *Design) { d.Charger = &Charger{CurrentA: 5, PowerW: fp(math.NaN())} }, "charger.power_w"},
		{"charger efficiency", func(d *Design) { d.Charger = &Charger{CurrentA: 5, Efficiency: fp(1.2)} }, "charger.efficiency"},
		{"end current", func(d *Design) { d.Charger = &Charger{CurrentA: 5, EndCurrentPct: fp(100)} }, "charger.end_current_pct"},
		{"curve unsorted", func(d *Design) {
			d.Converter = &Converter{EfficiencyCurve: [][]float64{{30, 0.9}, {20, 0.85}}}
		}, "converter.efficiency_curve[1]"},
		{"curve efficiency 0", func(d *Design) { d.Converter = &Converter{EfficiencyCurve: [][]float64{{20, 0}}} }, "converter.efficiency_curve[0]"},
		{"curve efficiency above 1", func(d *Design) { d.Converter = &Converter{EfficiencyCurve: [][]float64{{20, 1.01}}} }, "converter.efficiency_curve[0]"},
		{"curve NaN voltage", func(d *Design) { d.Converter = &Converter{EfficiencyCurve: [][]float64{{math.NaN(), 0.9}}} }, "converter.efficiency_curve[0]"},
		{"curve and efficiency", func(d *Design) {
			d.Load.Efficiency = fp(0.9)
			d.Converter = &Converter{EfficiencyCurve: [][]float64{{20, 0.9}}}
		}, "converter.efficiency_curve"},
		{"min input above top", func(d *Design) { d.Converter = &Converter{MinInputV: fp(30)} }, "converter.min_input_v"},
		{"negative input current", func(d *Design) { d.Converter = &Converter{MaxInputCurrentA: fp(-1)} }, "converter.max_input_current_a"},
		{"negative link", func(d *Design) { d.Wiring = &Wiring{LinkResistanceOhm: fp(-0.001)} }, "wiring.link_resistance_ohm"},
		{"NaN bank wiring", func(d *Design) { d.Wiring = &Wiring{BankResistanceOhm: fp(math.NaN())} }, "wiring.bank_resistance_ohm"},
		{"zero inrush limit", func(d *Design) { d.System = &System{InrushLimitA: fp(0)} }, "system.inrush_limit_a"},
		{"module of no cells", func(d *Design) { d.Cells[0].Module = &Module{Series: 0} }, "cells[0].module.series"},
		{"module parallel 0", func(d *Design) { d.Cells[0].Module = &Module{Series: 2, Parallel: ip(0)} }, "cells[0].module.parallel"},
		{"series multiple 0", func(d *Design) { d.SeriesMultiple = ip(0) }, "series_multiple"},
		{"derating unsorted", func(d *Design) { d.Cells[0].VoltageDerating = [][]float64{{65, 2.5}, {25, 2.7}} }, "cells[0].voltage_derating[1]"},
		{"derating not a pair", func(d *Design) { d.Cells[0].VoltageDerating = [][]float64{{65}} }, "cells[0].voltage_derating[0]"},
		{"derating in mV", func(d *Design) { d.Cells[0].VoltageDerating = [][]float64{{25, 2.7}, {65, 2500}} }, "cells[0].voltage_derating[1]"},
		{"derating too low for the window", func(d *Design) {
			d.Window.MaxV = 2000
			d.Cells[0].VoltageDerating = [][]float64{{25, 2.7}, {65, 0.1}}
		}, "cells[0].voltage_derating"},
		{"start above top", func(d *Design) { d.Load.StartV = fp(28) }, "load.start_v"},
		{"start below bottom", func(d *Design) { d.Load.StartV = fp(11) }, "load.start_v"},
	}
	for _, c := range cases {
		d := plainDesign(Step{CurrentA: fp(40), DurationS: 120})
		c.edit(d)
		err := Validate(d)
		var ve ValidationError
		if !errors.As(err, &ve) || len(ve) != 1 || ve[0].Field != c.field {
			t.Errorf("%s: %v, want one problem at %s", c.name, err, c.field)
		}
	}
}

// Modules: the series count rounds up to whole modules of 6 and the string
// count to whole modules of 2 strings; the totals are the modules' own
// figures and the bill of quantities orders modules, with the cells in
// them listed but not priced apart.
func TestModules(t *testing.T) {
	t.Parallel()
	d := plainDesign(Step{PowerW: fp(2500), DurationS: 20})
	d.Window = Window{MaxV: 42, MinV: 21}
	d.Cells[0].UnitPrice = fp(4)
	plain := mustSize(t, d).Candidates[0]
	if plain.Series != 16 { // ⌈42/2.7⌉
		t.Fatalf("single cells: %d in series, want 16", plain.Series)
	}
	d.Cells[0].Module = &Module{Name: "six-pack", Series: 6, Parallel: ip(2), UnitPrice: fp(30), MassKg: fp(0.5)}
	c := mustSize(t, d).Candidates[0]
	if c.Series != 18 || c.Parallel%2 != 0 || !c.Feasible {
		t.Fatalf("modules: %d s × %d p (feasible %v), want 18 in series and an even string count", c.Series, c.Parallel, c.Feasible)
	}
	near(t, "cell voltage", c.CellV, 42.0/18, 1e-12)
	// The fewest strings at 18 in series, rounded up to whole modules.
	d18 := plainDesign(Step{PowerW: fp(2500), DurationS: 20})
	d18.Window = d.Window
	d18.SeriesMultiple = ip(18)
	p18 := mustSize(t, d18).Candidates[0]
	if p18.Series != 18 || c.Parallel != roundUp(p18.Parallel, 2) {
		t.Errorf("modules: %d strings, want %d rounded up to 2 (%d)", c.Parallel, p18.Parallel, roundUp(p18.Parallel, 2))
	}
	m := c.Modules
	if m == nil || m.InSeries != 3 || m.Strings != c.Parallel/2 || m.Count != 3*c.Parallel/2 {
		t.Fatalf("module count %+v for %d s × %d p", m, c.Series, c.Parallel)
	}
	if st := c.Statistics; st == nil || st.ParallelForTarget == nil || *st.ParallelForTarget%2 != 0 {
		t.Errorf("lot analysis of a module of 2 strings: %+v, want a string count for the target in whole modules", st)
	}
	near(t, "price", *c.TotalPrice, 30*float64(m.Count), 1e-12)
	near(t, "mass", *c.MassKg, 0.5*float64(m.Count), 1e-12)
	r := mustSize(t, d)
	b, err := BillOfQuantities(d, r, "sys")
	if err != nil {
		t.Fatal(err)
	}
	if b.Lines[0].Item != "module" || b.Lines[0].Quantity != float64(m.Count) || *b.Lines[0].ExtendedPrice != 30*float64(m.Count) {
		t.Errorf("first line %+v, want %d modules at 30", b.Lines[0], m.Count)
	}
	if b.Lines[1].Item != "cell" || b.Lines[1].Quantity != float64(c.Cells) || b.Lines[1].UnitPrice != nil {
		t.Errorf("second line %+v, want the %d cells, unpriced", b.Lines[1], c.Cells)
	}
	// series_multiple alone: 16 rounds up to 20.
	d.Cells[0].Module = nil
	d.SeriesMultiple = ip(5)
	if c := mustSize(t, d).Candidates[0]; c.Series != 20 || c.Modules != nil {
		t.Errorf("series_multiple 5: %d in series (modules %v), want 20", c.Series, c.Modules)
	}
}

// Voltage derating: the per-cell ceiling follows the table at the hottest
// cell temperature. At 45 °C ambient with no heating figure the table
// [[25, 2.7], [65, 2.3]] gives 2.5 V, so 42 V needs ⌈42/2.5⌉ = 17 cells
// (16 at the rating); with the ESR heating the hot spot reads the table
// hotter, and the bank's cells stay within the ceiling at its own hot
// spot.
func TestVoltageDerating(t *testing.T) {
	t.Parallel()
	d := plainDesign(Step{PowerW: fp(2500), DurationS: 20})
	d.Window = Window{MaxV: 42, MinV: 21}
	d.AmbientC = fp(45)
	d.Cells[0].VoltageDerating = [][]float64{{25, 2.7}, {65, 2.3}}
	c := mustSize(t, d).Candidates[0]
	if c.Series != 17 || c.CeilingTempC == nil || *c.CeilingTempC != 45 {
		t.Fatalf("%d in series, ceiling read at %v °C; want 17 at 45 °C", c.Series, c.CeilingTempC)
	}
	near(t, "ceiling", c.CellCeilingV, 2.5, 1e-12)
	if !hasFlag(c.Flags, "voltage-derated") {
		t.Error("no voltage-derated note")
	}
	// A hot cell: 12 K/W, a heavy pulse load; its hot spot (about 52 °C)
	// reads 2.43 V from the table, below the 2.47 V of 17 cells, so the
	// bank grows to 18.
	d.Cells[0].ThermalResistanceKPerW = fp(12)
	d.Load.Steps = []Step{{PowerW: fp(6000), DurationS: 30}}
	d.Load.PeriodS = fp(40)
	h := mustSize(t, d).Candidates[0]
	if h.Thermal == nil || h.CeilingTempC == nil {
		t.Fatalf("no thermal figures or ceiling temperature: %+v", h.Thermal)
	}
	if *h.CeilingTempC != h.Thermal.HotSpotC || h.Thermal.HotSpotC <= 45 {
		t.Errorf("ceiling read at %g °C, hot spot %g °C; want the hot spot, above the 45 °C ambient", *h.CeilingTempC, h.Thermal.HotSpotC)
	}
	near(t, "ceiling at the hot spot", h.CellCeilingV, 2.7-0.4*(h.Thermal.HotSpotC-25)/40, 1e-12)
	t.Logf("hot: %d s × %d p, hot spot %.2f °C, ceiling %.4f V, cell %.4f V", h.Series, h.Parallel, h.Thermal.HotSpotC, h.CellCeilingV, h.CellV)
	if h.CellV > h.CellCeilingV*(1+1e-12) || h.Series < 18 {
		t.Errorf("%d in series at %g V per cell, above the %g V ceiling at the hot spot", h.Series, h.CellV, h.CellCeilingV)
	}
}
