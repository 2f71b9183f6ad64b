package sizing

import (
	"fmt"
	"math"
)

// WorstSpreadVoltage returns the highest cell voltage, in V, when a string
// of n cells is charged to vBus (V) from empty with no balancing acting:
// every cell carries the same charge, so the cell of lowest capacitance
// C(1 − minus) among n − 1 cells of the highest C(1 + plus) takes
//
//	V_max = V_bus / (1 + (n − 1)·(1 − minus)/(1 + plus))
//
// (REFERENCES.md 5.1 and 5.2, with the tolerance split into its minus and
// plus parts, both as fractions: 0.1 for −10 %).
func WorstSpreadVoltage(vBus float64, n int, minus, plus float64) float64 {
	if n <= 1 {
		return vBus
	}
	return vBus / (1 + float64(n-1)*(1-minus)/(1+plus))
}

// BalancingBound returns the largest balancing resistor, in Ω, that keeps
// every one of n cells at or below vCellMax (V) after a long hold at vBus
// (V) when the leakage currents of the cells differ by up to spread (A):
//
//	R ≤ (n·V_cell,max − V_bus) / ((n − 1)·ΔI)
//
// (REFERENCES.md 5.5: the worst case is n − 1 cells leaking ΔI more than
// one). It returns 0 when the string has no headroom (n·V_cell,max ≤ V_bus).
func BalancingBound(vBus, vCellMax float64, n int, spread float64) float64 {
	head := float64(n)*vCellMax - vBus
	if n <= 1 || !(head > 1e-12*vBus) || !(spread > 0) {
		return 0
	}
	return head / (float64(n-1) * spread)
}

// WorstStaticVoltage is the highest cell voltage after a long hold at vBus
// with a resistor r (Ω) across each of n cells and a leakage spread (A):
// V_max = (V_bus + R·(n − 1)·ΔI)/n (REFERENCES.md 5.5).
func WorstStaticVoltage(vBus, r float64, n int, spread float64) float64 {
	return (vBus + r*float64(n-1)*spread) / float64(n)
}

// balancingPlan is a balancing scheme for one cell in a string of s.
type balancingPlan struct {
	res   BalancingResult
	gCell float64 // the balancing drain of one cell as a conductance, S
	flags []Flag
}

// planBalancing chooses the balancing b of a string of s cells of cell c
// at the window top, with per-cell ceiling (V).
func (p *plan) planBalancing(c *Cell, b Balancing, s int, ceiling float64) balancingPlan {
	vCell := p.maxV / float64(s)
	bp := balancingPlan{}
	kind := b.Kind
	if kind == "" {
		kind = "passive"
		if s == 1 {
			kind = "none"
		}
	}
	spread := 0.0
	if b.LeakageSpreadA != nil {
		spread = *b.LeakageSpreadA
	} else if c.LeakageA != nil {
		spread = *c.LeakageA
	}
	bp.res = BalancingResult{Kind: kind, LeakageSpreadA: spread}
	if s == 1 {
		bp.res.Kind = "none"
		return bp
	}
	switch kind {
	case "none":
		bp.flags = append(bp.flags, Flag{Code: "unbalanced-string", Severity: Warning, Message: fmt.Sprintf(
			"The %d cells of each string have no balancing; their voltages drift apart with the spread of their capacitance (charge sharing in series) and of their leakage (which divides the voltage after a long hold), and one cell can pass its rating. Passive resistors or active balancing are the usual remedy (common practice).", s),
			Caution: "A cell driven past its rated voltage ages fast and can vent. Balance the string or check each cell's voltage in service."})
		return bp
	case "active":
		q := *b.QuiescentA
		bp.res.QuiescentA = &q
		bp.res.Count = s
		bp.res.LossW = q * vCell * float64(s)
		static := ceiling
		bp.res.WorstStaticCellV = &static
		bp.gCell = q / vCell // the quiescent current taken as a drain at the cell voltage
		return bp
	}
	// Passive.
	series := b.Series
	if series == "" {
		series = DefaultBalancingSeries
	}
	bp.res.Series = series
	values, _ := PreferredSeries(series)
	mult := DefaultBalancingMultiple
	if b.CurrentMultiple != nil {
		mult = *b.CurrentMultiple
	}
	if !(spread > 0) {
		bp.res.Kind = "none"
		bp.flags = append(bp.flags, Flag{Code: "balancing-unsized", Severity: Warning, Message: fmt.Sprintf(
			"The cell gives no leakage current and the design no leakage spread, so no balancing resistor could be sized for the %d cells of each string; give leakage_a or balancing.leakage_spread_a.", s)})
		return bp
	}
	rule := vCell / (mult * spread)
	bp.res.RuleOhm = &rule
	want := rule
	bound := BalancingBound(p.maxV, ceiling, s, spread)
	boundBy := "ceiling"
	if bound == 0 && c.RatedV > ceiling {
		bound = BalancingBound(p.maxV, c.RatedV, s, spread)
		boundBy = "rated voltage"
	}
	if bound > 0 {
		bp.res.BoundOhm = &bound
		want = math.Min(rule, bound)
	} else {
		bp.flags = append(bp.flags, Flag{Code: "balancing-headroom", Severity: Warning, Message: fmt.Sprintf(
			"%d cells at %.4g V each leave no headroom below the %.4g V cell limit, so no resistor can hold every cell under it with a leakage spread of %.3g A (worst case in series: every other cell leaks the spread more than one); the resistor follows the %g× rule alone. Add a cell in series, lower the window top, or use active balancing.",
			s, vCell, math.Max(ceiling, c.RatedV), spread, mult)})
	}
	r := PreferredFloor(want, values)
	if !(r > 0) {
		r = want
	}
	bp.res.ResistorOhm = &r
	diss := vCell * vCell / r
	bp.res.DissipationW = &diss
	rating := ResistorRating(diss, 2)
	if rating > 0 {
		bp.res.ResistorPowerW = &rating
	} else {
		bp.flags = append(bp.flags, Flag{Code: "balancing-power", Severity: Warning, Message: fmt.Sprintf(
			"Each balancing resistor (%.4g Ω) dissipates %.3g W at %.4g V, beyond common resistor ratings with a 2× margin; use active balancing.", r, diss, vCell)})
	}
	bp.res.Count = s
	bp.res.LossW = diss * float64(s)
	tc := r * c.CapacitanceF
	bp.res.TimeConstantS = &tc
	static := WorstStaticVoltage(p.maxV, r, s, spread)
	bp.res.WorstStaticCellV = &static
	if bound > 0 && boundBy == "rated voltage" {
		bp.flags = append(bp.flags, Flag{Code: "balancing-headroom", Severity: Info, Message: fmt.Sprintf(
			"At %.4g V per cell the string has no headroom below its %.4g V ceiling; the balancing resistor is bounded to keep every cell under its %.4g V rating instead (worst case of the leakage spread in series: R ≤ (n·V_rating − V_string)/((n − 1)·ΔI)).",
			vCell, ceiling, c.RatedV)})
	}
	bp.gCell = 1 / r
	return bp
}

// shelfHold returns the time, in s, a cell of capacitance c (F) takes to
// fall from v0 to v1 (V) through a leakage conductance g (S) and a
// constant drain iq (A), with no load: the affine solution of
// C·dv/dt = −(iq + g·v) (textbook first-order circuit). It returns −1 when
// the drains are nil.
func shelfHold(c, g, iq, v0, v1 float64) float64 {
	return currentTime(v0, iq+g*v0, c, g, v1)
}
