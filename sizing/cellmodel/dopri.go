package cellmodel

import (
	"errors"
	"fmt"
	"math"
)

// The Dormand–Prince 5(4) pair (Dormand & Prince 1980, REFERENCES.md 12.9):
// seven stages, the last evaluated at the new point (first same as last),
// a fifth-order solution and an embedded fourth-order one whose difference
// estimates the local error. Dense output is Shampine's quartic
// continuous extension (1986), the same rational coefficients the common
// public implementations use:
//
//	y(t₀ + θh) = y₀ + h · Σⱼ kⱼ · Σₘ P[j][m]·θ^(m+1),   0 ≤ θ ≤ 1.
var (
	dpC = [7]float64{0, 1.0 / 5, 3.0 / 10, 4.0 / 5, 8.0 / 9, 1, 1}
	dpA = [7][6]float64{
		{},
		{1.0 / 5},
		{3.0 / 40, 9.0 / 40},
		{44.0 / 45, -56.0 / 15, 32.0 / 9},
		{19372.0 / 6561, -25360.0 / 2187, 64448.0 / 6561, -212.0 / 729},
		{9017.0 / 3168, -355.0 / 33, 46732.0 / 5247, 49.0 / 176, -5103.0 / 18656},
		{35.0 / 384, 0, 500.0 / 1113, 125.0 / 192, -2187.0 / 6784, 11.0 / 84},
	}
	// dpE is the fifth-order weights minus the fourth-order ones.
	dpE = [7]float64{71.0 / 57600, 0, -71.0 / 16695, 71.0 / 1920, -17253.0 / 339200, 22.0 / 525, -1.0 / 40}
	dpP = [7][4]float64{
		{1, -8048581381.0 / 2820520608, 8663915743.0 / 2820520608, -12715105075.0 / 11282082432},
		{0, 0, 0, 0},
		{0, 131558114200.0 / 32700410799, -68118460800.0 / 10900136933, 87487479700.0 / 32700410799},
		{0, -1754552775.0 / 470086768, 14199869525.0 / 1410260304, -10690763975.0 / 1880347072},
		{0, 127303824393.0 / 49829197408, -318862633887.0 / 49829197408, 701980252875.0 / 199316789632},
		{0, -282668133.0 / 205662961, 2019193451.0 / 616988883, -1453857185.0 / 822651844},
		{0, 40617522.0 / 29380423, -110615467.0 / 29380423, 69997945.0 / 29380423},
	}
)

// Default tolerances of the integrator: the local error of each step is
// kept below AbsTol + RelTol·|y| in each component (root mean square over
// the components). With these the figures of a step agree with the closed
// forms of the ideal RC to about 1e-11 relative (see the tests).
const (
	DefaultRelTol = 1e-11
	// DefaultAbsTol, in V (the states are branch voltages).
	DefaultAbsTol = 1e-12
	// DefaultMaxSteps bounds the accepted and rejected steps of one call.
	DefaultMaxSteps = 200000
)

// Tolerances sets the integrator. Zero fields take the defaults above.
type Tolerances struct {
	RelTol, AbsTol float64
	MaxSteps       int
}

func (o Tolerances) withDefaults() Tolerances {
	if o.RelTol <= 0 {
		o.RelTol = DefaultRelTol
	}
	if o.AbsTol <= 0 {
		o.AbsTol = DefaultAbsTol
	}
	if o.MaxSteps <= 0 {
		o.MaxSteps = DefaultMaxSteps
	}
	return o
}

// ODE is y' = f(t, y): Derivative writes f(t, y) into dy.
type ODE interface {
	Derivative(t float64, y, dy []float64)
}

// Event is a function of the state whose fall through zero stops the
// integration (a window bottom, a power collapse).
type Event func(t float64, y []float64) float64

// ErrTooManySteps is returned when an integration needs more than
// MaxSteps steps.
var ErrTooManySteps = errors.New("cellmodel: integration needs more steps than allowed")

// Step is one accepted step, with its dense output.
type Step struct {
	T0, T1 float64
	Y0, Y1 []float64
	k      [7][]float64
}

// At writes the dense-output state at t (T0 ≤ t ≤ T1) into out.
func (s *Step) At(t float64, out []float64) {
	h := s.T1 - s.T0
	if h == 0 {
		copy(out, s.Y1)
		return
	}
	th := (t - s.T0) / h
	var b [7]float64
	for j := range 7 {
		p := dpP[j]
		b[j] = th * (p[0] + th*(p[1]+th*(p[2]+th*p[3])))
	}
	for i := range out {
		sum := 0.0
		for j := range 7 {
			sum += b[j] * s.k[j][i]
		}
		out[i] = s.Y0[i] + h*sum
	}
}

// integrator carries the work arrays and the step size from one call to
// the next (the steps of a load profile follow each other).
type integrator struct {
	tol   Tolerances
	n     int     // components
	nErr  int     // the first nErr components are error-controlled; the rest are quadratures
	h     float64 // last step size, 0: none yet
	step  Step
	ytmp  []float64
	yerr  []float64
	yev   []float64
	steps int
}

func newIntegrator(n int, tol Tolerances) *integrator {
	return newIntegratorQuad(n, 0, tol)
}

// newIntegratorQuad integrates n components plus nq quadratures (integrals
// of functions of the state, carried along with the same stages and left
// out of the error control).
func newIntegratorQuad(n, nq int, tol Tolerances) *integrator {
	it := &integrator{tol: tol.withDefaults(), n: n + nq, nErr: n}
	n += nq
	for j := range 7 {
		it.step.k[j] = make([]float64, n)
	}
	it.step.Y0 = make([]float64, n)
	it.step.Y1 = make([]float64, n)
	it.ytmp = make([]float64, n)
	it.yerr = make([]float64, n)
	it.yev = make([]float64, n)
	return it
}

// result of one integration.
type result struct {
	t     float64 // where it stopped
	event int     // index of the event that stopped it, -1: none
}

// solve integrates f from t0 to t1 starting at y (overwritten with the
// state at the stop). It stops at t1 or at the first event that falls
// through zero, located on the dense output to within a few ulps of t.
// onStep, if not nil, sees every accepted step (before an event cuts it).
func (it *integrator) solve(f ODE, y []float64, t0, t1 float64, events []Event, onStep func(*Step, float64)) (result, error) {
	for i, g := range events {
		if g(t0, y) <= 0 {
			return result{t: t0, event: i}, nil
		}
	}
	if t1 <= t0 {
		return result{t: t0, event: -1}, nil
	}
	s := &it.step
	copy(s.Y0, y)
	f.Derivative(t0, s.Y0, s.k[0])
	h := it.h
	if h <= 0 {
		h = it.initialStep(f, t0, s.Y0, t1-t0)
	}
	t := t0
	gPrev := make([]float64, len(events))
	for i, g := range events {
		gPrev[i] = g(t0, y)
	}
	last := false
	for {
		if it.steps >= it.tol.MaxSteps {
			return result{t: t, event: -1}, fmt.Errorf("%w (%d) before t = %g s", ErrTooManySteps, it.tol.MaxSteps, t1)
		}
		if t+h >= t1 || t1-(t+h) < 1e-12*math.Abs(t1) {
			h = t1 - t
			last = true
		} else {
			last = false
		}
		it.steps++
		errNorm := it.try(f, t, h)
		if !(errNorm <= 1) {
			// Rejected (a NaN error norm is rejected too): shrink.
			fac := 0.9 * math.Pow(errNorm, -0.2)
			if !(fac >= 0.1) { // NaN or tiny
				fac = 0.1
			}
			h *= math.Min(fac, 0.9)
			if h < 1e-14*math.Max(math.Abs(t), 1) {
				return result{t: t, event: -1}, fmt.Errorf("cellmodel: step size fell below the resolution of t at t = %g s: the state cannot be integrated further", t)
			}
			continue
		}
		tNew := t + h
		if last {
			tNew = t1
		}
		s.T0, s.T1 = t, tNew
		// Event: the earliest that fell through zero in this step.
		hit, tHit := -1, tNew
		for i, g := range events {
			gNew := g(tNew, s.Y1)
			if gPrev[i] > 0 && gNew <= 0 {
				if tc := it.locate(g, gPrev[i], gNew); tc < tHit || hit < 0 {
					hit, tHit = i, tc
				}
			}
			gPrev[i] = gNew
		}
		if onStep != nil {
			onStep(s, tHit)
		}
		if hit >= 0 {
			s.At(tHit, y)
			it.h = h
			return result{t: tHit, event: hit}, nil
		}
		// Accept.
		copy(s.Y0, s.Y1)
		copy(s.k[0], s.k[6])
		t = tNew
		fac := 5.0
		if errNorm > 0 {
			fac = math.Min(5, 0.9*math.Pow(errNorm, -0.2))
		}
		if !last {
			h *= math.Max(fac, 0.2)
		}
		if last {
			copy(y, s.Y0)
			it.h = h
			return result{t: t1, event: -1}, nil
		}
	}
}

// try computes one step of size h from (t, Y0) with k[0] = f(t, Y0) into
// Y1 and k[1..6], and returns the scaled error norm.
func (it *integrator) try(f ODE, t, h float64) float64 {
	s := &it.step
	for st := 1; st < 7; st++ {
		for i := range it.n {
			sum := 0.0
			for j := range st {
				sum += dpA[st][j] * s.k[j][i]
			}
			it.ytmp[i] = s.Y0[i] + h*sum
		}
		if st == 6 {
			copy(s.Y1, it.ytmp)
		}
		f.Derivative(t+dpC[st]*h, it.ytmp, s.k[st])
	}
	sum := 0.0
	for i := range it.nErr {
		e := 0.0
		for j := range 7 {
			e += dpE[j] * s.k[j][i]
		}
		e *= h
		sc := it.tol.AbsTol + it.tol.RelTol*math.Max(math.Abs(s.Y0[i]), math.Abs(s.Y1[i]))
		sum += (e / sc) * (e / sc)
	}
	return math.Sqrt(sum / float64(it.nErr))
}

// locate finds where g falls through zero in the current step by the
// Illinois variant of regula falsi on the dense output (gA > 0 ≥ gB).
func (it *integrator) locate(g Event, gA, gB float64) float64 {
	s := &it.step
	a, b := s.T0, s.T1
	side := 0
	for range 200 {
		if b-a <= 4*ulp(b) {
			break
		}
		c := b - gB*(b-a)/(gB-gA)
		if !(c > a && c < b) {
			c = a + (b-a)/2
		}
		s.At(c, it.yev)
		gc := g(c, it.yev)
		switch {
		case gc > 0:
			a, gA = c, gc
			if side == -1 {
				gB /= 2
			}
			side = -1
		default:
			b, gB = c, gc
			if side == 1 {
				gA /= 2
			}
			side = 1
		}
		if gc == 0 {
			break
		}
	}
	return b
}

func ulp(x float64) float64 {
	x = math.Abs(x)
	return math.Nextafter(x, math.Inf(1)) - x
}

// initialStep is the starting step of Hairer, Nørsett and Wanner (Solving
// ODEs I, §II.4): a step whose Euler error is about the tolerance.
func (it *integrator) initialStep(f ODE, t0 float64, y0 []float64, span float64) float64 {
	s := &it.step
	d0, d1 := 0.0, 0.0
	for i := range it.nErr {
		sc := it.tol.AbsTol + it.tol.RelTol*math.Abs(y0[i])
		d0 += (y0[i] / sc) * (y0[i] / sc)
		d1 += (s.k[0][i] / sc) * (s.k[0][i] / sc)
	}
	d0, d1 = math.Sqrt(d0/float64(it.nErr)), math.Sqrt(d1/float64(it.nErr))
	h0 := 1e-6
	if d0 >= 1e-5 && d1 >= 1e-5 {
		h0 = 0.01 * d0 / d1
	}
	h0 = math.Min(h0, span)
	for i := range it.n {
		it.ytmp[i] = y0[i] + h0*s.k[0][i]
	}
	f.Derivative(t0+h0, it.ytmp, s.k[1])
	d2 := 0.0
	for i := range it.nErr {
		sc := it.tol.AbsTol + it.tol.RelTol*math.Abs(y0[i])
		e := (s.k[1][i] - s.k[0][i]) / sc
		d2 += e * e
	}
	d2 = math.Sqrt(d2/float64(it.nErr)) / h0
	var h1 float64
	if m := math.Max(d1, d2); m <= 1e-15 {
		h1 = math.Max(1e-6, h0*1e-3)
	} else {
		h1 = math.Pow(0.01/m, 1.0/5)
	}
	h := math.Min(100*h0, h1)
	if !(h > 0) || math.IsInf(h, 0) {
		h = span
	}
	return math.Min(h, span)
}
