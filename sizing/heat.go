package sizing

import "math"

// heatModel is a cell's first-order thermal model: a thermal resistance to
// ambient rth (K/W) with the cell's heat capacity m·c_p, so
//
//	m·c_p·dΔT/dt = P − ΔT/R_th,   τ = R_th·m·c_p,
//
// and under a constant loss P the rise approaches P·R_th as
// ΔT(t) = P·R_th + (ΔT0 − P·R_th)·e^(−t/τ) (REFERENCES.md 3.14,
// heat-transfer textbook). With no heat capacity known, tau is 0 and the
// rise follows the loss at once: the cautious limit.
type heatModel struct {
	rth, tau float64
	rCell    float64 // worst-case cell ESR, Ω
	par      float64 // strings: the cell current is the bank current / par
}

// advance returns the rise, K, after d seconds at loss w (W) from rise x.
func (h heatModel) advance(x, w, d float64) float64 {
	inf := w * h.rth
	if h.tau <= 0 {
		return inf
	}
	return x + (x-inf)*expm1(-d/h.tau)
}

// loss returns the cell's mean ESR loss, W, over a step that ran t seconds
// with bank ∫i² dt = i2dt: R_cell·i2dt/(par²·t).
func (h heatModel) loss(i2dt, t float64) float64 {
	if t <= 0 {
		return 0
	}
	return h.rCell * i2dt / (h.par * h.par * t)
}

// heatResult is the thermal outcome of the sizing pass.
type heatResult struct {
	peak     float64  // highest rise over the pass from ambient, K
	dutyPeak *float64 // highest rise at the periodic steady state, K
	end      float64  // rise at the end of the pass, K
	t        float64  // time the pass ran, s
	stopped  bool     // a step stopped the pass early
}

// heat runs the sizing pass on bank m with the thermal model h. Each step
// heats the cell at its mean loss (exact energy per step). The periodic
// steady state of a repeating duty is found from its affine map
// ΔT_end = α·ΔT_start + β, α = e^(−T/τ), whose fixed point is β/(1 − α):
//
//   - with a period (periodS > 0, load.period_s), the duty is the whole
//     pass followed by the bank idle (no current, no heating) until the
//     next event: β is the pass's rise from ambient times e^(−idle/τ), α
//     is e^(−period/τ), and the pass is run again from the fixed point
//     for its peak;
//   - with none and repeating steps, the steps repeat back to back, the
//     losses of the pass's last repeat (the most drained and so the most
//     lossy) standing for every repeat.
func (m *bankModel) heat(steps []compiledStep, repeat int, v0, maxV, minV float64, h heatModel, periodS float64) heatResult {
	res := m.heatFrom(steps, repeat, v0, maxV, minV, h, 0, periodS == 0)
	if periodS == 0 || res.stopped {
		return res
	}
	if h.tau <= 0 {
		// The rise follows the loss at once: every event is the first.
		peak := res.peak
		res.dutyPeak = &peak
		return res
	}
	pass := res.t
	idle := max(0, periodS-pass)
	start := res.end * math.Exp(-idle/h.tau) / -expm1(-periodS/h.tau)
	again := m.heatFrom(steps, repeat, v0, maxV, minV, h, start, false)
	peak := math.Max(start, again.peak)
	res.dutyPeak = &peak
	return res
}

// heatFrom runs the pass from capacitor voltage v0 and a rise x0 (K) and
// returns its peak rise,
// its rise at the end and, when backToBack, the periodic steady state of
// the steps repeating back to back.
func (m *bankModel) heatFrom(steps []compiledStep, repeat int, v0, maxV, minV float64, h heatModel, x0 float64, backToBack bool) heatResult {
	var o stepOutcome
	v, x := v0, x0
	res := heatResult{}
	last := make([]float64, len(steps))
	for k := range repeat {
		for j, st := range steps {
			if j%haltEvery == 0 && m.halted() {
				return res
			}
			m.solveStep(st, v, minV, maxV, &o)
			w := h.loss(o.i2dt, o.t)
			x = h.advance(x, w, o.t)
			res.peak = math.Max(res.peak, x)
			res.t += o.t
			v = o.v1
			if k == repeat-1 {
				last[j] = w
			}
			if o.stop != stopNone {
				res.stopped = true
				return res
			}
		}
	}
	res.end = x
	if repeat <= 1 || !backToBack {
		return res
	}
	period := 0.0
	beta := 0.0
	for j, st := range steps {
		beta = h.advance(beta, last[j], st.dur)
		period += st.dur
	}
	var start float64
	if h.tau > 0 {
		start = beta / -expm1(-period/h.tau) // β/(1 − α)
	}
	x, peak := start, start
	for j, st := range steps {
		x = h.advance(x, last[j], st.dur)
		peak = math.Max(peak, x)
	}
	res.dutyPeak = &peak
	return res
}
