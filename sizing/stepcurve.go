package sizing

import (
	"math"
	"sort"
)

// A constant-power step through a converter whose efficiency η(u) follows
// its input voltage, the bank's terminal voltage u (efficiencyCurve: linear
// between the points, clamped outside them). The load takes P_L; the bank
// gives P_b(u) = P_L/η(u) at its terminals while discharging (P_L > 0) and
// takes |P_L|·η(u) while charging (P_L < 0, the source at the converter's
// far side), so P_b(u) = P_L·η(u) then. The bank current is i(u) = P_b(u)/u
// and, on one linear piece of the curve, η = α + β·u:
//
//	discharging  i = P_L/q(u),  q = u·η = α·u + β·u²,  di/du = −i·q′/q
//	charging     i = P_L·(α/u + β),                    di/du = −P_L·α/u²
//
// The step is no longer closed-form, but every state is a function of u:
// the capacitor voltage v(u) = u + R·i(u), and C·dv/dt = −(i + g·v) gives
//
//	dt/du = w(u) = −C·v′(u)/D(u),  v′ = 1 + R·di/du,  D = (1 + R·g)·i + g·u
//
// so the time, ∫i²dt and ∫u·i dt from u0 to u are one-dimensional integrals
// of w, i²·w and u·i·w over u (capbank's own derivation, the same change of
// variable as REFERENCES.md 3.10). Within a piece the integrands are smooth
// rational functions; the integral is split at the curve's points and each
// piece integrated by Gauss quadrature in two tiers:
//   - the 3-point Gauss–Legendre rule, checked against the 2-point one
//     (5 evaluations): taken when the two agree within curveQuickTol =
//     1e-13 relative for all three integrands, which is what the short
//     steps of a logged profile give;
//   - otherwise adaptive Gauss–Kronrod (the 7/15-point pair of QUADPACK,
//     REFERENCES.md 12.7): an interval is accepted when the 15- and 7-point
//     results of all three integrands agree within curveQuadTol = 1e-10
//     relative, else halved. That difference bounds the 7-point rule's
//     error; the 15-point result kept is far more accurate.
//
// Measured (stepcurve_test.go): with a flat curve the time agrees with
// powerStep's closed form within 1e-15 and ∫i²dt within 1e-13 (3e-12 where
// the closed form's end voltage is itself rounded), and with a sloped curve
// every figure agrees with a fine RK4 in t within 2e-10 (3e-9 at a
// maximum-power point, where RK4 meets the square-root corner).
//
// Events are found as roots in u, not by step size:
//   - the start u0 solves v(u) = v0: a quadratic on a piece when charging;
//     when discharging, v(u) is convex on a piece ((1/q)″ ∝ α² + 3αβu +
//     3β²u² > 0, no real root), so Newton's method from the piece's top
//     comes down to the root monotonically (regula falsi as a safeguard);
//   - the maximum-power point of a discharge is where v′(u) = 0 (u = √(PR)
//     for a flat curve, REFERENCES.md 3.8; v′ rises with u on a piece, so
//     one root, by regula falsi), or a corner of the curve where v′ changes
//     sign; below it the load cannot be served (stopPower);
//   - the input current limit: i(u) = imax, i.e. q(u) = P_L/imax, a
//     quadratic on a piece (q is concave or rising on each piece, so it
//     crosses within a piece only if its lower end is past the limit);
//   - the window bottom u = minV; the window top v = maxV (quadratic per
//     piece) and a charge's equilibrium D(u) = 0 (quadratic per piece).
//
// The end voltage of a step of given duration is the root of t(u) = dur,
// found by Newton's method with the analytic t′(u) = w(u), safeguarded by
// bisection of the bracket, from a second-order start (w and the analytic
// w′ at u0); each iterate adds the integral from the previous one. Once a correction is below 1e-8 of the distance travelled, it is
// added with the integrands at the iterate (a rectangle over it: second-order
// error below 1e-16 relative).
//
// With a flat curve (one point, or all at one η) every event and the start
// come out of the same closed forms as powerStep's with P = P_L/η.

// curveQuadTol is the relative agreement of the 7- and 15-point results at
// which an interval is accepted.
const curveQuadTol = 1e-10

// curveQuadDepth bounds the stack of intervals still to integrate; an
// interval on the last level is accepted as it is (that takes a range
// divided 2^40 times, never seen on a physical step).
const curveQuadDepth = 48

// Gauss–Kronrod 7/15 on [−1, 1] (QUADPACK qk15, REFERENCES.md 12.7): the
// Kronrod nodes from 1 towards 0 and their weights; gkX[1], gkX[3], gkX[5]
// and gkX[7] = 0 are the 7-point Gauss–Legendre nodes, with weights gkG.
var (
	gkX = [8]float64{0.991455371120812639206854697526329, 0.949107912342758524526189684047851,
		0.864864423359769072789712788640926, 0.741531185599394439863864773280788,
		0.586087235467691130294144845693013, 0.405845151377397166906606412076961,
		0.207784955007898467600689403773245, 0}
	gkW = [8]float64{0.022935322010529224963732008058970, 0.063092092629978553290700663189204,
		0.104790010322250183839876322541518, 0.140653259715525918745189590510238,
		0.169004726639267902826583426598550, 0.190350578064785409913256402421014,
		0.204432940075298892414161999234649, 0.209482141084727828012999174891714}
	gkG = [4]float64{0.129484966168869693270611432679082, 0.279705391489276667901467771423780,
		0.381830050505118944950369775488975, 0.417959183673469387755102040816327}
)

// The curve's pieces are numbered 0 (below its first point, flat) to
// len(v) (above its last, flat). seg returns piece k: its ends lo < hi (0 and +Inf outside the points)
// and η = al + be·u on it.
func (c *efficiencyCurve) seg(k int) (lo, hi, al, be float64) {
	n := len(c.v)
	switch {
	case k <= 0:
		return 0, c.v[0], c.eta[0], 0
	case k >= n:
		return c.v[n-1], math.Inf(1), c.eta[n-1], 0
	}
	lo, hi = c.v[k-1], c.v[k]
	be = (c.eta[k] - c.eta[k-1]) / (hi - lo)
	return lo, hi, c.eta[k-1] - be*lo, be
}

// segBelow returns the piece with lo < u ≤ hi: where a falling u is.
func (c *efficiencyCurve) segBelow(u float64) int { return sort.SearchFloat64s(c.v, u) }

// segAbove returns the piece with lo ≤ u < hi: where a rising u is.
func (c *efficiencyCurve) segAbove(u float64) int {
	k := sort.SearchFloat64s(c.v, u)
	if k < len(c.v) && c.v[k] == u {
		k++
	}
	return k
}

// curveSums are the three integrals of a curve step: time (s), ∫i²dt
// (A²·s) and ∫u·i dt (J).
type curveSums struct{ t, i2, e float64 }

func (a *curveSums) add(b curveSums) { a.t += b.t; a.i2 += b.i2; a.e += b.e }

// curveStep holds one step's constants.
type curveStep struct {
	c, r, g float64
	rg1     float64 // 1 + R·g
	p       float64 // the load's power P_L, W
	dis     bool    // discharging
	cv      *efficiencyCurve
}

// cur returns i(u) and di/du on a piece η = al + be·u.
func (s *curveStep) cur(u, al, be float64) (i, di float64) {
	if s.dis {
		eta := al + be*u
		iq := 1 / (u * eta)
		i = s.p * iq
		return i, -i * (eta + be*u) * iq
	}
	iu := 1 / u
	return s.p * (al*iu + be), -s.p * al * iu * iu
}

// vAt returns the capacitor voltage v(u) = u + R·i(u) on a piece.
func (s *curveStep) vAt(u, al, be float64) float64 {
	i, _ := s.cur(u, al, be)
	return u + s.r*i
}

// dv returns v′(u) on a piece.
func (s *curveStep) dv(u, al, be float64) float64 {
	_, di := s.cur(u, al, be)
	return 1 + s.r*di
}

// integrands returns w = dt/du, i²·w and u·i·w at u on a piece.
func (s *curveStep) integrands(u, al, be float64) curveSums {
	i, di := s.cur(u, al, be)
	w := -s.c * (1 + s.r*di) / (s.rg1*i + s.g*u)
	return curveSums{w, i * i * w, u * i * w}
}

// at returns the integrands at u, on the piece a path going towards
// `towards` is on.
func (s *curveStep) at(u, towards float64) curveSums {
	k := s.cv.segBelow(u)
	if towards > u {
		k = s.cv.segAbove(u)
	}
	_, _, al, be := s.cv.seg(k)
	return s.integrands(u, al, be)
}

// rate returns w = dt/du at u and its derivative w′, on the piece a path
// going towards `towards` is on:
//
//	w′ = −C·(v″·D − v′·D′)/D²,  v″ = R·i″,  D′ = (1 + R·g)·i′ + g,
//	i″ = i·(2q′² − q·q″)/q² (discharging, q″ = 2β),  2·P·α/u³ (charging)
func (s *curveStep) rate(u, towards float64) (w, dw float64) {
	k := s.cv.segBelow(u)
	if towards > u {
		k = s.cv.segAbove(u)
	}
	_, _, al, be := s.cv.seg(k)
	var i, di, d2i float64
	if s.dis {
		eta := al + be*u
		q := u * eta
		dq := eta + be*u
		iq := 1 / q
		i = s.p * iq
		di = -i * dq * iq
		d2i = i * (2*dq*dq - 2*be*q) * iq * iq
	} else {
		iu := 1 / u
		i = s.p * (al*iu + be)
		di = -s.p * al * iu * iu
		d2i = -2 * di * iu
	}
	dv, d2v := 1+s.r*di, s.r*d2i
	D, dD := s.rg1*i+s.g*u, s.rg1*di+s.g
	iD := 1 / D
	return -s.c * dv * iD, -s.c * (d2v*D - dv*dD) * iD * iD
}

// gk15 returns the 15-point Kronrod results over [a, b] (b < a allowed:
// the integral is then oriented) and the 7-point Gauss results.
func (s *curveStep) gk15(a, b, al, be float64) (k, g curveSums) {
	h := (b - a) / 2
	m := a + h
	f := s.integrands(m, al, be)
	k = curveSums{gkW[7] * f.t, gkW[7] * f.i2, gkW[7] * f.e}
	g = curveSums{gkG[3] * f.t, gkG[3] * f.i2, gkG[3] * f.e}
	for j := range 7 {
		dx := h * gkX[j]
		f1 := s.integrands(m-dx, al, be)
		f2 := s.integrands(m+dx, al, be)
		st, si, se := f1.t+f2.t, f1.i2+f2.i2, f1.e+f2.e
		k.t += gkW[j] * st
		k.i2 += gkW[j] * si
		k.e += gkW[j] * se
		if j%2 == 1 {
			wg := gkG[j/2]
			g.t += wg * st
			g.i2 += wg * si
			g.e += wg * se
		}
	}
	k = curveSums{k.t * h, k.i2 * h, k.e * h}
	g = curveSums{g.t * h, g.i2 * h, g.e * h}
	return k, g
}

// agrees reports whether x and y agree within curveQuadTol relative.
func agrees(x, y float64) bool { return abs(x-y) <= curveQuadTol*abs(x) }

// g3 returns the 3-point Gauss–Legendre results over [a, b] (exact for
// polynomials of degree 5) and the 2-point ones (degree 3).
func (s *curveStep) g3(a, b, al, be float64) (g3, g2 curveSums) {
	const x3, x2 = 0.7745966692414833770358531, 0.5773502691896257645091488 // √(3/5), 1/√3
	h := (b - a) / 2
	m := a + h
	f0 := s.integrands(m, al, be)
	fa, fb := s.integrands(m-h*x3, al, be), s.integrands(m+h*x3, al, be)
	fc, fd := s.integrands(m-h*x2, al, be), s.integrands(m+h*x2, al, be)
	g3 = curveSums{h * (8*f0.t + 5*(fa.t+fb.t)) / 9, h * (8*f0.i2 + 5*(fa.i2+fb.i2)) / 9, h * (8*f0.e + 5*(fa.e+fb.e)) / 9}
	g2 = curveSums{h * (fc.t + fd.t), h * (fc.i2 + fd.i2), h * (fc.e + fd.e)}
	return g3, g2
}

// curveQuickTol is the agreement of the 2- and 3-point rules at which the
// 3-point result is taken without the 7/15 pair: the 2-point rule's error
// is then below 1e-13 relative, and the 3-point rule's, two orders higher,
// far below rounding. It serves the short steps of a logged profile.
const curveQuickTol = 1e-13

// integratePiece integrates from a to b within one piece, adaptively.
func (s *curveStep) integratePiece(a, b, al, be float64) curveSums {
	if q, c := s.g3(a, b, al, be); abs(q.t-c.t) <= curveQuickTol*abs(q.t) &&
		abs(q.i2-c.i2) <= curveQuickTol*abs(q.i2) && abs(q.e-c.e) <= curveQuickTol*abs(q.e) {
		return q
	}
	type span struct{ a, b float64 }
	var stack [curveQuadDepth]span
	stack[0] = span{a, b}
	n := 1
	var sum curveSums
	for n > 0 {
		n--
		sp := stack[n]
		k, g := s.gk15(sp.a, sp.b, al, be)
		if (agrees(k.t, g.t) && agrees(k.i2, g.i2) && agrees(k.e, g.e)) ||
			n+2 > len(stack) || abs(sp.b-sp.a) <= 1e-13*max(abs(sp.a), abs(sp.b)) {
			sum.add(k)
			continue
		}
		mid := sp.a + (sp.b-sp.a)/2
		stack[n] = span{mid, sp.b}
		stack[n+1] = span{sp.a, mid}
		n += 2
	}
	return sum
}

// integral returns the three integrals from terminal voltage ua to ub,
// split at the curve's points.
func (s *curveStep) integral(ua, ub float64) curveSums {
	var sum curveSums
	if ua == ub {
		return sum
	}
	if ub < ua {
		for k, x := s.cv.segBelow(ua), ua; ; k-- {
			lo, _, al, be := s.cv.seg(k)
			y := max(lo, ub)
			sum.add(s.integratePiece(x, y, al, be))
			if y == ub {
				return sum
			}
			x = y
		}
	}
	for k, x := s.cv.segAbove(ua), ua; ; k++ {
		_, hi, al, be := s.cv.seg(k)
		y := min(hi, ub)
		sum.add(s.integratePiece(x, y, al, be))
		if y == ub {
			return sum
		}
		x = y
	}
}

// current returns i(u), on either piece at a point of the curve (the
// current is continuous there).
func (s *curveStep) current(u float64) float64 {
	_, _, al, be := s.cv.seg(s.cv.segBelow(u))
	i, _ := s.cur(u, al, be)
	return i
}

// peak returns the largest |i| between u0 and u1. On each piece |i| is
// largest at an end (discharging, q = u·η is concave or rising on a piece;
// charging, |i| = |P_L|·(α/u + β) is monotone), so it is the largest at
// u0, u1 and the curve's points between them.
func (s *curveStep) peak(u0, u1 float64) float64 {
	pk := max(abs(s.current(u0)), abs(s.current(u1)))
	lo, hi := min(u0, u1), max(u0, u1)
	cv := s.cv
	for k := sort.SearchFloat64s(cv.v, lo); k < len(cv.v) && cv.v[k] < hi; k++ {
		pk = max(pk, abs(s.current(cv.v[k])))
	}
	return pk
}

// largestRoot returns the largest root of a·x² + b·x + c in [lo, hi], or
// NaN when there is none; a = 0 is allowed.
func largestRoot(a, b, c, lo, hi float64) float64 {
	r1, r2 := math.NaN(), math.NaN()
	if a == 0 {
		if b != 0 {
			r1 = -c / b
		}
	} else if d := b*b - 4*a*c; d >= 0 {
		q := -(b + math.Copysign(math.Sqrt(d), b)) / 2
		if q != 0 {
			r1, r2 = q/a, c/q
		} else {
			r1 = 0
		}
	}
	best := math.NaN()
	for _, r := range [2]float64{r1, r2} {
		if r >= lo && r <= hi && !(r <= best) {
			best = r
		}
	}
	return best
}

// powerCurveStep: a constant load power pl (W) through a converter whose
// efficiency follows m.effCurve; pl < 0 charges. It fills o as powerStep
// does (with the bank power P_L/η(u), or |P_L|·η(u) into the bank), and
// o.eOut, the energy at the load's side of the converter. See the top of
// this file for the method; it allocates nothing.
func (m *bankModel) powerCurveStep(pl, dur, v0, minV, maxV float64, o *stepOutcome) {
	if pl == 0 {
		m.restStep(dur, v0, minV, o)
		return
	}
	s := curveStep{c: m.c, r: m.r, g: m.g, rg1: 1 + m.r*m.g, p: pl, dis: pl > 0, cv: m.effCurve}
	if s.dis {
		m.curveDischarge(&s, dur, v0, minV, o)
		return
	}
	m.curveCharge(&s, dur, v0, minV, maxV, o)
}

// finish fills the outcome of a curve step that ran t seconds from u0 to
// u1 with the integrals sum.
func (s *curveStep) finish(o *stepOutcome, u0, u1, t float64, sum curveSums) {
	i1 := s.current(u1)
	o.t = t
	o.uEnd = u1
	o.v1 = u1 + s.r*i1
	o.iEnd = i1
	o.iPeak = s.peak(u0, u1)
	o.i2dt = sum.i2
	o.eLoad = sum.e
	o.eOut = s.p * t
}

// start fills the outcome's start figures.
func (s *curveStep) start(o *stepOutcome, u0 float64) {
	o.uStart = u0
	o.iStart = s.current(u0)
}

// curveDischarge: P_L > 0.
func (m *bankModel) curveDischarge(s *curveStep, dur, v0, minV float64, o *stepOutcome) {
	cv, r, p := s.cv, s.r, s.p
	// The start: walk down the pieces from v0 (u0 < v0) along the branch
	// on which v rises with u, to the root of v(u) = v0, or to the branch's
	// lowest point (v′ = 0 inside a piece, or a corner where v′ turns
	// negative) when that is above v0: the bank is then past the maximum-
	// power point already.
	u0 := math.NaN()
	for k, b := cv.segBelow(v0), v0; ; k-- {
		lo, _, al, be := cv.seg(k)
		if be == 0 {
			// Flat: v = u + R·P/(η·u), the closed forms of powerStep with
			// P/η (REFERENCES.md 3.8).
			pr := p / al * r
			uc := math.Sqrt(pr)
			if uc >= b {
				break
			}
			if d := v0*v0 - 4*pr; d >= 0 {
				if x := (v0 + math.Sqrt(d)) / 2; x >= lo && x <= b {
					u0 = x
					break
				}
			}
			if uc > lo {
				break // the branch ends inside this piece, above v0
			}
		} else {
			if s.dv(b, al, be) <= 0 {
				break // a corner (or v0 itself) is the branch's lowest point
			}
			a, inside := lo, false
			if s.dv(a, al, be) < 0 {
				a = rootBracket(func(u float64) float64 { return s.dv(u, al, be) }, a, b, 0)
				inside = true
			}
			if s.vAt(a, al, be) <= v0 {
				u0 = s.startRoot(v0, a, b, al, be)
				break
			}
			if inside {
				break
			}
		}
		b = lo
	}
	if math.IsNaN(u0) {
		// Below the maximum-power point already: as powerStep.
		o.t, o.v1, o.stop = 0, v0, stopPower
		o.uStart, o.uEnd = v0/2, v0/2
		o.iStart = v0 / (2 * r)
		o.iEnd, o.iPeak = o.iStart, o.iStart
		return
	}
	s.start(o, u0)

	// The first stop going down from u0: the window bottom, the input
	// current limit (q(u) = P/imax) or the maximum-power point, whichever
	// is highest (ties go to the bottom, then to the current limit, as in
	// solveStep and powerStep); and the least q = u·η met on the way, for
	// the bound on the current below.
	uStop, why := minV, stopVoltage
	qLim := 0.0
	if m.imax > 0 {
		qLim = p / m.imax
	}
	qMin := u0 * s.etaAt(u0)
	switch {
	case u0 <= minV:
		// At or below the bottom from the start: named by the current
		// limit if the converter would be past it at the bottom already
		// (with a flat curve: P/η/imax above minV, as solveStep).
		if qLim > 0 && minV*s.etaAt(minV) < qLim {
			why = stopInputCurrent
		}
		s.finish(o, u0, u0, 0, curveSums{})
		o.stop = why
		return
	case qLim > 0 && qMin <= qLim:
		s.finish(o, u0, u0, 0, curveSums{})
		o.stop = stopInputCurrent // over the limit from the start
		return
	}
	for k, b := cv.segBelow(u0), u0; why == stopVoltage; k-- {
		lo, _, al, be := cv.seg(k)
		a := max(lo, minV)
		if a >= b {
			break
		}
		// Current limit: q is concave or rising on a piece, so it passes
		// qLim in [a, b] only if q(a) ≤ qLim; the crossing is the largest
		// root of β·u² + α·u − qLim there.
		qa := a * (al + be*a)
		qMin = min(qMin, qa)
		if qLim > 0 && qa <= qLim {
			x := largestRoot(be, al, -qLim, a, b)
			if math.IsNaN(x) { // a root at an end, lost to rounding
				x = rootBracket(func(u float64) float64 { return u*(al+be*u) - qLim }, a, b, 0)
			}
			if x > uStop {
				uStop, why = x, stopInputCurrent
			}
		}
		// Maximum-power point.
		x := 0.0
		switch {
		case be == 0:
			x = min(math.Sqrt(p/al*r), b)
		case s.dv(b, al, be) <= 0:
			x = b
		case s.dv(a, al, be) < 0:
			x = rootBracket(func(u float64) float64 { return s.dv(u, al, be) }, a, b, 0)
		}
		if x > uStop && x >= a {
			uStop, why = x, stopPower
		}
		if a == minV {
			break
		}
		b = lo
	}
	if u0 <= uStop {
		s.finish(o, u0, u0, 0, curveSums{})
		o.stop = why
		return
	}
	qMin = min(qMin, uStop*s.etaAt(uStop))

	// The step cannot reach uStop if even the largest current it could
	// draw (P/qMin) and the starting leakage would not bring v down to
	// v(uStop) in dur; otherwise look at the exact time of the stop (the
	// 1e-9 margins, as in powerStep, keep the test on the side of looking).
	vStop := uStop + r*s.current(uStop)
	if drop := (p/qMin + s.g*v0) * dur / s.c; v0-drop*(1+1e-9) <= vStop*(1+1e-9) {
		if sum := s.integral(u0, uStop); sum.t <= dur {
			s.finish(o, u0, uStop, sum.t, sum)
			o.stop = why
			return
		}
	}
	u1, sum := s.solve(u0, uStop, dur)
	s.finish(o, u0, u1, dur, sum)
}

// startRoot returns the root of v(u) = v0 in [a, b] on a sloped piece of a
// discharge, where v(a) ≤ v0 < v(b) and v is convex and rising: Newton's
// method from b comes down to the root without passing it (each tangent
// of a convex function lies below it); regula falsi (rootBracket) if
// rounding makes an iterate leave [a, b].
func (s *curveStep) startRoot(v0, a, b, al, be float64) float64 {
	u := b
	for range 50 {
		i, di := s.cur(u, al, be)
		f, df := u+s.r*i-v0, 1+s.r*di
		if f <= 0 {
			return u
		}
		next := u - f/df
		if !(next >= a && next < u) {
			break
		}
		if u-next <= 2*eps*u {
			return next
		}
		u = next
	}
	return rootBracket(func(u float64) float64 { return s.vAt(u, al, be) - v0 }, a, b, 0)
}

// etaAt returns η(u) from the pieces (as the integrands see it).
func (s *curveStep) etaAt(u float64) float64 {
	_, _, al, be := s.cv.seg(s.cv.segBelow(u))
	return al + be*u
}

// curveCharge: P_L < 0; the bank takes |P_L|·η(u).
func (m *bankModel) curveCharge(s *curveStep, dur, v0, minV, maxV float64, o *stepOutcome) {
	cv, r, g, p := s.cv, s.r, s.g, s.p
	uHold := maxV + g*maxV*r
	if v0 >= maxV {
		// Charging a full bank: held at the top from the start.
		o.v1, o.tTop = maxV, 0
		m.curveHold(s, o, maxV, uHold, dur, 0)
		o.uStart, o.iStart = o.uEnd, o.iEnd
		return
	}
	// u0 > v0 solves u² + (R·P·β − v0)·u + R·P·α = 0 (u·(v(u) − v0) on a
	// piece, negative at v0): the first larger root going up.
	u0 := s.upRoot(v0, v0)
	s.start(o, u0)
	_, _, al0, be0 := cv.seg(cv.segAbove(u0))
	i0, _ := s.cur(u0, al0, be0)
	d0 := s.rg1*i0 + g*u0
	switch {
	case d0 > 0:
		// The drains take more than the charge gives: u falls towards the
		// equilibrium D(u) = 0, and may meet minV first. u·D = g·u² +
		// (1 + R·g)·P·(α + β·u) on a piece: its largest root below u0.
		uEq := 0.0
		for k, b := cv.segBelow(u0), u0; k >= 0; k-- {
			lo, _, al, be := cv.seg(k)
			if x := largestRoot(g, s.rg1*p*be, s.rg1*p*al, lo, b); !math.IsNaN(x) {
				uEq = x
				break
			}
			b = lo
		}
		if minV > uEq {
			if u0 <= minV {
				s.finish(o, u0, u0, 0, curveSums{})
				o.stop = stopVoltage
				return
			}
			if sum := s.integral(u0, minV); sum.t <= dur {
				s.finish(o, u0, minV, sum.t, sum)
				o.stop = stopVoltage
				return
			}
			u1, sum := s.solve(u0, minV, dur)
			s.finish(o, u0, u1, dur, sum)
			return
		}
		u1, sum := s.solve(u0, uEq, dur)
		s.finish(o, u0, u1, dur, sum)
		return
	case d0 == 0:
		// At the equilibrium: nothing moves.
		s.finish(o, u0, u0, dur, curveSums{dur, i0 * i0 * dur, u0 * i0 * dur})
		return
	}
	// Rising: to the top (v = maxV) or to an equilibrium below it.
	uTop := s.upRoot(u0, maxV)
	uEq := math.Inf(1)
	if g > 0 {
		for k, a := cv.segAbove(u0), u0; a < uTop; k++ {
			_, hi, al, be := cv.seg(k)
			if x := largestRoot(g, s.rg1*p*be, s.rg1*p*al, a, hi); !math.IsNaN(x) {
				uEq = x
				break
			}
			a = hi
		}
	}
	// An upper bound on the rise (the largest current |P|·max η/u0, no
	// drain) reaches the top.
	reach := v0-p*cv.max()/u0*dur/s.c*(1+1e-9) >= maxV
	if reach && uEq > uTop {
		if sum := s.integral(u0, uTop); sum.t < dur {
			s.finish(o, u0, uTop, sum.t, sum)
			o.t, o.v1, o.tTop = dur, maxV, sum.t
			m.curveHold(s, o, maxV, uHold, dur-sum.t, sum.t)
			return
		}
	}
	u1, sum := s.solve(u0, min(uTop, uEq), dur)
	s.finish(o, u0, u1, dur, sum)
}

// upRoot returns the first terminal voltage at or above from where the
// capacitor voltage reaches vt while charging: on each piece u·(v(u) − vt)
// = u² + (R·P·β − vt)·u + R·P·α, negative below the root.
func (s *curveStep) upRoot(from, vt float64) float64 {
	for k, a := s.cv.segAbove(from), from; ; k++ {
		_, hi, al, be := s.cv.seg(k)
		if x := largestRoot(1, s.r*s.p*be-vt, s.r*s.p*al, a, hi); !math.IsNaN(x) {
			return x
		}
		if math.IsInf(hi, 1) {
			return a // not reached on a physical step (the last piece always has a root)
		}
		a = hi
	}
}

// curveHold holds a charging step at the top for t seconds after run
// seconds of charging: the bank takes only its leakage, the source offers
// |P_L|·η at the held terminal voltage, and the energy it gave for what
// the bank took is counted at the load's side.
func (m *bankModel) curveHold(s *curveStep, o *stepOutcome, vTop, uHold, t, run float64) {
	eta := s.etaAt(uHold)
	m.hold(o, vTop, t, -s.p*eta*t)
	absorbed := m.g * vTop * uHold * t
	o.eOut = s.p*run - absorbed/eta
}

// solve returns the terminal voltage after dur seconds, between u0 and
// far (t(far) ≥ dur, or the end of the path), with the integrals to it.
func (s *curveStep) solve(u0, far, dur float64) (float64, curveSums) {
	lo, hi := far, u0
	falling := far < u0
	if !falling {
		lo, hi = u0, far
	}
	// Second-order start from t(u) ≈ w0·Δ + ½·w0′·Δ² = dur: the error of
	// the first iterate is of third order in the step, so for the short
	// steps of a logged profile Newton's first correction is already
	// small enough to be added as it is.
	w0, dw0 := s.rate(u0, far)
	d1 := dur / w0
	u := u0 + d1 - 0.5*dw0/w0*d1*d1
	if !(u > lo && u < hi) {
		u = u0 + d1
		if !(u > lo && u < hi) {
			u = lo + (hi-lo)/2
		}
	}
	sum := s.integral(u0, u)
	for i := 0; ; i++ {
		if (sum.t < dur) == falling {
			hi = u
		} else {
			lo = u
		}
		f := s.at(u, far)
		d := (dur - sum.t) / f.t // Newton: t′(u) = w(u)
		next := u + d
		if abs(d) <= 1e-8*abs(u-u0) || abs(d) <= 4*eps*u || hi-lo <= 2*eps*hi || i >= 100 {
			// The rest by the integrands at u: second-order error
			// (d/|u − u0|)² relative, below 1e-16. It is added even when
			// it is below the spacing of floating-point numbers at u, so
			// that the integrals are those of the whole duration.
			sum.add(curveSums{f.t * d, f.i2 * d, f.e * d})
			if next > lo && next < hi {
				u = next
			}
			return u, sum
		}
		if !(next > lo && next < hi) {
			next = lo + (hi-lo)/2
		}
		sum.add(s.integral(u, next))
		u = next
	}
}
