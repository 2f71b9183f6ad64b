package sizing

import (
	"math"
	"strconv"
	"strings"
	"testing"
)

func TestE24MatchesIEC60063Table(t *testing.T) {
	t.Parallel()
	// IEC 60063:2015 Table 1, E24, verbatim (REFERENCES.md 6.4).
	want := "1.0 1.1 1.2 1.3 1.5 1.6 1.8 2.0 2.2 2.4 2.7 3.0 3.3 3.6 3.9 4.3 4.7 5.1 5.6 6.2 6.8 7.5 8.2 9.1"
	fields := strings.Fields(want)
	if len(fields) != len(seriesE24) {
		t.Fatalf("E24 has %d values, the table %d", len(seriesE24), len(fields))
	}
	for i, f := range fields {
		v, err := strconv.ParseFloat(f, 64)
		if err != nil || v != seriesE24[i] {
			t.Errorf("E24[%d] = %v, table %s", i, seriesE24[i], f)
		}
	}
	// E24 is not the rounded geometric series: round(10^(i/24), 1) differs at
	// exactly 8 places (REFERENCES.md 6.5), so the table must be the table.
	diff := 0
	for i, v := range seriesE24 {
		if math.Round(math.Pow(10, float64(i)/24)*10)/10 != v {
			diff++
		}
	}
	if diff != 8 {
		t.Errorf("E24 differs from the rounded formula at %d places, want 8", diff)
	}
	// E96 does follow round(10^(i/96), 2) at all 96 places (REFERENCES.md 6.7),
	// and E12 is every second E24 value (IEC 60063 Table 1, REFERENCES.md 6.3).
	for i, v := range seriesE96 {
		if f := math.Round(math.Pow(10, float64(i)/96)*100) / 100; f != v {
			t.Errorf("E96[%d] = %v, formula gives %v", i, v, f)
		}
	}
	for i, v := range seriesE12 {
		if seriesE24[2*i] != v {
			t.Errorf("E12[%d] = %v, E24[%d] = %v", i, v, 2*i, seriesE24[2*i])
		}
	}
}

func TestBalancingWorkedExample(t *testing.T) {
	t.Parallel()
	// REFERENCES.md 10.8: 18 cells at 48 V (2.6667 V each), cells rated
	// 2.7 V, leakage spread 1 mA, 2500 F cells.
	vCell := 48.0 / 18
	rule := vCell / (10 * 0.001)
	near(t, "10× rule resistor", rule, 266.667, 1e-5)
	near(t, "E24 floor of the rule", PreferredFloor(rule, seriesE24), 240, 1e-12)
	near(t, "worst-case bound", BalancingBound(48, 2.7, 18, 0.001), 35.294, 1e-4)
	near(t, "E24 floor of the bound", PreferredFloor(35.294, seriesE24), 33, 1e-12)
	near(t, "worst cell with 240 Ω", WorstStaticVoltage(48, 240, 18, 0.001), 2.8933, 1e-4)
	near(t, "worst cell with 33 Ω", WorstStaticVoltage(48, 33, 18, 0.001), 2.69783, 1e-5)
	// 240 Ω at 2.7 V dissipates 30.375 mW (REFERENCES.md 10.8); with a 2×
	// margin the next common rating is 1/16 W (common practice).
	near(t, "dissipation", 2.7*2.7/240, 0.030375, 1e-12)
	near(t, "power rating", ResistorRating(0.030375, 2), 0.0625, 1e-12)
	// Self-discharge time constant R·C = 240·2500 = 600 000 s (10.8).
	near(t, "R·C", 240*2500.0, 600000, 1e-12)

	// A worked example of capbank's own, through the solver: 12 cells of
	// 2.7 V at 30 V (2.5 V each), leakage 2 mA, E24.
	//   rule:  2.5 V / (10 × 2 mA) = 125 Ω
	//   bound: (12 × 2.7 − 30)/(11 × 2 mA) = 2.4/0.022 = 109.09 Ω → stricter
	//   E24 floor of 109.09 Ω = 100 Ω; 2.5²/100 = 62.5 mW → 2 × = 125 mW → 1/8 W
	//   standing loss 12 × 62.5 mW = 0.75 W; R·C = 100 × 300 F = 30 000 s
	//   worst static cell (30 + 100 × 11 × 0.002)/12 = 32.2/12 = 2.68333 V
	cell := testCell("bal")
	cell.LeakageA = fp(0.002)
	d := &Design{Name: "bal", Window: Window{MaxV: 30, MinV: 15}, Load: Load{Steps: []Step{{CurrentA: fp(1), DurationS: 10}}}, Cells: []Cell{cell}}
	b := mustSize(t, d).Candidates[0].Balancing
	if b.Kind != "passive" || b.Count != 12 {
		t.Fatalf("balancing %+v", b)
	}
	near(t, "rule", *b.RuleOhm, 125, 1e-12)
	near(t, "bound", *b.BoundOhm, 2.4/0.022, 1e-12)
	near(t, "resistor", *b.ResistorOhm, 100, 1e-12)
	near(t, "power rating", *b.ResistorPowerW, 0.125, 1e-12)
	near(t, "loss", b.LossW, 0.75, 1e-12)
	near(t, "time constant", *b.TimeConstantS, 30000, 1e-12)
	near(t, "worst static cell", *b.WorstStaticCellV, 32.2/12, 1e-12)
	// Shelf hold: per cell C_eol = 240 F, g = 2 mA/2.7 V + 1/100 Ω; from
	// 2.5 V to 1.25 V: t = C/g·ln 2 (first-order decay).
	g := 0.002/2.7 + 0.01
	near(t, "shelf hold", *b.ShelfHoldH, 240/g*math.Ln2/3600, 1e-9)
}

func TestVoltageSpread(t *testing.T) {
	t.Parallel()
	// REFERENCES.md 10.8 (5.2): 18 cells at 48 V, worst cell with ±20 % →
	// 3.8919 V, ±10 % → 3.2195 V, ±5 % → 2.9302 V.
	near(t, "±20 %", WorstSpreadVoltage(48, 18, 0.2, 0.2), 3.8919, 1e-4)
	near(t, "±10 %", WorstSpreadVoltage(48, 18, 0.1, 0.1), 3.2195, 1e-4)
	near(t, "±5 %", WorstSpreadVoltage(48, 18, 0.05, 0.05), 2.9302, 1e-4)
	// capbank's own worked example, by hand: 4 cells at 10 V, −10 %/+20 %.
	// Equal charge Q; the small cell C·0.9, three at C·1.2:
	//   V_small = V / (1 + 3 × 0.9/1.2) = 10 / (1 + 2.25) = 10/3.25 = 3.076923 V
	near(t, "4 cells −10/+20 %", WorstSpreadVoltage(10, 4, 0.1, 0.2), 10/3.25, 1e-12)
	// One cell alone takes the whole voltage.
	near(t, "one cell", WorstSpreadVoltage(2.7, 1, 0.1, 0.2), 2.7, 1e-15)
}

func TestThermalModel(t *testing.T) {
	t.Parallel()
	// One cell, one string: a constant current I for t seconds heats it at
	// P = I²·R (R the worst-case ESR: 2 × datasheet); the first-order step
	// response is ΔT(t) = P·R_th·(1 − e^(−t/τ)), τ = R_th·m·c_p (REFERENCES.md 3.14).
	cell := testCell("heat")
	cell.RatedV, cell.CapacitanceF, cell.ESROhm = 2.7, 3000, 0.0003
	cell.ThermalResistanceKPerW, cell.MassKg, cell.SpecificHeatJPerKgK = fp(4.5), fp(0.5), fp(1000)
	const I, dur = 80.0, 60.0
	d := &Design{Name: "heat", Window: Window{MaxV: 2.7, MinV: 0.3}, Load: Load{Steps: []Step{{CurrentA: fp(I), DurationS: dur}}},
		Cells: []Cell{cell}}
	c := mustSize(t, d).Candidates[0]
	if c.Parallel != 1 || c.Thermal == nil {
		t.Fatalf("want one cell with thermal figures, got %d strings, %+v", c.Parallel, c.Thermal)
	}
	r := 2 * 0.0003
	p := I * I * r
	tau := 4.5 * 0.5 * 1000
	near(t, "cell loss", c.Thermal.CellLossW, p, 1e-12)
	near(t, "steady rise", c.Thermal.SteadyRiseK, p*4.5, 1e-12)
	near(t, "step response", c.Thermal.PeakRiseK, p*4.5*(1-math.Exp(-dur/tau)), 1e-12)
	near(t, "time constant", *c.Thermal.TimeConstantS, tau, 1e-12)
	near(t, "hot spot", c.Thermal.HotSpotC, 25+p*4.5*(1-math.Exp(-dur/tau)), 1e-12)

	// A short heavy pulse: 1000 A for 2 s, far shorter than τ = 2250 s, tends
	// to the adiabatic limit ΔT = I²·R·t/(m·c) (REFERENCES.md 10.7: 800 J on
	// 0.5 kg at 1000 J/(kg·K) → 1.6 K with R = 0.4 mΩ).
	cell.ESROhm = 0.0002 // worst case 0.4 mΩ
	d.Load.Steps = []Step{{CurrentA: fp(1000), DurationS: 2}}
	d.Cells = []Cell{cell}
	c = mustSize(t, d).Candidates[0]
	adiabatic := 1000.0 * 1000 * 0.0004 * 2 / (0.5 * 1000)
	near(t, "adiabatic pulse", adiabatic, 1.6, 1e-12)
	// First order: the exact rise is slightly below the adiabatic one, by
	// the factor τ(1 − e^(−t/τ))/t ≈ 1 − t/(2τ) = 0.99956.
	near(t, "pulse rise", c.Thermal.PeakRiseK, 1.6*tau*(1-math.Exp(-2/tau))/2, 1e-12)
	if c.Thermal.PeakRiseK > adiabatic || c.Thermal.PeakRiseK < 0.999*adiabatic {
		t.Errorf("pulse rise %v K, want just under the adiabatic %v K", c.Thermal.PeakRiseK, adiabatic)
	}

	// A repeating pulse train: 300 A for 5 s every 60 s → I_rms = 86.6 A,
	// P = 3 W at 0.4 mΩ, steady rise 13.5 K (REFERENCES.md 10.7). The
	// periodic steady state oscillates about the steady rise, so its peak is
	// just above it. The pass from cold stays far below (τ = 2250 s): three
	// pulses of 36 W × 5 s into 500 J/K give at most 1.08 K (adiabatic bound).
	d.Load.Steps = []Step{{CurrentA: fp(300), DurationS: 5}, {Rest: true, DurationS: 55}}
	d.Load.Repeat = ip(3)
	d.Window.MinV = 0.1
	c = mustSize(t, d).Candidates[0]
	near(t, "pulse train rms", c.CellRMSCurrentA, 300*math.Sqrt(5.0/60), 1e-12)
	near(t, "pulse train steady rise", c.Thermal.SteadyRiseK, 13.5, 1e-12)
	duty := *c.Thermal.DutyPeakRiseK
	if duty < 13.5 || duty > 13.5*1.02 || c.Thermal.PeakRiseK > 1.08 || c.Thermal.PeakRiseK < 1.0 {
		t.Errorf("duty peak %v K (want just above 13.5 K), pass peak %v K (want 1.0–1.08 K)", duty, c.Thermal.PeakRiseK)
	}
	near(t, "hot spot uses the duty", c.Thermal.HotSpotC, 25+duty, 1e-12)
}

func TestExpectedLife(t *testing.T) {
	t.Parallel()
	// REFERENCES.md 10.9: L0 = 2000 h at 65 °C / 2.7 V; at 40 °C and 2.5 V,
	// ΔU = 0.1 V → 45 254.8 h; ΔU = 0.2 V → 22 627.4 h; 25 °C at rated
	// voltage → 32 000 h.
	near(t, "0.1 V step", ExpectedLife(2000, 65, 2.7, 40, 2.5, 10, 0.1), 45254.8, 1e-6)
	near(t, "0.2 V step", ExpectedLife(2000, 65, 2.7, 40, 2.5, 10, 0.2), 22627.4, 1e-6)
	near(t, "temperature only", ExpectedLife(2000, 65, 2.7, 25, 2.7, 10, 0.2), 32000, 1e-12)
}

// flagDesign is a small invented design that raises none of the safety
// flags; each case below pushes one figure over its threshold, and a twin
// case stops just under it.
func flagDesign() *Design {
	c := Cell{ID: "f", RatedV: 2.7, SurgeV: fp(2.85), CapacitanceF: 10, CapacitanceTolerancePct: []float64{-5, 5},
		ESROhm: 0.05, LeakageA: fp(0.00002), MaxCurrentA: fp(20), PeakCurrentA: fp(40),
		ThermalResistanceKPerW: fp(20), MassKg: fp(0.003), MaxTempC: fp(65),
		RatedLifeH: fp(2000), RatedLifeTempC: fp(65), Electrolyte: "aqueous", UnitPrice: fp(1)}
	return &Design{Name: "flags", Window: Window{MaxV: 5.4, MinV: 2.7},
		Load:  Load{Steps: []Step{{CurrentA: fp(0.5), DurationS: 5}}},
		Cells: []Cell{c}}
}

func TestSafetyFlags(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name   string
		code   string
		change func(d *Design)
		want   bool
	}{
		// IEC 62368-1 ES1 DC limit 60 V: 60 V is within ES1, 60.1 V is not.
		{"60 V", "hazardous-voltage", func(d *Design) { d.Window = Window{MaxV: 59.4, MinV: 30} }, false},
		{"over 60 V", "hazardous-voltage", func(d *Design) { d.Window = Window{MaxV: 62.1, MinV: 30} }, true},
		// 20 J hazardous energy level (IEC 60950-1): ½·C_b·V² with 2 cells of
		// 10 F in series (5 F) at 5.4 V = 72.9 J raises it; 1 F cells (7.29 J) do not.
		{"72.9 J", "stored-energy", func(d *Design) {}, true},
		{"7.29 J", "stored-energy", func(d *Design) { d.Cells[0].CapacitanceF = 1; d.Load.Steps[0].CurrentA = fp(0.05) }, false},
		// Short-circuit current V/ESR: 5.4 V / 0.1 Ω = 54 A; with 0.0025 Ω
		// cells 5.4/0.005 = 1080 A > 1000 A; with 0.0028 Ω, 964 A.
		{"964 A", "short-circuit-current", func(d *Design) { d.Cells[0].ESROhm = 0.0028 }, false},
		{"1080 A", "short-circuit-current", func(d *Design) { d.Cells[0].ESROhm = 0.0025 }, true},
		// UN SP 361: ½·C·U_R²/3600 with 10 F at 2.7 V = 0.0101 Wh (exempt);
		// 300 F → 0.30375 Wh > 0.3 Wh; 296 F → 0.2997 Wh.
		{"296 F", "shipping-energy", func(d *Design) { d.Cells[0].CapacitanceF = 296 }, false},
		{"300 F", "shipping-energy", func(d *Design) { d.Cells[0].CapacitanceF = 300 }, true},
		// Voltage spread (REFERENCES.md 5.2), 2 cells at 5.4 V: ±5 % gives
		// 5.4/(1 + 0.95/1.05) = 2.835 V < 2.85 V surge but > 2.7 V rated:
		// warning; ±7 % gives 2.889 V past the surge: danger.
		{"spread over rating", "cell-overvoltage", func(d *Design) {}, true},
		{"spread within rating", "cell-overvoltage", func(d *Design) { d.Window.MaxV = 5.0; d.Cells[0].CapacitanceTolerancePct = []float64{-2, 2} }, false},
		// Over-temperature: hot spot vs 65 °C; a 60 °C ambient with ~0 rise is
		// within the 5 K warning margin, 55 °C is not.
		{"hot ambient", "over-temperature", func(d *Design) { d.AmbientC = fp(61) }, true},
		{"warm ambient", "over-temperature", func(d *Design) { d.AmbientC = fp(55) }, false},
		// Life: 2000 h at 65 °C, 2.7 V; at 25 °C and 2.7 V → 32 000 h = 3.65 years.
		{"life 4 years", "life-short", func(d *Design) { d.LifeYears = fp(4); d.Window.MaxV = 5.4 }, true},
		{"life 3 years", "life-short", func(d *Design) { d.LifeYears = fp(3) }, false},
		// Shelf hold against standby_h.
		{"standby long", "self-discharge", func(d *Design) { d.StandbyH = fp(1e5) }, true},
		{"standby short", "self-discharge", func(d *Design) { d.StandbyH = fp(1) }, false},
		// Fire: organic electrolyte and over 10 kJ stored; aqueous does not.
		{"organic small", "fire-risk", func(d *Design) { d.Cells[0].Electrolyte = "organic" }, false},
		{"organic big", "fire-risk", func(d *Design) {
			d.Cells[0].Electrolyte = "organic"
			d.Cells[0].CapacitanceF = 3000
			d.Cells[0].ESROhm = 0.01
		}, true},
		// The maximum-power point sets the string count: 300 W on 2 × 0.1 Ω
		// (worst case) = 0.2 Ω: 4PR = 240 V² > 5.4² = 29.16 V².
		{"power limit", "power-limit", func(d *Design) { d.Load.Steps[0] = Step{PowerW: fp(300), DurationS: 0.01} }, true},
		{"power fine", "power-limit", func(d *Design) { d.Load.Steps[0] = Step{PowerW: fp(3), DurationS: 0.01} }, false},
		// Over-current: a peak rating of 10 µA against 0.5 A needs 50 000
		// strings, more than MaxParallel (10 000): infeasible, flagged; 100 µA
		// needs 5 000 and is met, so nothing is over its rating.
		{"peak unreachable", "over-current", func(d *Design) { d.Cells[0].PeakCurrentA = fp(1e-5); d.Cells[0].MaxCurrentA = fp(1e-5) }, true},
		{"peak reachable", "over-current", func(d *Design) { d.Cells[0].PeakCurrentA = fp(1e-4); d.Cells[0].MaxCurrentA = fp(1e-4) }, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			d := flagDesign()
			c.change(d)
			r := mustSize(t, d)
			cand := r.Candidates[0]
			found := ""
			for _, f := range cand.Flags {
				if f.Code == c.code {
					found = f.Code + ": " + f.Message
				}
			}
			if (found != "") != c.want {
				t.Errorf("flag %q raised = %v, want %v (%s; feasible %v %s)", c.code, found != "", c.want, found, cand.Feasible, cand.Reason)
			}
		})
	}
}

// The hazardous energy level of IEC 60950-1 §2.1.1.5 is a stored energy of
// 20 J or more at 2 V or more (sizing/REFERENCES.md 7.6): exactly 20 J at
// 2 V is hazardous, 19.99 J or 1.99 V is not.
func TestStoredEnergyBoundary(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		j, v float64
		want bool
	}{{20, 2, true}, {19.99, 48, false}, {20, 1.99, false}, {72.9, 5.4, true}} {
		got := false
		for _, f := range hazardFlags(Hazards{StoredEnergyJ: c.j, MaxV: c.v}) {
			got = got || f.Code == "stored-energy"
		}
		if got != c.want {
			t.Errorf("%g J at %g V: stored-energy flag %v, want %v", c.j, c.v, got, c.want)
		}
	}
}

// Every hazard threshold, at it, just under and just over (the sources as
// hazards.go names them: IEC 62368-1 ES1/ES2 for steady DC, "above" the
// limit; IEC 60950-1, 20 J "or more" at 2 V "or more"; 1000 A short
// circuit, common practice, no source; UN special provision 361, 0.3 Wh
// and 10 Wh, "exceeding").
func TestHazardThresholdsBothSides(t *testing.T) {
	t.Parallel()
	const up, down = 1 + 1e-9, 1 - 1e-9
	type probe struct {
		h        Hazards
		code     string
		severity Severity // "": no flag of that code
	}
	var cases []probe
	for _, v := range []float64{es1LimitV * down, es1LimitV, es1LimitV * up, es2LimitV, es2LimitV * up} {
		sev := Severity("")
		switch {
		case v > es2LimitV:
			sev = Danger
		case v > es1LimitV:
			sev = Warning
		}
		cases = append(cases, probe{Hazards{MaxV: v}, "hazardous-voltage", sev})
	}
	for _, j := range []float64{hazardousEnergyJ * down, hazardousEnergyJ, hazardousEnergyJ * up} {
		for _, v := range []float64{hazardousEnergyV * down, hazardousEnergyV, hazardousEnergyV * up} {
			sev := Severity("")
			if j >= hazardousEnergyJ && v >= hazardousEnergyV {
				sev = Warning
			}
			cases = append(cases, probe{Hazards{StoredEnergyJ: j, MaxV: v}, "stored-energy", sev})
		}
	}
	for _, a := range []float64{shortCircuitWarnA * down, shortCircuitWarnA, shortCircuitWarnA * up} {
		sev := Severity("")
		if a > shortCircuitWarnA {
			sev = Warning
		}
		cases = append(cases, probe{Hazards{ShortCircuitCurrentA: a}, "short-circuit-current", sev})
	}
	for _, wh := range []float64{un3499ExemptWh * down, un3499ExemptWh, un3499ExemptWh * up, un3499StrapWh * down, un3499StrapWh, un3499StrapWh * up} {
		sev := Severity("")
		switch {
		case wh > un3499StrapWh:
			sev = Warning
		case wh > un3499ExemptWh:
			sev = Info
		}
		cases = append(cases, probe{Hazards{CellEnergyWh: wh}, "shipping-energy", sev})
	}
	for _, c := range cases {
		got := Severity("")
		for _, f := range hazardFlags(c.h) {
			if f.Code == c.code {
				got = f.Severity
			}
		}
		if got != c.severity {
			t.Errorf("%s at %+v: %q, want %q", c.code, c.h, got, c.severity)
		}
	}
}
