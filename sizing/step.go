package sizing

import "math"

// The exact solution of each step kind on the bank model: an ideal
// capacitor C behind the series resistance R, with a leakage conductance g
// across the capacitor. v is the capacitor voltage, u the terminal voltage,
// i the bank current (positive out of the bank), u = v − i·R.
//
//	constant current I:  C·dv/dt = −(I + g·v)
//	   v(t) = v0 − (I + g·v0)·(t/C)·φ(−g·t/C),   φ(x) = (e^x − 1)/x
//	resistor R_L:        i = v/(R_L + R),  C·dv/dt = −v/(R_L + R) − g·v
//	   v(t) = v0·e^(−k·t),  k = (1/(R_L + R) + g)/C
//	rest:                v(t) = v0·e^(−g·t/C)
//	constant power P:    u·i = P, so v = u + P·R/u and i = P/u; with
//	   a = P·(1 + R·g), A = −P·R/a, B = 1 + P·R·g/a the time from u0 to u is
//	   t(u) = C·[A·ln(u0/u) + B/(2g)·ln((a + g·u0²)/(a + g·u²))]
//	   (partial fractions of C·(u² − PR)/(u·(a + g·u²)); for g = 0 it is
//	   C·(u0² − u²)/(2P) − R·C·ln(u0/u), REFERENCES.md 3.10), and the
//	   end voltage of a step is its root, found by Newton's method.
//
// A discharging constant-power step exists only while v ≥ 2√(PR), i.e.
// u ≥ √(PR) (REFERENCES.md 3.8): there the load collapses. In u the terminal
// falls monotonically to √(PR), so the step stops at u = max(min_v, √(PR)):
// at the window bottom when min_v² ≥ P·R, else at the collapse.
//
// Charging steps (negative I or P) raise v; once v reaches the window top
// the bank is held there (a charger's constant-voltage phase or a brake
// chopper): only the leakage is then supplied, and the rest of what the
// source offers is counted as rejected energy.

type stepKind uint8

const (
	kindRest stepKind = iota
	kindCurrent
	kindPower
	kindResistance
)

func (k stepKind) String() string {
	return [...]string{"rest", "current", "power", "resistance"}[k]
}

// compiledStep is a step as the bank sees it: x is the current (A), the
// power at the bank terminals (W, after the converter efficiency) or the
// load resistance (Ω).
//
// toLoad turns the step's energy at the bank terminals into the energy at
// the load: the converter efficiency η for a discharging power step (the
// load gets η of what the bank gives), 1/η for a charging one (the source
// gives 1/η of what the bank takes), 1 for the other kinds, which act at
// the bank terminals.
type compiledStep struct {
	kind   stepKind
	x      float64
	dur    float64
	toLoad float64
}

// stopReason says why a step ended before its duration.
type stopReason uint8

const (
	stopNone         stopReason = iota
	stopVoltage                 // terminal voltage reached min_v
	stopPower                   // maximum-power point of a constant-power load
	stopHalted                  // the sizing was cancelled (SizeContext); nothing was solved
	stopInputCurrent            // the converter's input current limit
)

func (s stopReason) String() string {
	return [...]string{"", "voltage", "power", "halted", "input_current"}[s]
}

// stepOutcome is what a step did to the bank.
type stepOutcome struct {
	t      float64    // time run, s (the duration unless stopped)
	v1     float64    // capacitor voltage at the end, V
	uStart float64    // terminal voltage just after the step starts, V
	uEnd   float64    // terminal voltage at the end, V
	iStart float64    // bank current just after the step starts, A
	iEnd   float64    // bank current at the end, A
	iPeak  float64    // largest |i| in the step, A
	i2dt   float64    // ∫ i² dt, A²·s
	eLoad  float64    // ∫ u·i dt, J: energy delivered at the terminals
	eOut   float64    // energy delivered to the load after the converter, J; set only by powerCurveStep
	reject float64    // energy offered by a charging source but not absorbed, J
	tTop   float64    // time at which a charging step reached the window top (−1: never)
	stop   stopReason // why it ended early, if it did
}

// solveStep runs one step from capacitor voltage v0 on bank m, stopping at
// terminal voltage minV and holding charging steps at capacitor voltage
// maxV, and writes what happened to o. It never produces NaN or Inf for
// finite, physical inputs, and allocates nothing.
//
// A discharging power step through a converter with an input current
// limit (m.imax) stops where the current P/u would pass it, at the
// terminal voltage P/imax when that is above minV (stopInputCurrent).
func (m *bankModel) solveStep(st compiledStep, v0, minV, maxV float64, o *stepOutcome) {
	*o = stepOutcome{t: st.dur, tTop: -1}
	switch st.kind {
	case kindCurrent:
		m.currentStep(st.x, st.dur, v0, minV, maxV, o)
	case kindPower:
		if m.effCurve != nil {
			m.powerCurveStep(st.x, st.dur, v0, minV, maxV, o)
			break
		}
		if m.imax > 0 && st.x > m.imax*minV {
			m.powerStep(st.x, st.dur, v0, st.x/m.imax, maxV, o)
			if o.stop == stopVoltage {
				o.stop = stopInputCurrent
			}
			break
		}
		m.powerStep(st.x, st.dur, v0, minV, maxV, o)
	case kindResistance:
		m.resistorStep(st.x, st.dur, v0, minV, o)
	default:
		m.restStep(st.dur, v0, minV, o)
	}
}

// step is solveStep returning the outcome, for tests and the curve.
func (m *bankModel) step(st compiledStep, v0, minV, maxV float64) stepOutcome {
	var o stepOutcome
	m.solveStep(st, v0, minV, maxV, &o)
	return o
}

// currentStep: constant current I (A) at the terminals.
func (m *bankModel) currentStep(I, dur, v0, minV, maxV float64, o *stepOutcome) {
	c, r, g := m.c, m.r, m.g
	o.iStart, o.iEnd, o.iPeak = I, I, abs(I)
	o.uStart = v0 - I*r
	drain := I + g*v0 // C·(−dv/dt) at the start
	run, tHold := dur, 0.0
	if drain > 0 {
		// Falling (a discharge, or a charge weaker than the drains): may
		// reach the window bottom.
		vStop := minV + I*r
		if v0 <= vStop {
			run, o.stop = 0, stopVoltage
		} else if currentV(v0, drain, c, g, dur) < vStop {
			if ts := currentTime(v0, drain, c, g, vStop); ts >= 0 && ts <= dur {
				run, o.stop = ts, stopVoltage
			}
		}
	} else if drain < 0 {
		// Rising: may reach the top and be held there.
		if v0 >= maxV {
			run, tHold = 0, dur
		} else if ts := currentTime(v0, drain, c, g, maxV); ts >= 0 && ts < dur {
			run, tHold = ts, dur-ts
		}
	}
	v1 := v0
	if run > 0 {
		v1 = currentV(v0, drain, c, g, run)
	}
	if o.stop != stopNone && run > 0 {
		v1 = minV + I*r
	}
	o.t, o.v1, o.uEnd = run, v1, v1-I*r
	o.i2dt = I * I * run
	o.eLoad = I*m.integralV(I, v0, run) - I*I*r*run
	if tHold > 0 {
		o.t, o.v1, o.tTop = dur, maxV, run
		m.hold(o, maxV, tHold, -I*(maxV-I*r)*tHold)
	}
}

// currentV is the capacitor voltage t seconds into a constant-current
// step, v0 − (I + g·v0)·(t/C)·φ(−g·t/C).
func currentV(v0, drain, c, g, t float64) float64 {
	return v0 - drain*(t/c)*expm1OverX(-g*t/c)
}

// currentTime is the time a constant-current step takes to bring the
// capacitor to vs, C·(v0 − vs)/(I + g·v0)·L(y), y = g·(vs − v0)/(I + g·v0),
// L(y) = ln(1 + y)/y; −1 if it never gets there.
func currentTime(v0, drain, c, g, vs float64) float64 {
	if drain == 0 {
		return -1
	}
	y := g * (vs - v0) / drain
	if !(1+y > 0) {
		return -1
	}
	return c * (v0 - vs) / drain * log1pOverX(y)
}

// integralV returns ∫v dt over t seconds of constant current I from v0:
//
//	∫v dt = v0·t·φ(x) − I·t²·ψ(x)/C,  x = −g·t/C,  ψ(x) = (e^x − 1 − x)/x²
func (m *bankModel) integralV(I, v0, t float64) float64 {
	x := -m.g * t / m.c
	return v0*t*expm1OverX(x) - I*t*t*expm1MinusXOverX2(x)/m.c
}

// hold keeps the capacitor at vTop for t seconds: the source supplies only
// the leakage; offered is the energy it offered in that time, J.
func (m *bankModel) hold(o *stepOutcome, vTop, t, offered float64) {
	iLeak := m.g * vTop // into the bank, A
	uHold := vTop + iLeak*m.r
	absorbed := iLeak * uHold * t
	o.i2dt += iLeak * iLeak * t
	o.eLoad -= absorbed
	if rej := offered - absorbed; rej > 0 {
		o.reject += rej
	}
	if iLeak > o.iPeak {
		o.iPeak = iLeak
	}
	o.uEnd, o.iEnd = uHold, -iLeak
}

// resistorStep: a resistor rl (Ω) across the terminals.
func (m *bankModel) resistorStep(rl, dur, v0, minV float64, o *stepOutcome) {
	c, r, g := m.c, m.r, m.g
	rs := rl + r
	k := (1/rs + g) / c
	o.uStart = v0 * rl / rs
	o.iStart = v0 / rs
	o.iPeak = o.iStart
	vStop := minV * rs / rl
	t := dur
	v1 := v0 + v0*expm1(-k*dur)
	if v0 <= vStop {
		t, v1, o.stop = 0, v0, stopVoltage
	} else if v1 < vStop {
		t, v1, o.stop = math.Log(v0/vStop)/k, vStop, stopVoltage
	}
	o.t = t
	o.v1 = v1
	o.uEnd = v1 * rl / rs
	o.iEnd = v1 / rs
	// ∫v² dt = v0²·t·φ(−2k·t)
	iv2 := v0 * v0 * t * expm1OverX(-2*k*t)
	o.i2dt = iv2 / (rs * rs)
	o.eLoad = iv2 * rl / (rs * rs)
}

// restStep: no load; only the leakage drains the bank.
func (m *bankModel) restStep(dur, v0, minV float64, o *stepOutcome) {
	o.uStart = v0
	k := m.g / m.c
	if v0 <= minV {
		o.v1, o.uEnd, o.t, o.stop = v0, v0, 0, stopVoltage
		return
	}
	v1 := v0 + v0*expm1(-k*dur)
	if v1 < minV && k > 0 {
		o.t = math.Log(v0/minV) / k
		o.stop = stopVoltage
		v1 = minV
	}
	o.v1, o.uEnd = v1, v1
}

// powerStep: constant power p (W) at the bank terminals; p < 0 charges.
func (m *bankModel) powerStep(p, dur, v0, minV, maxV float64, o *stepOutcome) {
	if p == 0 {
		m.restStep(dur, v0, minV, o)
		return
	}
	c, r, g := m.c, m.r, m.g
	pr := p * r
	disc := v0*v0 - 4*pr
	if disc < 0 { // discharging only: below the maximum-power point already
		o.t, o.v1, o.stop = 0, v0, stopPower
		o.uStart, o.uEnd = v0/2, v0/2
		o.iStart = v0 / (2 * r)
		o.iEnd, o.iPeak = o.iStart, o.iStart
		return
	}
	if p < 0 && v0 >= maxV {
		// Charging a full bank: held at the top from the start.
		o.v1, o.tTop = maxV, 0
		m.hold(o, maxV, dur, -p*dur)
		o.uStart, o.iStart = o.uEnd, o.iEnd
		return
	}
	u0 := (v0 + math.Sqrt(disc)) / 2
	iu0 := 1 / u0
	o.uStart, o.iStart = u0, p*iu0
	// A = −PR/a and B = 1 + PR·g/a do not depend on P: with a = P·(1 + R·g),
	// A = −R/(1 + R·g) and B = 1 + R·g/(1 + R·g); they are the bank's.
	a := p * (1 + r*g)
	iden0 := 1 / (a + g*u0*u0)
	cp := cpSolution{c: c, invC: m.invC, pr: pr, g: g, u0: u0, iu0: iu0, iden0: iden0, gIden0: g * iden0,
		a: a, A: m.cpA, B: m.cpB}

	if p > 0 {
		uStop, why := minV, stopVoltage
		if minV*minV < pr {
			uStop, why = math.Sqrt(pr), stopPower
		}
		if u0 <= uStop {
			cp.finish(o, p, u0, 0)
			o.stop = why
			return
		}
		// The step cannot reach uStop if even the largest current it could
		// draw (p/uStop) and the starting leakage would not bring v down to
		// the stop in dur; otherwise look at the exact time of the stop.
		// The test multiplies by reciprocals; its 1e-9 margins, far above
		// their rounding, keep it on the side of looking.
		iStop := 1 / uStop
		vStop := uStop + pr*iStop
		if drop := (p*iStop + g*v0) * dur * m.invC; v0-drop*(1+1e-9) <= vStop*(1+1e-9) {
			if ts := cp.time(uStop); ts <= dur {
				cp.finish(o, p, uStop, ts)
				o.stop = why
				return
			}
		}
		cp.finish(o, p, cp.solve(dur, uStop), dur)
		return
	}

	// Charging.
	if a+g*u0*u0 > 0 {
		// The drains take more than the charge gives: v falls towards the
		// equilibrium a + g·u² = 0 (never reached), and may meet min_v first.
		uEq := math.Sqrt(-a / g)
		if minV > uEq {
			if u0 <= minV {
				cp.finish(o, p, u0, 0)
				o.stop = stopVoltage
				return
			}
			if ts := cp.time(minV); ts <= dur {
				cp.finish(o, p, minV, ts)
				o.stop = stopVoltage
				return
			}
			cp.finish(o, p, cp.solve(dur, minV), dur)
			return
		}
		cp.finishDur(o, p, cp.solve(dur, uEq), dur)
		return
	}
	uTop := (maxV + math.Sqrt(maxV*maxV-4*pr)) / 2
	// An upper bound on the rise reaches the top (the 1e-9 margin, far above
	// the rounding of the reciprocals, keeps it an upper bound).
	reach := v0-p*iu0*dur*m.invC*(1+1e-9) >= maxV
	if reach && a+g*uTop*uTop < 0 {
		if ts := cp.time(uTop); ts < dur {
			cp.finish(o, p, uTop, ts)
			o.t, o.v1, o.tTop = dur, maxV, ts
			m.hold(o, maxV, dur-ts, -p*(dur-ts))
			return
		}
	}
	// Rising towards the top, or towards the equilibrium below it.
	uFar := uTop
	if g > 0 && a+g*uTop*uTop >= 0 {
		uFar = math.Sqrt(-a / g)
	}
	cp.finishDur(o, p, cp.solve(dur, uFar), dur)
}

// clamp returns x limited to [lo, hi].
func clamp(x, lo, hi float64) float64 { return min(max(x, lo), hi) }

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// cpSolution holds the constants of one constant-power step's closed form.
type cpSolution struct {
	c, pr, g, u0 float64
	a, A, B      float64
	invC         float64 // 1/c
	iu0          float64 // 1/u0
	iden0        float64 // 1/(a + g·u0²)
	gIden0       float64 // g/(a + g·u0²)
}

// time returns t(u) for the step.
func (cp *cpSolution) time(u float64) float64 {
	lnRatio, yLyOverG := cp.logs(u)
	return cp.c * (cp.A*lnRatio + cp.B*0.5*yLyOverG)
}

// logs returns ln(u0/u) and ln((a + g·u0²)/(a + g·u²)) divided by g (for
// g = 0, its limit), by way of ratios to the step's start, which need no
// division:
//
//	ln(u0/u) = −ln(1 − (u0 − u)/u0)
//	ln((a + g·u0²)/(a + g·u²)) = −ln(1 − y) = y·L(−y),  y = g·(u0² − u²)/(a + g·u0²)
//
// with L(x) = ln(1 + x)/x, so that B/(2g)·ln(…) = B·(u0² − u²)/(2·(a + g·u0²))·L(−y).
func (cp *cpSolution) logs(u float64) (lnRatio, yLyOverG float64) {
	du := cp.u0 - u
	lnRatio = -log1p(-du * cp.iu0)
	dw := du * (cp.u0 + u) // u0² − u², without cancellation
	ly := log1pOverX(-dw * cp.gIden0)
	return lnRatio, dw * cp.iden0 * ly
}

// rate returns du/dt = −u·(a + g·u²)/(C·(u² − PR)) and its derivative in u,
// (a·w + a·PR − g·w² + 3·g·PR·w)/(C·(w − PR)²) with w = u².
func (cp *cpSolution) rate(u float64) (f, df float64) {
	w := u * u
	iq := 1 / (w - cp.pr)
	cq := cp.invC * iq
	f = -u * (cp.a + cp.g*w) * cq
	df = (cp.a*w + cp.a*cp.pr - cp.g*w*w + 3*cp.g*cp.pr*w) * cq * iq
	return f, df
}

// solve returns the terminal voltage after dur seconds, known to lie
// between uFar (where t(uFar) ≥ dur) and u0. It starts from the
// second-order Taylor step u0 + f·t + ½·f·f′·t² and refines by Newton's
// method on t(u) = dur, falling back to bisection of the bracket if an
// iterate leaves it.
//
// For the small steps of a logged profile the Taylor start's error is of
// third order in the step, so the first correction is at rounding level
// and the step costs one evaluation of t(u).
func (cp *cpSolution) solve(dur, uFar float64) float64 {
	u0 := cp.u0
	lo, hi := uFar, u0
	falling := uFar < u0
	if !falling {
		lo, hi = u0, uFar
	}
	f0, df0 := cp.rate(u0)
	u := u0 + f0*dur + 0.5*f0*df0*dur*dur
	if !(u > lo && u < hi) {
		u = u0 + f0*dur
		if !(u > lo && u < hi) {
			u = lo + (hi-lo)/2
		}
	}
	t := cp.time(u)
	for i := 0; ; i++ {
		// Keep the bracket: t grows from 0 at u0 towards uFar.
		if (t < dur) == falling {
			hi = u
		} else {
			lo = u
		}
		f, df := cp.rate(u)
		next := u + (dur-t)*f // Newton: u − (t(u) − dur)/t′(u), t′ = 1/f
		d := abs(next - u)
		// At rounding level already: done (a correction of a few ulp may
		// point just past u, the bracket's own end, and must not send the
		// iterate off to bisect).
		if d <= 2*eps*u {
			u = clamp(next, lo, hi)
			break
		}
		newton := next > lo && next < hi
		if !newton {
			next = lo + (hi-lo)/2
		}
		u = next
		// Stop when quadratic convergence puts the next correction below
		// rounding: the error after a Newton step is about k·d²,
		// k = |t″/(2t′)| = |f′/(2f)|. That says nothing of a bisection's
		// midpoint, whose error may be as large as its step: it is
		// evaluated again.
		if (newton && abs(df)*d*d <= eps*u*abs(f)) || hi-lo <= 2*eps*hi || i >= 99 {
			break
		}
		t = cp.time(u)
	}
	return u
}

// finish fills the outcome of a constant-power step that ran t seconds and
// ended at terminal voltage u1.
func (cp *cpSolution) finish(o *stepOutcome, p, u1, t float64) {
	iu1 := 1 / u1
	o.t = t
	o.uEnd = u1
	o.v1 = u1 + cp.pr*iu1
	o.iEnd = p * iu1
	o.iPeak = max(abs(o.iStart), abs(o.iEnd))
	o.eLoad = p * t
	o.i2dt = cp.integralI2(p, u1, iu1)
}

// finishDur fills the outcome of a charging step that ran its whole
// duration t: its ∫ i² dt is taken from the time (integralI2ByTime), which
// stays exact where the drains balance the charge.
//
// Elsewhere integralI2's form is kept: its relative error, about
// ε·|a|/|a + g·w0|, is below 1e-11 where |a + g·w0| > 1e-4·|a|, and it
// costs two logarithms fewer.
func (cp *cpSolution) finishDur(o *stepOutcome, p, u1, t float64) {
	cp.finish(o, p, u1, t)
	if abs(cp.a*cp.iden0) > 1e4 {
		o.i2dt = cp.integralI2ByTime(p, u1, 1/u1, t)
	}
}

// integralI2ByTime returns the ∫ i² dt of integralI2 for a step that ran t
// seconds, with Δw/(a + g·w0) taken from the time rather than from u1.
// Near the drains' balance (a + g·w ≈ 0, a charge no larger than the
// leakage and balancing take) both Δw and a + g·w0 are rounding noise and
// their quotient is anything; t is exact. From t(u),
//
//	Y = ln((a + g·w0)/(a + g·w1))/g = (2/B)·(t/C − A·ln(u0/u1))
//	Δw/(a + g·w0) = (1 − e^(−g·Y))/g = Y·(1 − e^(−z))/z,  z = g·Y
//
// and the rest is integralI2's form. At the balance itself it gives
// P²·t/u0², the constant current's.
func (cp *cpSolution) integralI2ByTime(p, u1, iu1, t float64) float64 {
	lnRatio := -log1p(-(cp.u0 - u1) * cp.iu0)
	y := 2 / cp.B * (t*cp.invC - cp.A*lnRatio)
	dwOverE0 := y * expm1OverX(-cp.g*y)
	dw := (cp.u0 - u1) * (cp.u0 + u1)
	iw1 := iu1 * iu1
	x := cp.a * dwOverE0 * iw1
	return cp.c * p * p / 2 * iw1 * (cp.B*dwOverE0*log1pOverX(x) + cp.A*dw*cp.iu0*cp.iu0)
}

// integralI2 returns ∫ i² dt from u0 to u1, i = P/u:
//
//	∫ i² dt = (C·P²/2)·[α·(ln(w0/w1) − ln((a + g·w0)/(a + g·w1))) + β·(1/w1 − 1/w0)]
//
// with w = u², β = −PR/a and α = B/a (partial fractions of
// (w − PR)/(w²·(a + g·w)); capbank's own derivation, checked against
// numerical quadrature in the tests). The two logarithms are taken as one,
//
//	α·(ln(w0/w1) − ln((a + g·w0)/(a + g·w1))) = α·ln(1 + x) = B·Δw/(w1·(a + g·w0))·L(x),
//	x = a·Δw/(w1·(a + g·w0)),  Δw = w0 − w1,  L(x) = ln(1 + x)/x,
//
// so that no 1/a appears: where the drain outweighs the load (g·w ≫ a,
// a picowatt on a kilovolt bank) the two logarithms agree to every digit
// and α = B/a is huge, and their difference times α was rounding noise,
// even negative (issue 14). iu1 is 1/u1.
//
//	∫ i² dt = (C·P²/2)·(Δw/w1)·(B·L(x)/(a + g·w0) + A/w0),  A = β
func (cp *cpSolution) integralI2(p, u1, iu1 float64) float64 {
	dw := (cp.u0 - u1) * (cp.u0 + u1)
	iw1 := iu1 * iu1
	x := cp.a * dw * cp.iden0 * iw1
	return cp.c * p * p / 2 * dw * iw1 * (cp.B*cp.iden0*log1pOverX(x) + cp.A*cp.iu0*cp.iu0)
}
