package sizing

// boundSums are the parts of stringBound's sums over the pass that do not
// depend on the cell, gathered once per plan so that each candidate costs
// a few operations instead of a walk over every step of a long profile.
type boundSums struct {
	// runs are the steps merged into runs of draws of one sign: a run of
	// draws ≥ 0 (discharges and rests) or of charges (< 0). Within such a
	// run the running deficit only rises, or only falls to its floor of 0,
	// so merging changes neither the largest deficit nor where a run leaves
	// it (with no drain added; see deficit).
	runs []boundRun
	// need is the largest running deficit of energy drawn over the pass
	// (J), valid when no step is a charging current (chargeCurrent false),
	// whose draw depends on the string's resistance.
	need          float64
	chargeCurrent bool
	// peak (A) and i2dt (A²·s) are the bank current's lower bound, its
	// largest value and ∫i²dt over the pass, for the current and power
	// steps; the resistor steps, whose current depends on the string's
	// resistance, are kept in resistors.
	peak, i2dt float64
	resistors  []compiledStep
	// i2est is ∫i²dt over the pass with the current at mid-window (A²·s).
	i2est float64
	// charges is whether any step charges the bank (a negative current or
	// power).
	charges bool
	// drawJ is the energy the pass delivers to the load (J), the current
	// and resistor steps taken at mid-window: for the search's estimates,
	// when no step charges.
	drawJ float64
}

// boundRun is a run of steps: the energy they draw (J) with the string
// resistance at 0, the coefficient of the string resistance in it (J/Ω,
// from charging currents), and their duration (s).
type boundRun struct {
	e, eR, dur float64
}

// gatherBound fills p.bound from the plan's steps.
func (p *plan) gatherBound() {
	b := &p.bound
	vMid := (p.maxV + p.minV) / 2
	reps := float64(p.repeat)
	var i2dt, i2est float64
	for _, st := range p.steps {
		e, eR, i, ie := 0.0, 0.0, 0.0, 0.0
		switch st.kind {
		case kindCurrent:
			i, ie = abs(st.x), abs(st.x)
			if st.x > 0 {
				e = st.x * p.minV * st.dur
			} else {
				// x·(max_v − x·R_string)·dur
				e, eR = st.x*p.maxV*st.dur, -st.x*st.x*st.dur
				b.chargeCurrent = true
			}
		case kindPower:
			e = st.x * st.dur
			if st.x > 0 {
				i = st.x / p.maxV
			}
			ie = abs(st.x) / vMid
		case kindResistance:
			e = p.minV * p.minV / st.x * st.dur
			ie = vMid / st.x
			b.resistors = append(b.resistors, st)
		}
		if st.x < 0 && st.kind != kindResistance {
			b.charges = true
		}
		switch st.kind {
		case kindPower:
			b.drawJ += st.x * st.dur
		case kindCurrent:
			b.drawJ += st.x * vMid * st.dur
		case kindResistance:
			b.drawJ += vMid * vMid / st.x * st.dur
		}
		b.peak = max(b.peak, i)
		i2dt += i * i * st.dur
		i2est += ie * ie * st.dur
		if n := len(b.runs); n > 0 && (e < 0) == (b.runs[n-1].e < 0) {
			r := &b.runs[n-1]
			r.e, r.eR, r.dur = r.e+e, r.eR+eR, r.dur+st.dur
		} else {
			b.runs = append(b.runs, boundRun{e: e, eR: eR, dur: st.dur})
		}
	}
	b.i2dt, b.i2est, b.drawJ = i2dt*reps, i2est*reps, b.drawJ*reps
	if !b.chargeCurrent {
		b.need = p.deficit(0, 0)
	}
}

// deficit is the largest running deficit of energy drawn over the pass
// (J), never below zero since the bank is held at the top, with the
// string resistance rString (Ω) in the charging currents' draw and a
// steady drain of drainW (W) added throughout. With a drain, a run of
// charges whose steps are not all stronger than the drain is taken as a
// whole: that is only for the estimate, which need not be exact.
func (p *plan) deficit(rString, drainW float64) float64 {
	deficit, need := 0.0, 0.0
	for range p.repeat {
		if p.halt.Load() { // cancelled: the sizing is thrown away
			return need
		}
		for _, r := range p.bound.runs {
			deficit = max(0, deficit+r.e+r.eR*rString+drainW*r.dur)
			need = max(need, deficit)
		}
	}
	return need
}
