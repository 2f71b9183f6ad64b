package sizing

import (
	"math"

	"gonum.org/v1/gonum/integrate/quad"
)

// RuntimeLimitS, in s, is how far the runtime is followed: a bank that still
// carries the repeating steps after 10^7 s (about 116 days) is reported with
// a nil runtime.
const RuntimeLimitS = 1e7

// runtimeStepBudget bounds the steps run one by one for the runtime; past
// it the remaining periods are counted by averaging (see runtime).
const runtimeStepBudget = 4_000_000

// passStats is what a run over the steps did.
type passStats struct {
	t        float64    // time run, s
	v        float64    // capacitor voltage at the end, V
	minU     float64    // lowest terminal voltage, V
	peakI    float64    // largest |i|, A
	i2dt     float64    // ∫ i² dt, A²·s
	maxI2    float64    // the largest mean i² of a step, A², bounding the heating
	eLoad    float64    // energy delivered at the terminals, J
	eOut     float64    // energy delivered to the load, after the converter, J
	reject   float64    // charging energy not absorbed, J
	stop     stopReason // why the run ended early, if it did
	stopStep int        // index of the step that stopped it
	steps    int        // steps solved
}

// run runs the steps repeat times back to back from capacitor voltage v0,
// and stops at the first step that reaches min_v or the power limit. It
// allocates nothing.
func (m *bankModel) run(steps []compiledStep, repeat int, v0, minV, maxV float64) passStats {
	s := passStats{v: v0, minU: math.Inf(1)}
	var o stepOutcome
	for range repeat {
		for j := range steps {
			if j%haltEvery == 0 && m.halted() {
				s.stop, s.stopStep = stopHalted, j
				return s
			}
			m.solveStep(steps[j], s.v, minV, maxV, &o)
			s.t += o.t
			s.v = o.v1
			s.minU = min(s.minU, o.uStart, o.uEnd)
			s.peakI = max(s.peakI, o.iPeak)
			s.i2dt += o.i2dt
			if o.t > 0 {
				s.maxI2 = max(s.maxI2, o.i2dt/o.t)
			}
			s.eLoad += o.eLoad
			if m.effCurve != nil && steps[j].kind == kindPower {
				s.eOut += o.eOut // the efficiency moved with the voltage
			} else {
				s.eOut += o.eLoad * steps[j].toLoad
			}
			s.reject += o.reject
			s.steps++
			if o.stop != stopNone {
				s.stop, s.stopStep = o.stop, j
				return s
			}
		}
	}
	return s
}

// runtimeResult is the worst-case runtime of a bank.
type runtimeResult struct {
	within    bool       // false: still running at RuntimeLimitS
	t         float64    // s
	end       stopReason // what ended it
	estimated bool       // counted by averaging over many periods
}

// runtime follows the steps, repeating back to back, from rest at the
// window top until a step stops. Each period is a monotone map of its
// starting voltage, v → f(v), so:
//   - a period that ends at or above its starting voltage never runs out;
//   - otherwise periods are run one by one while the step budget lasts
//     (runtimeStepBudget in a sizing);
//   - past the budget, the remaining periods are counted by averaging,
//     N = ∫ dv / (v − f(v)) from the lowest starting voltage that still
//     completes a period (found by bisection) to the present one, with a
//     16-point Gauss–Legendre rule (gonum integrate/quad). That is accurate
//     when each period takes only a small bite of the voltage, which is the
//     only way to exhaust the budget; the result is marked estimated.
func (m *bankModel) runtime(steps []compiledStep, period, minV, maxV float64, budget int) runtimeResult {
	return m.runtimeFrom(steps, period, minV, maxV, budget, maxV, 0)
}

// runtimeFrom is runtime going on from capacitor voltage v at time t, the
// end of whole periods already run from the top.
func (m *bankModel) runtimeFrom(steps []compiledStep, period, minV, maxV float64, budget int, v, t float64) runtimeResult {
	for evals := 0; ; evals += len(steps) {
		if t >= RuntimeLimitS {
			return runtimeResult{}
		}
		s := m.run(steps, 1, v, minV, maxV)
		m.work += s.steps
		if s.stop != stopNone {
			return m.within(t+s.t, s.stop, false)
		}
		if s.v >= v {
			return runtimeResult{}
		}
		v, t = s.v, t+s.t
		if evals+len(steps) > budget {
			break
		}
	}
	return m.averagedRuntime(steps, period, v, t, minV, maxV)
}

func (m *bankModel) within(t float64, end stopReason, estimated bool) runtimeResult {
	if t > RuntimeLimitS || !Finite(t) {
		return runtimeResult{}
	}
	return runtimeResult{within: true, t: t, end: end, estimated: estimated}
}

func (m *bankModel) averagedRuntime(steps []compiledStep, period, v, t, minV, maxV float64) runtimeResult {
	completes := func(v0 float64) (passStats, bool) {
		s := m.run(steps, 1, v0, minV, maxV)
		m.work += s.steps
		return s, s.stop == stopNone
	}
	lo, hi := 0.0, v
	if _, ok := completes(lo); ok {
		// Even an empty bank completes a period: it recharges itself.
		return runtimeResult{}
	}
	for hi-lo > 1e-12*hi {
		mid := lo + (hi-lo)/2
		if _, ok := completes(mid); ok {
			hi = mid
		} else {
			lo = mid
		}
	}
	vCrit := hi
	never := false
	drop := func(x float64) float64 {
		s, _ := completes(x)
		d := x - s.v
		if !(d > 0) {
			never = true
			return 0
		}
		return 1 / d
	}
	n := quad.Fixed(drop, vCrit, v, 16, quad.Legendre{}, 0)
	if never || !Finite(n) {
		return runtimeResult{}
	}
	// The last, failing period starts somewhere in (f(vCrit), vCrit].
	sc, _ := completes(vCrit)
	last := m.run(steps, 1, vCrit-(vCrit-sc.v)/2, minV, maxV)
	tLast := period / 2
	if last.stop != stopNone {
		tLast = last.t
	}
	end := last.stop
	if end == stopNone {
		end = stopVoltage
	}
	return m.within(t+n*period+tLast, end, true)
}
