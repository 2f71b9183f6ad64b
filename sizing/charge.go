package sizing

import (
	"fmt"
	"math"
)

// Charging the bank: a charger of current limit I (and power limit P)
// charges at constant current until the terminal voltage reaches
// min(max_v, P/I), then at constant power P until it reaches max_v, then
// at constant voltage max_v until its current falls to the end current
// f·I_top, I_top = min(I, P/max_v) the limit in force at max_v. The
// bank's leakage and balancing drain g acts throughout. Each phase is
// exact on the bank model (REFERENCES.md 3.13):
//
//   - constant current: the constant-current step of step.go run
//     backwards (C·dv/dt = I − g·v); to the capacitor voltage
//     u_switch − I·R, the time C·(v1 − v0)/I with g = 0;
//   - constant power: the constant-power step with P < 0, to the
//     capacitor voltage max_v − P·R/max_v, where the terminal is at max_v;
//   - constant voltage: i = (max_v − v)/R, so
//     v(t) = v∞ + (v0 − v∞)·e^(−t/τ), v∞ = max_v/(1 + g·R),
//     τ = R·C/(1 + g·R), and the current reaches f·I_top after
//     τ·ln((v∞ − v0)/(v∞ − v_end)), v_end = max_v − f·I_top·R; with
//     g = 0, τ·ln(1/f) from the end of a constant-current phase (handbook
//     RC charge). With f·I_top at or below the drain's own current at the
//     top, max_v·g/(1 + g·R), it never ends.

// chargerPlan is a design's charger, ready to charge a bank.
type chargerPlan struct {
	currentA, powerW float64 // limits; powerW 0: none
	endFrac          float64 // the end current as a share of the limit at max_v
	eff              float64 // energy from the supply = energy delivered / eff
}

func newChargerPlan(c *Charger) *chargerPlan {
	if c == nil {
		return nil
	}
	cp := &chargerPlan{currentA: c.CurrentA, powerW: ptr0(c.PowerW), endFrac: DefaultChargerEndCurrentPct / 100, eff: 1}
	if c.EndCurrentPct != nil {
		cp.endFrac = *c.EndCurrentPct / 100
	}
	if c.Efficiency != nil {
		cp.eff = *c.Efficiency
	}
	return cp
}

// topCurrent is the charger's current limit at terminal voltage maxV.
func (cp *chargerPlan) topCurrent(maxV float64) float64 {
	if cp.powerW > 0 {
		return math.Min(cp.currentA, cp.powerW/maxV)
	}
	return cp.currentA
}

// chargeResult is a charge from a capacitor voltage to the end of the
// constant-voltage phase.
type chargeResult struct {
	ends        bool    // false: a phase never ends (the drain takes the charger's current)
	why         string  // when it does not end: what stops it
	t           float64 // s, the whole charge
	tCC, tCP    float64 // s, the constant-current and constant-power phases
	tCV         float64 // s, the constant-voltage phase
	intoBank    float64 // J, energy into the bank terminals
	seriesLossJ float64 // J, lost in the series resistance (cells and wiring)
}

// chargeNever is the duration given to a phase run to its end: far past
// any charge (3·10⁷ years), so the step stops at the top first.
const chargeNever = 1e15

// chargePhase runs the charging step st from capacitor voltage v to vTop
// and stops there: the step is first run far past any charge to find when
// it reaches vTop, then again for exactly that long, so that its figures
// hold no time held at the top. ok is false when it never gets there.
func (b *bankModel) chargePhase(st compiledStep, v, vTop float64) (stepOutcome, bool) {
	st.dur = chargeNever
	o := b.step(st, v, 0, vTop)
	if o.tTop < 0 {
		return o, false
	}
	st.dur = o.tTop
	return b.step(st, v, 0, vTop), true
}

// charge charges bank m from capacitor voltage v0 to the end of the
// constant-voltage phase at terminal voltage maxV.
func (m *bankModel) charge(cp *chargerPlan, v0, maxV float64) chargeResult {
	b := *m
	b.effCurve, b.imax = nil, 0 // the charger does not go through the load's converter
	res := chargeResult{ends: true}
	v := v0
	I, r := cp.currentA, b.r
	uSwitch := maxV
	if cp.powerW > 0 && cp.powerW/I < maxV {
		uSwitch = cp.powerW / I
	}
	// Constant current, to the terminal voltage uSwitch.
	if vA := uSwitch - I*r; v < vA {
		o, ok := b.chargePhase(compiledStep{kind: kindCurrent, x: -I, toLoad: 1}, v, vA)
		if !ok {
			res.ends, res.why = false, fmt.Sprintf("the charger's %s does not exceed the bank's leakage and balancing drain below %s", Quantity(I, "A", 4), Quantity(uSwitch, "V", 4))
			return res
		}
		res.tCC, res.intoBank, res.seriesLossJ = o.t, -o.eLoad, o.i2dt*r
		v = vA
	}
	// Constant power, from uSwitch to max_v.
	if cp.powerW > 0 && uSwitch < maxV {
		P := cp.powerW
		if vB := maxV - P*r/maxV; v < vB {
			o, ok := b.chargePhase(compiledStep{kind: kindPower, x: -P, toLoad: 1}, v, vB)
			if !ok {
				res.ends, res.why = false, fmt.Sprintf("the charger's %s does not exceed the bank's leakage and balancing drain below %s", Quantity(P, "W", 4), Quantity(maxV, "V", 4))
				return res
			}
			res.tCP = o.t
			res.intoBank += -o.eLoad
			res.seriesLossJ += o.i2dt * r
			v = vB
		}
	}
	// Constant voltage at max_v, to the end current.
	iEnd := cp.endFrac * cp.topCurrent(maxV)
	vEnd := maxV - iEnd*r
	if v < vEnd {
		k := 1 + b.g*r
		vInf, tau := maxV/k, r*b.c/k
		if !(vInf > vEnd) {
			res.ends = false
			res.why = fmt.Sprintf("the leakage and balancing drain takes %s at %s, at least the end current %s, so the constant-voltage phase never ends",
				Quantity((maxV-vInf)/r, "A", 3), Quantity(maxV, "V", 4), Quantity(iEnd, "A", 3))
			return res
		}
		t := tau * math.Log((vInf-v)/(vInf-vEnd))
		dInf, delta := maxV-vInf, vInf-v
		e1 := -math.Expm1(-t / tau)     // 1 − e^(−t/τ)
		e2 := -math.Expm1(-2 * t / tau) // 1 − e^(−2t/τ)
		q := (dInf*t + delta*tau*e1) / r
		res.tCV = t
		res.intoBank += maxV * q
		res.seriesLossJ += (dInf*dInf*t + 2*dInf*delta*tau*e1 + delta*delta*tau/2*e2) / r
	}
	res.t = res.tCC + res.tCP + res.tCV
	return res
}

// Precharge is the resistor that keeps the current into an empty bank
// within system.inrush_limit_a, sized on the bank at beginning of life at
// the top of its capacitance tolerance (the most energy, the longest
// charge).
type Precharge struct {
	// NeededOhm, in Ω, is max_v / limit − the bank's ESR (with wiring);
	// 0 when the ESR alone keeps the current within the limit.
	NeededOhm float64 `json:"needed_ohm"`
	// ResistanceOhm, in Ω, is NeededOhm rounded up to the E24 series
	// (IEC 60063); 0 when none is needed.
	ResistanceOhm float64 `json:"resistance_ohm"`
	// PeakCurrentA = max_v / (R + ESR), in A, at the moment of connection.
	PeakCurrentA float64 `json:"peak_current_a"`
	// PeakPowerW = PeakCurrentA² · R, in W, in the resistor.
	PeakPowerW float64 `json:"peak_power_w"`
	// EnergyJ = ½·C·max_v², in J: the whole loss of charging C from empty
	// through a resistance, whatever its value (textbook); the resistor
	// takes R/(R + ESR) of it, the pulse it must be rated for.
	EnergyJ float64 `json:"energy_j"`
	// TimeTo99S = (R + ESR)·C·ln 100, in s: the bank at 99 % of max_v.
	TimeTo99S float64 `json:"time_to_99_s"`
	// CapacitanceF, in F, is the bank capacitance used.
	CapacitanceF float64 `json:"capacitance_f"`
}

// PrechargePlan sizes the precharge resistor that keeps the current into
// a bank of capacitance capF (F) and series resistance esrOhm (Ω),
// connected empty to maxV, within limitA.
func PrechargePlan(maxV, capF, esrOhm, limitA float64) Precharge {
	pc := Precharge{CapacitanceF: capF, EnergyJ: 0.5 * capF * maxV * maxV}
	if need := maxV/limitA - esrOhm; need > 0 {
		pc.NeededOhm = need
		pc.ResistanceOhm = preferredCeil(need, seriesE24)
	}
	rt := pc.ResistanceOhm + esrOhm
	pc.PeakCurrentA = maxV / rt
	pc.PeakPowerW = pc.PeakCurrentA * pc.PeakCurrentA * pc.ResistanceOhm
	pc.TimeTo99S = rt * capF * math.Log(100)
	return pc
}

// fillCharge writes the charger's figures, the inrush and the precharge
// resistor of a candidate: m is its worst-case bank, st the sizing pass
// (recharged from where it ended when ok).
func (p *plan) fillCharge(cand *Candidate, c *Cell, l *cellLimits, m bankModel, st passStats, ok bool) {
	newC := cand.CapacitanceF
	if t := c.CapacitanceTolerancePct; len(t) == 2 && t[1] > 0 {
		newC *= 1 + t[1]/100
	}
	prospective := p.maxV / cand.ESROhm
	cand.InrushCurrentA = prospective
	if cp := p.charger; cp != nil {
		cand.InrushCurrentA = math.Min(prospective, cp.currentA)
	}
	if lim := p.d.System; lim != nil && lim.InrushLimitA != nil {
		pc := PrechargePlan(p.maxV, newC, cand.ESROhm, *lim.InrushLimitA)
		cand.Precharge = &pc
	} else if p.charger == nil {
		cand.Flags = append(cand.Flags, Flag{Code: "inrush-unlimited", Severity: Info, Message: fmt.Sprintf(
			"Nothing in the design limits the current into the bank: an empty bank connected straight to a %s supply, or the charged bank to an empty DC link, draws up to %s at once (max_v over the bank's ESR and wiring, %s). Give the charger (its current limit) or system.inrush_limit_a to size a precharge resistor.",
			Quantity(p.maxV, "V", 4), Quantity(prospective, "A", 3), Quantity(cand.ESROhm, "Ω", 3))})
	}
	cp := p.charger
	if cp == nil {
		return
	}
	// The first charge: a new bank at its nominal capacitance and ESR,
	// from 0 V.
	fresh := newBankModel(cand.CapacitanceF, cand.ESROhm, m.g)
	if fc := fresh.charge(cp, 0, p.maxV); fc.ends {
		cand.FirstChargeS = &fc.t
	} else {
		cand.Flags = append(cand.Flags, Flag{Code: "charge-never-ends", Severity: Warning, Message: fmt.Sprintf(
			"The charger cannot finish charging this bank: %s. Raise charger.current_a or charger.end_current_pct, or lower the drain (balancing).", fc.why)})
		return
	}
	if !ok {
		return
	}
	rc := m.charge(cp, st.v, p.maxV)
	if !rc.ends {
		cand.Flags = append(cand.Flags, Flag{Code: "charge-never-ends", Severity: Warning, Message: fmt.Sprintf(
			"The charger cannot finish recharging this bank at worst case: %s. Raise charger.current_a or charger.end_current_pct, or lower the drain (balancing).", rc.why)})
		return
	}
	e, loss := rc.intoBank/cp.eff, rc.seriesLossJ
	cand.RechargeS, cand.ChargeEnergyJ, cand.ChargeSeriesLossJ = &rc.t, &e, &loss
	if p.periodS <= 0 {
		return
	}
	idle := p.periodS - l.passTime
	if rc.t > idle*(1+1e-12) {
		cand.Feasible, cand.Limit = false, "recharge"
		cand.Reason = fmt.Sprintf(
			"The charger needs %s to recharge the bank after the event at worst case (from %s back to the end of its constant-voltage phase: %s at constant current or power, %s at constant voltage), more than the %s the period leaves between events (load.period_s %s less the %s event). More strings do not shorten it; raise charger.current_a or lengthen the period.",
			duration(rc.t), Quantity(st.v, "V", 4), duration(rc.tCC+rc.tCP), duration(rc.tCV), duration(idle), Quantity(p.periodS, "s", 4), Quantity(l.passTime, "s", 4))
	}
}
