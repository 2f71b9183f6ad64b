package sizing

import (
	"errors"
	"fmt"
	"math"

	"capbank/sizing/cellmodel"
)

// This file runs the sizing pass and the runtime on a cell's model (the
// cell key "model", package cellmodel) instead of the ideal RC.
//
// What the model changes: the pass (lowest terminal voltage, stop at the
// window bottom or the power collapse, currents, ∫i²dt, energies, the
// losses in the branches and the leakage) and the runtime. The worst case
// applies as for the ideal cell: the capacitance factor (end of life, cold,
// minus tolerance) scales every capacitance of the model, the ESR factor
// (end of life, cold) the immediate branch's resistance. The cell's
// leakage_a and the balancing drains sit across the cell terminals, beside
// the model's rleak_ohm.
//
// Charging steps (negative current or power) charge until the immediate
// branch reaches the window top, then the terminals are held there for
// the rest of the step (a charger's constant-voltage phase); what the
// source offered and the bank did not take is reported as rejected.
//
// Power steps follow the converter's efficiency curve where the design
// gives one (the bank power P_L/η(u) at each terminal voltage u; the
// collapse is taken where the branches' peak power u·(S − G·u) at
// u = S/(2G) falls below the demand there), and stop at the converter's
// input current limit where it gives one (flat efficiency only).
//
// What it does not solve yet, and Validate refuses by field for a cell
// with a model: the input current limit together with an efficiency
// curve, wiring resistance and the thermal limit.
// The stored-energy, safety and charging figures still use the cell's
// capacitance_f and esr_ohm (a flag says so), and the lot analysis is not
// run on such a cell.

// modelRules refuses, by field, what the model pass cannot solve yet, and
// checks each cell's model.
func modelRules(d *Design) ValidationError {
	var errs ValidationError
	add := func(field, rule, format string, a ...any) {
		errs = append(errs, FieldError{Field: field, Rule: rule, Message: fmt.Sprintf(format, a...)})
	}
	first := -1
	for i := range d.Cells {
		c := &d.Cells[i]
		if c.Model == nil {
			continue
		}
		p := fmt.Sprintf("cells[%d]", i)
		if first < 0 {
			first = i
		}
		top := c.RatedV
		if c.SurgeV != nil && *c.SurgeV > top {
			top = *c.SurgeV
		}
		if err := c.Model.Validate(top); err != nil {
			var fe cellmodel.FieldErrors
			if errors.As(err, &fe) {
				for _, e := range fe {
					add(p+".model."+e.Field, "model", "%s", e.Message)
				}
			} else {
				add(p+".model", "model", "%v", err)
			}
		}
		if c.ThermalResistanceKPerW != nil && c.MaxTempC != nil {
			add(p+".thermal_resistance_k_per_w", "model_unsupported",
				"the thermal limit is not yet solved on a cell model (%s.model): remove the model, or thermal_resistance_k_per_w or max_temp_c", p)
		}
	}
	if first < 0 {
		return errs
	}
	mp := fmt.Sprintf("cells[%d].model", first)
	if cv := d.Converter; cv != nil && len(cv.EfficiencyCurve) > 0 && cv.MaxInputCurrentA != nil {
		add("converter.max_input_current_a", "model_unsupported",
			"the converter's input current limit together with an efficiency curve is not yet solved on a cell model (%s): remove one of them or the model", mp)
	}
	if w := d.Wiring; w != nil {
		for _, f := range []struct {
			name string
			v    *float64
		}{{"link_resistance_ohm", w.LinkResistanceOhm}, {"string_resistance_ohm", w.StringResistanceOhm}, {"bank_resistance_ohm", w.BankResistanceOhm}} {
			if f.v != nil && *f.v > 0 {
				add("wiring."+f.name, "model_unsupported",
					"wiring resistance is not yet solved on a cell model (%s): remove it or the model", mp)
			}
		}
	}
	return errs
}

// modelBank is the worst-case bank of par strings as the cell's model.
func (l *cellLimits) modelBank(par int) cellmodel.Model {
	bm := l.model.Derate(l.cw/l.cellC, l.rw/l.cellR).Bank(l.s, par)
	// The drains of each cell, across its terminals: g per cell → g·p/s.
	if g := l.gCell * float64(par) / float64(l.s); g > 0 {
		if bm.LeakageOhm > 0 {
			g += 1 / bm.LeakageOhm
		}
		bm.LeakageOhm = 1 / g
	}
	return bm
}

// modelRun is a sizing pass on a model, with the simulation to go on from.
type modelRun struct {
	stats            passStats
	sim              *cellmodel.Sim
	bank             cellmodel.Model
	eLeak, eBranches float64 // J: lost in the leakage and in the branch resistances
	err              error
}

// modelLoad is the load of step st on the model; curve, if not nil, is
// the converter's efficiency against the terminal voltage, applied to
// power steps as the ideal pass does (P_L/η(u) out of the bank while
// discharging, |P_L|·η(u) into it while charging).
func modelLoad(st compiledStep, curve *efficiencyCurve) cellmodel.Load {
	if st.kind == kindPower && curve != nil {
		pl := st.x
		if pl > 0 {
			return cellmodel.Load{Kind: cellmodel.Power, PowerAt: func(u float64) float64 { return pl / curve.at(u) }}
		}
		return cellmodel.Load{Kind: cellmodel.Power, PowerAt: func(u float64) float64 { return pl * curve.at(u) }}
	}
	switch st.kind {
	case kindCurrent:
		return cellmodel.Load{Kind: cellmodel.Current, Value: st.x}
	case kindPower:
		return cellmodel.Load{Kind: cellmodel.Power, Value: st.x}
	case kindResistance:
		return cellmodel.Load{Kind: cellmodel.Resistor, Value: st.x}
	case kindRest:
		return cellmodel.Load{Kind: cellmodel.Rest}
	}
	// modelRules refuses the other kinds before a pass is run.
	panic(fmt.Sprintf("sizing: step kind %d on a cell model", st.kind))
}

// runModelSteps runs the steps repeat times on r's simulation, adding to
// r.stats, as bankModel.run does on the ideal RC.
func (p *plan) runModelSteps(r *modelRun, repeat int, minV float64) {
	s := &r.stats
	for range repeat {
		for j, st := range p.steps {
			if j%haltEvery == 0 && p.halt != nil && p.halt.Load() {
				s.stop, s.stopStep = stopHalted, j
				return
			}
			e0 := r.bank.Energy(r.sim.State())
			load := modelLoad(st, p.curve)
			lim := cellmodel.Limits{MinV: minV}
			// The converter's input current limit (flat efficiency; with a
			// curve Validate refuses it): a discharging power step stops
			// where P/u would pass it, at u = P/imax, when that is above
			// the window bottom, as on the ideal RC.
			byCurrent := p.imax > 0 && p.curve == nil && st.kind == kindPower && st.x > p.imax*minV
			if byCurrent {
				lim.MinV = st.x / p.imax
			}
			charging := (st.kind == kindCurrent || st.kind == kindPower) && st.x < 0
			if charging {
				// Held at the window top once the immediate branch gets
				// there, as the ideal RC's capacitor is.
				lim.MaxBranchV = p.maxV
			}
			o, err := r.sim.Run(load, st.dur, lim, nil)
			if err != nil {
				r.err = err
				s.stop, s.stopStep = stopPower, j
				return
			}
			dur, i2dt, eLoad, eLeak := o.DurationS, o.I2dtA2s, o.EnergyOutJ, o.LeakageJ
			minU, peakI := o.MinTerminalV, o.PeakCurrentA
			if rem := st.dur - o.DurationS; charging && o.Stop == cellmodel.Ceiling && rem > 0 {
				// The charger's constant-voltage hold at the window top
				// for the rest of the step: what it offered and the bank
				// did not take is rejected.
				offered := -st.x * rem // power: |P| over the hold
				if st.kind == kindCurrent {
					offered = -st.x * o.EndTerminalV * rem
				} else if p.curve != nil {
					offered *= p.curve.at(p.maxV)
				}
				h, err := r.sim.Run(cellmodel.Load{Kind: cellmodel.Voltage, Value: p.maxV}, rem, cellmodel.Limits{}, nil)
				if err != nil {
					r.err = err
					s.stop, s.stopStep = stopPower, j
					return
				}
				dur += h.DurationS
				i2dt += h.I2dtA2s
				eLoad += h.EnergyOutJ
				eLeak += h.LeakageJ
				minU, peakI = min(minU, h.MinTerminalV), max(peakI, h.PeakCurrentA)
				if rej := offered + h.EnergyOutJ; rej > 0 {
					s.reject += rej
				}
				if st.kind == kindPower && p.curve != nil {
					// At the load's side: what the source gave while
					// charging, and for what the bank took in the hold.
					s.eOut += st.x*o.DurationS + h.EnergyOutJ/p.curve.at(p.maxV)
				}
				o.Stop = cellmodel.Completed
			}
			y := r.sim.State()
			s.t += dur
			s.v = y[0]
			s.minU = min(s.minU, minU)
			s.peakI = max(s.peakI, peakI)
			s.i2dt += i2dt
			if dur > 0 {
				s.maxI2 = max(s.maxI2, i2dt/dur)
			}
			s.eLoad += eLoad
			switch {
			case st.kind == kindPower && p.curve != nil:
				if !(charging && o.Stop == cellmodel.Completed && dur > o.DurationS) {
					s.eOut += st.x * dur // the load's own power over the step
				}
			default:
				s.eOut += eLoad * st.toLoad
			}
			r.eLeak += eLeak
			r.eBranches += e0 - r.bank.Energy(y) - eLoad - eLeak
			s.steps++
			switch o.Stop {
			case cellmodel.WindowBottom:
				s.stop, s.stopStep = stopVoltage, j
				if byCurrent {
					s.stop = stopInputCurrent
				}
				return
			case cellmodel.Collapse:
				s.stop, s.stopStep = stopPower, j
				return
			}
		}
	}
}

// runModel runs the sizing pass on the model of par strings, from a long
// rest at the pass's start voltage.
func (p *plan) runModel(l *cellLimits, par int) *modelRun {
	bm := l.modelBank(par)
	r := &modelRun{bank: bm, sim: cellmodel.NewSim(bm, p.startV, cellmodel.Tolerances{})}
	r.stats = passStats{v: p.startV, minU: math.Inf(1)}
	p.runModelSteps(r, p.repeat, p.minV)
	return r
}

// modelRuntimeSteps bounds the profile steps the runtime on a model runs
// one by one; past it the runtime is reported as not followed (no
// averaging: the state of a model is not one voltage).
const modelRuntimeSteps = 400_000

// modelRuntime goes on from the end of the pass r, repeating the steps
// back to back until a step stops. A period after which every branch is
// at or above where it started never runs out.
func (p *plan) modelRuntime(r *modelRun) (runtimeResult, bool) {
	t := r.stats.t
	for n := 0; n < modelRuntimeSteps; n += len(p.steps) {
		if t >= RuntimeLimitS {
			return runtimeResult{}, true
		}
		y0 := r.sim.State()
		q := &modelRun{bank: r.bank, sim: r.sim, stats: passStats{minU: math.Inf(1)}}
		p.runModelSteps(q, 1, p.minV)
		if q.err != nil {
			return runtimeResult{}, false
		}
		if q.stats.stop != stopNone {
			tt := t + q.stats.t
			if tt > RuntimeLimitS {
				return runtimeResult{}, true
			}
			return runtimeResult{within: true, t: tt, end: q.stats.stop}, true
		}
		t += q.stats.t
		up := true
		for k, v := range r.sim.State() {
			up = up && v >= y0[k]
		}
		if up {
			return runtimeResult{}, true
		}
	}
	return runtimeResult{}, false
}

// fillModelFigures replaces the loss and energy figures of an ideal-RC
// pass with the model's, for the chosen string count.
func (p *plan) fillModelFigures(cand *Candidate, c *Cell, r *modelRun) {
	cand.ESRLossJ = r.eBranches
	cand.WiringLossJ = 0
	cand.LeakageLossJ = r.eLeak
	bm := r.bank
	cand.UsableEnergyJ = bm.Energy(bm.RestState(p.maxV)) - bm.Energy(bm.RestState(p.minV))
	cand.Flags = append(cand.Flags, Flag{Code: "cell-model", Severity: Info, Message: fmt.Sprintf(
		"The pass, the lowest terminal voltage, the runtime and the losses come from the cell's %s model (Dormand–Prince 5(4), relative tolerance %g); the stored-energy, safety, charging, heat and life figures use its capacitance_f and esr_ohm, and no lot analysis is run on it.",
		c.Model.Kind, cellmodel.DefaultRelTol)})
}

// fillModelRuntime sets the runtime of a feasible candidate from its model.
func (p *plan) fillModelRuntime(cand *Candidate, r *modelRun) {
	rt, followed := p.modelRuntime(r)
	if !followed {
		cand.Flags = append(cand.Flags, Flag{Code: "runtime-not-followed", Severity: Warning, Message: fmt.Sprintf(
			"The runtime on the cell's model was not followed past %d steps (or the model could not be integrated further): it is left out.", modelRuntimeSteps)})
		return
	}
	if rt.within {
		v := rt.t
		cand.RuntimeS = &v
		cand.RuntimeEnd = rt.end.String()
	}
}
