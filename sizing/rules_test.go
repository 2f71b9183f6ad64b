package sizing

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// The engineering rules a design review signs off: each test names its
// source (REFERENCES.md entries, or "common practice, no source") and
// checks both sides of its threshold.

func rulesCand(t *testing.T, d *Design, id string) *Candidate {
	t.Helper()
	r := mustSize(t, d)
	for i := range r.Candidates {
		if r.Candidates[i].CellID == id {
			return &r.Candidates[i]
		}
	}
	t.Fatalf("no candidate %q", id)
	return nil
}

func flagOf(c *Candidate, code string) *Flag {
	for i := range c.Flags {
		if c.Flags[i].Code == code {
			return &c.Flags[i]
		}
	}
	return nil
}

func fieldErr(t *testing.T, err error, field, contains string) {
	t.Helper()
	var ve ValidationError
	if !errors.As(err, &ve) {
		t.Fatalf("want a refusal of %s, got %v", field, err)
	}
	for _, fe := range ve {
		if fe.Field == field && strings.Contains(fe.Message, contains) {
			return
		}
	}
	t.Fatalf("no error on %s containing %q; got %v", field, contains, err)
}

// hybridDesign: a 60 V → 20 V hold-up bank, 1.5 kW for 30 s, of an invented 3.8 V hybrid
// cell whose floor is 2.2 V: 16 in series (60/3.8 rounded up), so its own
// floor is 16 × 2.2 = 35.2 V, far above the window's 20 V.
func hybridDesign() *Design {
	return &Design{
		Name:   "hybrid floor",
		Window: Window{MaxV: 60, MinV: 20},
		Load:   Load{Steps: []Step{{PowerW: fp(1500), DurationS: 30}}},
		Cells: []Cell{{ID: "hy", RatedV: 3.8, CapacitanceF: 250, ESROhm: 0.005, LeakageA: fp(5e-6),
			Electrolyte: "hybrid", MinV: fp(2.2)}},
	}
}

// A hybrid (lithium-ion) capacitor is never discharged below its floor
// (REFERENCES.md 8.7, common practice, no source): min_v is required for
// it, and the window bottom becomes series × min_v where that is higher.
func TestHybridCellFloor(t *testing.T) {
	t.Parallel()
	d := hybridDesign()
	c := rulesCand(t, d, "hy")
	if c.Series != 16 {
		t.Fatalf("series %d, want 16", c.Series)
	}
	near(t, "window bottom of the candidate", c.MinV, 16*2.2, 1e-12)
	if !c.Feasible || c.MinTerminalV < 35.2*(1-1e-9) {
		t.Errorf("lowest terminal %v V (feasible %v), want at or above the cell floor 35.2 V", c.MinTerminalV, c.Feasible)
	}
	near(t, "lowest cell voltage", c.MinCellV, c.MinTerminalV/16, 1e-12)
	if c.MinCellV < 2.2*(1-1e-9) {
		t.Errorf("lowest cell voltage %v V, below the cell's 2.2 V floor", c.MinCellV)
	}
	f := flagOf(c, "cell-floor")
	if f == nil || !strings.Contains(f.Message, "raises the bottom of the window from 20 V to 35.2 V") {
		t.Errorf("cell-floor flag %+v, want it to state the raised bottom", f)
	}
	// The same cell as an EDLC with no floor runs down to 20 V and needs
	// fewer strings: the floor is what set the count.
	e := hybridDesign()
	e.Cells[0].Electrolyte, e.Cells[0].MinV = "organic", nil
	ce := rulesCand(t, e, "hy")
	if ce.MinV != 20 || ce.Parallel >= c.Parallel || flagOf(ce, "cell-floor") != nil {
		t.Errorf("without the floor: bottom %v V, %d strings (with it %d), want 20 V and fewer strings", ce.MinV, ce.Parallel, c.Parallel)
	}
	// A floor below the window bottom changes nothing: 16 × 1.2 = 19.2 V.
	low := hybridDesign()
	low.Cells[0].MinV = fp(1.2)
	if cl := rulesCand(t, low, "hy"); cl.MinV != 20 || flagOf(cl, "cell-floor") != nil {
		t.Errorf("floor 19.2 V under a 20 V bottom: bottom %v V, flags %v", cl.MinV, cl.Flags)
	}
	// Refused by field: a hybrid cell without min_v, a floor at the rating.
	no := hybridDesign()
	no.Cells[0].MinV = nil
	fieldErr(t, Validate(no), "cells[0].min_v", "required for a hybrid")
	high := hybridDesign()
	high.Cells[0].MinV = fp(3.8)
	fieldErr(t, Validate(high), "cells[0].min_v", "below rated_v")
	// ValidateCell, the library's check, says the same.
	cell := hybridDesign().Cells[0]
	cell.MinV = nil
	fieldErr(t, ValidateCell(&cell), "min_v", "required for a hybrid")
}

// Leakage is judged by the self-discharge time constant C·U_R/I
// (REFERENCES.md 8.6): under an hour is refused as a unit slip, under
// about four days is flagged, longer passes without a word.
func TestLeakagePlausibility(t *testing.T) {
	t.Parallel()
	base := func(leak float64) *Design {
		return &Design{Window: Window{MaxV: 5.4, MinV: 2.7}, Load: Load{Steps: []Step{{PowerW: fp(50), DurationS: 10}}},
			Cells: []Cell{{ID: "c", RatedV: 2.7, CapacitanceF: 2200, ESROhm: 3e-4, LeakageA: fp(leak)}}}
	}
	// 2200 F at 2.7 V: 5940 C. 4.5 A (4.5 mA typed as A) empties it in
	// τ = 1320 s.
	fieldErr(t, Validate(base(4.5)), "cells[0].leakage_a", "mA")
	// One hour is 1.65 A; just over it is refused, at it and under accepted.
	for _, c := range []struct {
		leak    float64
		refused bool
		warned  bool
	}{
		{5940.0 / 3600 * 1.001, true, false},
		{5940.0 / 3600, false, true},
		{5940.0 / 3600 * 0.999, false, true},
		// Four days, 345 600 s: 17.19 mA.
		{5940.0 / 345600 * 1.001, false, true},
		{5940.0 / 345600 * 0.999, false, false},
		{0.005, false, false},
	} {
		d := base(c.leak)
		err := Validate(d)
		if (err != nil) != c.refused {
			t.Errorf("leakage %g A: refused %v, want %v (%v)", c.leak, err != nil, c.refused, err)
			continue
		}
		if c.refused {
			continue
		}
		cand := rulesCand(t, d, "c")
		if got := flagOf(cand, "leakage-high") != nil; got != c.warned {
			t.Errorf("leakage %g A (τ %.4g s): leakage-high %v, want %v", c.leak, 5940/c.leak, got, c.warned)
		}
	}
	// The cell library's check refuses it too.
	cell := base(4.5).Cells[0]
	fieldErr(t, ValidateCell(&cell), "leakage_a", "mA")
}

// balancingBank: 48 V from 2.7 V, 3000 F cells leaking 5.2 mA: 18 in
// series leave 18 × 2.7 − 48 = 0.6 V of headroom, so the worst-case
// resistor bound (REFERENCES.md 5.5) is 0.6/(17 × 5.2 mA) = 6.79 Ω, 6.2 Ω
// in E24: 48 V²/18²/6.2 Ω = 1.147 W per cell, and R·C = 6.2 × 3000 s =
// 5.17 h, under a day.
func balancingBank() *Design {
	return &Design{
		Name:   "balancing cost",
		Window: Window{MaxV: 48, MinV: 24},
		Load:   Load{Steps: []Step{{PowerW: fp(2000), DurationS: 60}}},
		Cells: []Cell{{ID: "c3000", RatedV: 2.7, CapacitanceF: 3000, ESROhm: 2.8e-4, LeakageA: fp(0.0052),
			CapacitanceTolerancePct: []float64{0, 0}}},
	}
}

// Passive balancing that costs more than its thresholds (REFERENCES.md 5.9:
// 1 % of the mean load power, a self-discharge of at least a day; common
// practice, no source) raises balancing-loss with one more cell in series
// and active balancing beside it.
func TestBalancingLoss(t *testing.T) {
	t.Parallel()
	c := rulesCand(t, balancingBank(), "c3000")
	b := c.Balancing
	if c.Series != 18 || b == nil || b.ResistorOhm == nil {
		t.Fatalf("series %d, balancing %+v", c.Series, b)
	}
	near(t, "resistor", *b.ResistorOhm, 6.2, 1e-12)
	perCell := (48.0 / 18) * (48.0 / 18) / 6.2
	near(t, "string loss", b.LossW, 18*perCell, 1e-12)
	near(t, "bank loss", b.BankLossW, 18*perCell*float64(c.Parallel), 1e-12)
	if b.BankCount != 18*c.Parallel || b.Count != 18 {
		t.Errorf("count %d per string, %d in the bank; want 18 and %d", b.Count, b.BankCount, 18*c.Parallel)
	}
	f := flagOf(c, "balancing-loss")
	if f == nil || f.Severity != Warning {
		t.Fatalf("no balancing-loss warning: %v", c.Flags)
	}
	if len(b.Alternatives) != 2 {
		t.Fatalf("alternatives %+v, want one more in series and active", b.Alternatives)
	}
	more, act := b.Alternatives[0], b.Alternatives[1]
	// 19 in series: headroom 19 × 2.7 − 48 = 3.3 V, bound 3.3/(18 × 5.2 mA)
	// = 35.3 Ω; the 10× rule (48/19)/(10 × 5.2 mA) = 48.6 Ω; 33 Ω in E24.
	if more.Kind != "passive" || more.Series != 19 || more.ResistorOhm == nil || !more.Feasible {
		t.Fatalf("one more in series: %+v", more)
	}
	near(t, "resistor with one more cell", *more.ResistorOhm, 33, 1e-12)
	near(t, "bank loss with one more cell", more.BankLossW, float64(19*more.Parallel)*(48.0/19)*(48.0/19)/33, 1e-12)
	if more.BankLossW >= b.BankLossW/4 || more.ShelfHoldH == nil || b.ShelfHoldH == nil || *more.ShelfHoldH <= *b.ShelfHoldH || more.RuntimeS == nil {
		t.Errorf("one more in series: loss %v W (now %v W), shelf %v h; want far less loss and a longer hold", more.BankLossW, b.BankLossW, more.ShelfHoldH)
	}
	// Active: 10 µA assumed per cell at 48/18 V.
	if act.Kind != "active" || !act.QuiescentAssumed || act.Series != 18 {
		t.Fatalf("active: %+v", act)
	}
	near(t, "active drain", act.BankLossW, 10e-6*48.0/18*float64(18*act.Parallel), 1e-12)
	for _, want := range []string{"19 in series: ", "Active balancing (", "per cell, assumed", "balancing.max_loss_share"} {
		if !strings.Contains(f.Message, want) {
			t.Errorf("message lacks %q: %s", want, f.Message)
		}
	}

	// The other side of each threshold: raise both past the bank's figures
	// and the warning goes; the loss share alone, or the time constant
	// alone, brings it back.
	meanW := c.BankEnergyJ / 60
	share := b.BankLossW / meanW
	tcH := *b.TimeConstantS / 3600
	for _, k := range []struct {
		name       string
		share, tcH float64
		want       bool

		sev Severity
	}{
		{"both just passed", share * 1.001, tcH * 0.999, false, ""},
		{"loss share just under the bank's", share * 0.999, tcH * 0.999, true, Warning},
		// A fast self-discharge alone is a note: it matters off the charger.
		{"time constant just over the bank's", share * 1.001, tcH * 1.001, true, Info},
	} {
		d := balancingBank()
		d.Balancing = &Balancing{MaxLossShare: fp(k.share), MinTimeConstantH: fp(k.tcH)}
		cc := rulesCand(t, d, "c3000")
		if got := flagOf(cc, "balancing-loss") != nil; got != k.want {
			t.Errorf("%s: balancing-loss %v, want %v", k.name, got, k.want)
		} else if got && flagOf(cc, "balancing-loss").Severity != k.sev {
			t.Errorf("%s: severity %q, want %q", k.name, flagOf(cc, "balancing-loss").Severity, k.sev)
		}
		if !k.want && len(cc.Balancing.Alternatives) != 0 {
			t.Errorf("%s: alternatives without the warning", k.name)
		}
	}
	// The same bank with a measured leakage spread of 1 mA: the bound is
	// 0.6/(17 × 1 mA) = 35.3 Ω → 33 Ω, R·C = 27.5 h, 3.9 W per string
	// against a 2 kW load: no warning.
	d := balancingBank()
	d.Balancing = &Balancing{LeakageSpreadA: fp(0.001)}
	if cc := rulesCand(t, d, "c3000"); flagOf(cc, "balancing-loss") != nil {
		t.Errorf("a bank with headroom warns: %v", cc.Balancing)
	}
}

// Energy out of the bank terminals and energy delivered to the load differ
// by the converter's efficiency (the definition of efficiency: P_out =
// η·P_in); current and resistor steps act at the bank terminals.
func TestBankAndLoadEnergy(t *testing.T) {
	t.Parallel()
	d := &Design{
		Window: Window{MaxV: 16, MinV: 8},
		Load: Load{Efficiency: fp(0.9), Steps: []Step{
			{PowerW: fp(100), DurationS: 10}, {CurrentA: fp(5), DurationS: 2}, {PowerW: fp(-50), DurationS: 4},
		}},
		Cells: []Cell{{ID: "c", RatedV: 2.7, CapacitanceF: 350, ESROhm: 3e-3}},
	}
	c := rulesCand(t, d, "c")
	// Load side: 100 W × 10 s delivered, the current step's energy as at the
	// terminals, 50 W × 4 s taken from the charging source.
	currentJ := c.BankEnergyJ - 100/0.9*10 - (-50 * 0.9 * 4)
	near(t, "load energy", c.LoadEnergyJ, 100*10+currentJ-50*4, 1e-9)
	if currentJ <= 5*8*2 || currentJ >= 5*16*2 {
		t.Errorf("current step's energy %v J, want between 5 A × 8 V × 2 s and 5 A × 16 V × 2 s", currentJ)
	}
}

// load.period_s: the continuous-current rating is a heating limit, so the
// RMS current is taken over the time from one event to the next
// (common practice, no source); without a period the pass repeats back to
// back and the report says so.
func TestPeriodForRMSAndHeat(t *testing.T) {
	t.Parallel()
	crank := func() *Design {
		return &Design{
			Name:     "crank assist",
			Window:   Window{MaxV: 16, MinV: 9},
			AmbientC: fp(25),
			Load:     Load{Steps: []Step{{CurrentA: fp(600), DurationS: 1.5}}},
			Cells: []Cell{{ID: "c", RatedV: 2.7, CapacitanceF: 1200, ESROhm: 5.8e-4, MaxCurrentA: fp(90), PeakCurrentA: fp(1000),
				ThermalResistanceKPerW: fp(5.5), MassKg: fp(0.26)}},
		}
	}
	c := rulesCand(t, crank(), "c")
	// 600 A back to back needs 600/90 = 6.67 → 7 strings.
	if c.Limit != "rms_current" || c.Parallel != 7 || flagOf(c, "rms-back-to-back") == nil {
		t.Fatalf("without a period: %d strings set by %q, flags %v; want 7 by rms_current with the note", c.Parallel, c.Limit, c.Flags)
	}
	if c.Thermal == nil || !c.Thermal.BackToBack {
		t.Errorf("thermal %+v, want the back-to-back assumption said", c.Thermal)
	}
	d := crank()
	d.Load.PeriodS = fp(600) // one crank every ten minutes
	p := rulesCand(t, d, "c")
	if p.Limit == "rms_current" || p.Parallel >= c.Parallel || flagOf(p, "rms-back-to-back") != nil {
		t.Errorf("with a 600 s period: %d strings set by %q; want fewer, not by the RMS", p.Parallel, p.Limit)
	}
	// RMS over the period: √(∫i²dt / 600 s); the pass is one 600 A step.
	near(t, "RMS over the period", p.RMSCurrentA, 600*math.Sqrt(1.5/600), 1e-9)
	near(t, "RMS taken over", p.RMSOverS, 600, 0)
	// The thermal steady state of the duty: a constant loss W = I²·R for
	// t_on, then idle to the period. First-order model (REFERENCES.md
	// 3.14): β = W·R_th·(1 − e^(−t_on/τ)); the start of each event settles
	// at x* = β·e^(−idle/τ)/(1 − e^(−T/τ)), and the peak is at the end of
	// the pulse, x*·e^(−t_on/τ) + β.
	th := p.Thermal
	if th == nil || th.DutyPeakRiseK == nil || th.TimeConstantS == nil || th.BackToBack {
		t.Fatalf("thermal %+v", th)
	}
	tau := *th.TimeConstantS
	near(t, "τ", tau, 5.5*0.26*1000, 1e-12)
	rCell := 5.8e-4 * 2 // end of life ×2
	w := math.Pow(600/float64(p.Parallel), 2) * rCell
	beta := w * 5.5 * -math.Expm1(-1.5/tau)
	start := beta * math.Exp(-(600-1.5)/tau) / -math.Expm1(-600/tau)
	near(t, "duty peak rise", *th.DutyPeakRiseK, start*math.Exp(-1.5/tau)+beta, 1e-9)
	near(t, "steady rise over the period", th.SteadyRiseK, w*1.5/600*5.5, 1e-9)
	// A period shorter than the event is refused by field; equal passes.
	short := crank()
	short.Load.PeriodS = fp(1.4)
	fieldErr(t, Validate(short), "load.period_s", "shorter than one event")
	equal := crank()
	equal.Load.PeriodS = fp(1.5)
	if err := Validate(equal); err != nil {
		t.Errorf("a period equal to the event: %v", err)
	}
}

// The worst case applies the minus tolerance on top of end of life by
// default (REFERENCES.md 4.5) and the cold capacitance factor at cold_c,
// interpolated as the ESR's (8.8, 8.3), and says what it applied.
func TestWorstCaseComplete(t *testing.T) {
	t.Parallel()
	mk := func() *Design {
		return &Design{
			Window: Window{MaxV: 16, MinV: 8}, ColdC: fp(-30),
			Load: Load{Steps: []Step{{PowerW: fp(100), DurationS: 10}}},
			Cells: []Cell{
				{ID: "cold", RatedV: 2.7, CapacitanceF: 350, ESROhm: 3e-3, CapacitanceTolerancePct: []float64{-10, 20},
					ColdESRFactor: fp(2), ColdESRTempC: fp(-40), ColdCapacitanceFactor: fp(0.85)},
				{ID: "plain", RatedV: 2.7, CapacitanceF: 350, ESROhm: 3e-3, CapacitanceTolerancePct: []float64{-10, 20},
					ColdESRFactor: fp(2), ColdESRTempC: fp(-40)},
			},
		}
	}
	d := mk()
	c := rulesCand(t, d, "cold")
	kC := math.Pow(0.85, 55.0/65)
	kR := math.Pow(2, 55.0/65)
	near(t, "cold capacitance factor", c.ColdCapacitanceFactor, kC, 1e-12)
	near(t, "tolerance factor", c.ToleranceFactor, 0.9, 1e-12)
	near(t, "worst capacitance", c.WorstCapacitanceF, 350*0.8*0.9*kC*float64(c.Parallel)/float64(c.Series), 1e-12)
	near(t, "worst ESR", c.WorstESROhm, 3e-3*2*kR*float64(c.Series)/float64(c.Parallel), 1e-12)
	near(t, "usable energy at worst case", c.UsableEnergyJ, 0.5*c.WorstCapacitanceF*(16*16-8*8), 1e-12)
	for _, want := range []string{"capacitance ×0.8, ESR ×2", "tolerance −10 %", "at −30 °C: ESR ×1.8", "capacitance ×0.872"} {
		if !strings.Contains(c.WorstCase, want) {
			t.Errorf("worst case %q lacks %q", c.WorstCase, want)
		}
	}
	p := rulesCand(t, d, "plain")
	if p.ColdCapacitanceFactor != 1 || !strings.Contains(p.WorstCase, "capacitance not derated (the cell gives no cold factor)") {
		t.Errorf("no cold capacitance factor: %v, %q", p.ColdCapacitanceFactor, p.WorstCase)
	}
	// eol.apply_tolerance false leaves the tolerance out, and says so.
	off := mk()
	no := false
	off.EOL = &EOL{ApplyTolerance: &no}
	o := rulesCand(t, off, "cold")
	near(t, "worst capacitance without tolerance", o.WorstCapacitanceF, 350*0.8*kC*float64(o.Parallel)/float64(o.Series), 1e-12)
	if o.ToleranceFactor != 1 || !strings.Contains(o.WorstCase, "not applied") {
		t.Errorf("tolerance off: factor %v, %q", o.ToleranceFactor, o.WorstCase)
	}
	// The cold capacitance factor needs its temperature.
	bad := mk()
	bad.Cells[0].ColdESRTempC, bad.Cells[0].ColdESRFactor = nil, nil
	fieldErr(t, Validate(bad), "cells[0].cold_esr_temp_c", "cold_capacitance_factor")
}

// Life is capped at the calendar ceiling (REFERENCES.md 4.6, common
// practice, no source): past it the figure is "at least" the ceiling.
func TestLifeCeiling(t *testing.T) {
	t.Parallel()
	mk := func(ambient float64) *Design {
		return &Design{Window: Window{MaxV: 12, MinV: 6}, AmbientC: fp(ambient),
			Load:  Load{Steps: []Step{{PowerW: fp(10), DurationS: 5}}},
			Cells: []Cell{{ID: "c", RatedV: 2.7, CapacitanceF: 100, ESROhm: 0.01, RatedLifeH: fp(2000), RatedLifeTempC: fp(65)}}}
	}
	// 2000 h × 2^((65 − T)/10) × 2^((2.7 − 2.4)/0.2) at 12/5 = 2.4 V per
	// cell (5 in series): at 15 °C 2000 × 32 × 2.83 = 181 019 h = 20.7 years,
	// at 25 °C 10.3 years.
	hot := rulesCand(t, mk(25), "c")
	want := 2000 * math.Exp2(4) * math.Exp2(0.3/0.2) / hoursPerYear
	if hot.Life == nil || hot.Life.AtLeast {
		t.Fatalf("life %+v", hot.Life)
	}
	near(t, "life under the ceiling", hot.Life.ExpectedYears, want, 1e-12)
	cool := rulesCand(t, mk(15), "c")
	if cool.Life == nil || !cool.Life.AtLeast || cool.Life.ExpectedYears != 15 || flagOf(cool, "life-beyond-rules") == nil {
		t.Errorf("life %+v, want at least 15 years with the flag", cool.Life)
	}
	// A ceiling of 30 years lets the 20.7 through.
	d := mk(15)
	d.Life = &LifeModel{MaxYears: fp(30)}
	if l := rulesCand(t, d, "c").Life; l == nil || l.AtLeast {
		t.Errorf("ceiling 30 years: %+v", l)
	} else {
		near(t, "life under a 30-year ceiling", l.ExpectedYears, want*2, 1e-12)
	}
}

// The bleeder is timed at the top of the capacitance tolerance, the
// slowest bank to discharge (t = R·C·ln(V0/V1), REFERENCES.md 3.6).
func TestBleederAtPlusTolerance(t *testing.T) {
	t.Parallel()
	// 12 V: a bleeder of a few ohms and tens of watts, not past the 100 W
	// part that would make it slower than asked.
	d := &Design{Window: Window{MaxV: 12, MinV: 6}, Load: Load{Steps: []Step{{PowerW: fp(100), DurationS: 20}}},
		Cells: []Cell{{ID: "c", RatedV: 2.7, CapacitanceF: 350, ESROhm: 3e-3, CapacitanceTolerancePct: []float64{-10, 20}}}}
	r := mustSize(t, d)
	b, err := BillOfQuantities(d, r, "")
	if err != nil {
		t.Fatal(err)
	}
	c := r.Candidates[0]
	cPlus := c.CapacitanceF * 1.2
	bl := b.Bleeder
	near(t, "bleeder time at +20 %", bl.TimeS, bl.ResistorOhm*cPlus*math.Log(12/bl.TargetV), 1e-12)
	if bl.Slower || bl.TimeS > DefaultBleederTimeS*(1+1e-12) {
		t.Errorf("bleeder takes %v s at the plus tolerance, more than the %v s asked", bl.TimeS, DefaultBleederTimeS)
	}
}

// A cell's maximum temperature is a sizing limit like its current ratings:
// strings are added until the hot spot holds (first-order model,
// REFERENCES.md 3.14).
func TestTemperatureLimit(t *testing.T) {
	t.Parallel()
	d := &Design{
		Window: Window{MaxV: 16, MinV: 8}, AmbientC: fp(50),
		Load: Load{Repeat: fpInt(200), Steps: []Step{{CurrentA: fp(80), DurationS: 10}, {CurrentA: fp(-80), DurationS: 10}}},
		Cells: []Cell{{ID: "c", RatedV: 2.7, CapacitanceF: 350, ESROhm: 3.2e-3, ThermalResistanceKPerW: fp(11), MassKg: fp(0.06),
			MaxTempC: fp(65)}},
	}
	c := rulesCand(t, d, "c")
	if !c.Feasible || c.Limit != "temperature" || c.Thermal == nil || c.Thermal.HotSpotC > 65 {
		t.Fatalf("feasible %v, limit %q, thermal %+v; want the hot spot held to 65 °C by the string count", c.Feasible, c.Limit, c.Thermal)
	}
	if flagOf(c, "over-temperature") != nil && flagOf(c, "over-temperature").Severity == Danger {
		t.Errorf("a recommended bank over its temperature: %v", c.Flags)
	}
	// One string fewer passes 65 °C.
	p := newPlan(d)
	var flags []Flag
	l := p.limits(&d.Cells[0], &flags)
	m := l.bank(c.Parallel - 1)
	if _, hot := p.hotSpot(&l, &m, c.Parallel-1); hot <= 65 {
		t.Errorf("with %d strings the hot spot is %v °C, within the limit: the count is not the fewest", c.Parallel-1, hot)
	}
	// Ambient at the limit: no count helps.
	d.AmbientC = fp(65)
	if c := rulesCand(t, d, "c"); c.Feasible || c.Limit != "temperature" {
		t.Errorf("ambient at the limit: feasible %v, limit %q", c.Feasible, c.Limit)
	}
}

func fpInt(n int) *int { return &n }

// The capacitance spread only matters on a charge from empty: within the
// window every cell of a string gives and takes back the same charge
// (charge conservation, REFERENCES.md 5.1), so a string balanced at the top
// comes back to the same cell voltages. Two cells of 900 F and 1200 F at
// 2.5 V each give Q = 1000 C: 900 F falls by 1.111 V, 1200 F by 0.833 V;
// the same Q back restores 2.5 V on both. The first-charge extreme stack
// is a bound only; the flag is judged on the lot (TestOvervoltageFlag).
func TestSpreadIsAFirstChargeMatter(t *testing.T) {
	t.Parallel()
	caps := []float64{900, 1200}
	v := []float64{2.5, 2.5}
	const q = 1000.0
	for i, c := range caps {
		v[i] -= q / c
	}
	near(t, "900 F after the discharge", v[0], 2.5-1000.0/900, 1e-12)
	for i, c := range caps {
		v[i] += q / c
	}
	near(t, "900 F after the recharge", v[0], 2.5, 1e-12)
	near(t, "1200 F after the recharge", v[1], 2.5, 1e-12)

	// 20 cells of −10 %/+20 % at 2.4 V each: the extreme stack (one cell
	// at −10 %, the rest at +20 %) takes one to 48/(1 + 19·0.9/1.2) =
	// 3.148 V (5.2), past a 2.85 V surge. It stays in the report as a
	// bound; the flag is judged on the lot (issue 18), whose highest cell
	// at σ 2 % is near 2.4·(1 + 2·2 %) ≈ 2.5 V: no flag.
	d := &Design{Window: Window{MaxV: 48, MinV: 24}, Load: Load{Steps: []Step{{PowerW: fp(400), DurationS: 20}}},
		Cells: []Cell{{ID: "c", RatedV: 2.7, SurgeV: fp(2.85), CapacitanceF: 650, ESROhm: 1e-3, CapacitanceTolerancePct: []float64{-10, 20}}}}
	d.CellMaxV = fp(2.4)
	c := rulesCand(t, d, "c")
	near(t, "extreme-stack bound on the first charge", c.Spread.WorstCellV, 48/(1+19*0.9/1.2), 1e-12)
	if f := flagOf(c, "cell-overvoltage"); f != nil {
		t.Errorf("flag %+v from the extreme stack; the lot's p99.9 is %v V", f, c.Statistics.FirstChargeMaxCellV.P999)
	}
}
