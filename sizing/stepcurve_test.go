package sizing

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

// The tests of powerCurveStep: a constant load power through a converter
// whose efficiency follows the terminal voltage. The banks, curves and
// loads are invented test data.

// withCurve returns m with the efficiency curve pts and the converter's
// input current limit imax (A, 0: none).
func withCurve(m bankModel, imax float64, pts ...[2]float64) bankModel {
	c := make([][]float64, len(pts))
	for i, p := range pts {
		c[i] = []float64{p[0], p[1]}
	}
	m.effCurve, m.imax = newEfficiencyCurve(c), imax
	return m
}

// nearOutcome compares every figure of two step outcomes within rel.
func nearOutcome(t *testing.T, name string, got, want stepOutcome, rel float64) {
	t.Helper()
	if got.stop != want.stop {
		t.Errorf("%s: stop %v, want %v", name, got.stop, want.stop)
	}
	for _, f := range []struct {
		what      string
		got, want float64
	}{
		{"t", got.t, want.t}, {"v1", got.v1, want.v1},
		{"uStart", got.uStart, want.uStart}, {"uEnd", got.uEnd, want.uEnd},
		{"iStart", got.iStart, want.iStart}, {"iEnd", got.iEnd, want.iEnd}, {"iPeak", got.iPeak, want.iPeak},
		{"i2dt", got.i2dt, want.i2dt}, {"eLoad", got.eLoad, want.eLoad}, {"eOut", got.eOut, want.eOut},
		{"reject", got.reject, want.reject}, {"tTop", got.tTop, want.tTop},
	} {
		if f.got == f.want {
			continue
		}
		near(t, name+": "+f.what, f.got, f.want, rel)
	}
}

// TestPowerCurveFlatEqualsPowerStep: a flat efficiency curve (one point, or
// several at the same η) must give what the closed forms of powerStep give
// for the bank power P/η (discharging) or |P|·η (charging), every figure
// within 1e-9 relative, including the energy at the load's side (eOut),
// which for a flat η is the terminal energy times η (or divided by it
// while charging). Source: the closed forms of REFERENCES.md 3.8–3.10 as
// implemented by powerStep (step.go), themselves checked against the
// handbook values of REFERENCES.md 10.2 in step_test.go.
func TestPowerCurveFlatEqualsPowerStep(t *testing.T) {
	t.Parallel()
	const eta = 0.9
	dry := newBankModel(10, 0.05, 0)
	leaky := newBankModel(10, 0.05, 0.01)
	cases := []struct {
		name                  string
		m                     bankModel
		imax                  float64
		pl, dur, v0, minV, vt float64
	}{
		{"discharge, whole step", dry, 0, 50, 5, 24, 10, 24},
		{"discharge with leakage, whole step", leaky, 0, 50, 5, 24, 10, 24},
		{"discharge, tiny step", leaky, 0, 50, 0.01, 23.5, 10, 24},
		{"discharge to the window bottom", dry, 0, 50, 1000, 24, 10, 24},
		{"discharge with leakage to the window bottom", leaky, 0, 50, 1000, 24, 10, 24},
		{"discharge to the maximum-power point", newBankModel(50, 0.1, 0), 0, 18000, 100, 120, 30, 120},
		{"discharge with leakage to the maximum-power point", newBankModel(50, 0.1, 0.02), 0, 18000, 100, 120, 30, 120},
		{"past the maximum-power point at the start", newBankModel(50, 0.1, 0), 0, 18000, 10, 80, 30, 120},
		{"discharge to the input current limit", leaky, 5, 50, 1000, 24, 5, 24},
		{"over the input current limit at the start", dry, 5, 50, 10, 11, 5, 24},
		{"below the window bottom at the start", dry, 0, 50, 10, 9, 10, 24},
		{"below the window bottom at the start, past the current limit there", dry, 5, 50, 10, 9, 10, 24},
		{"reference bank 5 kW to 24 V", refBank, 0, 4500, 1000, 48, 24, 48},
		{"charge, part of the way", dry, 0, -100, 2, 20, 10, 24},
		{"charge with leakage, part of the way", leaky, 0, -100, 2, 20, 10, 24},
		{"charge to the top, held", dry, 0, -100, 60, 20, 10, 24},
		{"charge with leakage to the top, held", leaky, 0, -100, 60, 20, 10, 24},
		{"charge of a full bank", leaky, 0, -100, 3, 24, 10, 24},
		{"charge weaker than the drain", newBankModel(450, 0.003, 9.0/16000), 0, -0.1, 10, 40, 24, 48},
		{"charge weaker than the drain, to the bottom", newBankModel(450, 0.003, 9.0/16000), 0, -0.1, 1e5, 24.001, 24, 48},
	}
	curves := []struct {
		name string
		pts  [][2]float64
	}{
		{"one point", [][2]float64{{30, eta}}},
		{"four points at one efficiency", [][2]float64{{5, eta}, {12, eta}, {21, eta}, {60, eta}}},
	}
	for _, c := range cases {
		for _, cv := range curves {
			t.Run(c.name+"/"+cv.name, func(t *testing.T) {
				t.Parallel()
				x, toLoad := c.pl/eta, eta
				if c.pl < 0 {
					x, toLoad = c.pl*eta, 1/eta
				}
				flat := c.m
				flat.imax = c.imax
				want := flat.step(compiledStep{kind: kindPower, x: x, dur: c.dur, toLoad: toLoad}, c.v0, c.minV, c.vt)
				want.eOut = want.eLoad * toLoad
				curved := withCurve(c.m, c.imax, cv.pts...)
				got := curved.step(compiledStep{kind: kindPower, x: c.pl, dur: c.dur, toLoad: 1}, c.v0, c.minV, c.vt)
				nearOutcome(t, "flat curve", got, want, 1e-9)
				t.Logf("stop %v, t %.9g s, v1 %.9g V, i2dt %.9g, eLoad %.9g", got.stop, got.t, got.v1, got.i2dt, got.eLoad)
			})
		}
	}
}

// refCurveLoad is the tests' own model of a constant load power through a
// converter of efficiency η(u), for the reference integration in t: the
// bank current i(u) = P/(η(u)·u) discharging, P·η(u)/u charging, and the
// terminal voltage of a capacitor voltage v found by bisection of
// u + R·i(u) = v on the branch next to v.
type refCurveLoad struct {
	m  bankModel
	pl float64
	cv *efficiencyCurve
	// uFloor, when above 0, is the maximum-power point of a discharge: the
	// bisection then searches [uFloor, v], on the branch for certain.
	uFloor float64
}

func (l refCurveLoad) current(u float64) float64 {
	if l.pl > 0 {
		return l.pl / (l.cv.at(u) * u)
	}
	return l.pl * l.cv.at(u) / u
}

// uOf returns the terminal voltage at capacitor voltage v.
func (l refCurveLoad) uOf(v float64) float64 {
	f := func(u float64) float64 { return u + l.m.r*l.current(u) - v }
	lo, hi := v, v
	step := l.m.r*math.Abs(l.current(v)) + 1e-9*v
	if l.pl > 0 && l.uFloor > 0 {
		lo = l.uFloor
	} else if l.pl > 0 {
		for lo = v - step; f(lo) > 0; step *= 2 {
			lo = v - step
		}
	} else {
		for hi = v + step; f(hi) < 0; step *= 2 {
			hi = v + step
		}
	}
	for range 200 {
		mid := lo + (hi-lo)/2
		if mid <= lo || mid >= hi {
			break
		}
		if f(mid) > 0 {
			hi = mid
		} else {
			lo = mid
		}
	}
	return lo + (hi-lo)/2
}

// refState is the reference integration's state: the capacitor voltage
// and the running ∫i²dt and ∫u·i dt.
type refState struct{ v, i2, e float64 }

// rate is the state's derivative: C·dv/dt = −(i + g·v).
func (l refCurveLoad) rate(y refState) refState {
	u := l.uOf(y.v)
	i := l.current(u)
	return refState{-(i + l.m.g*y.v) / l.m.c, i * i, u * i}
}

// rk4 advances y by h with the classical fourth-order Runge–Kutta method
// (REFERENCES.md 12.5).
func (l refCurveLoad) rk4(y refState, h float64) refState {
	add := func(a refState, k refState, s float64) refState {
		return refState{a.v + s*k.v, a.i2 + s*k.i2, a.e + s*k.e}
	}
	k1 := l.rate(y)
	k2 := l.rate(add(y, k1, h/2))
	k3 := l.rate(add(y, k2, h/2))
	k4 := l.rate(add(y, k3, h))
	return refState{
		y.v + h/6*(k1.v+2*k2.v+2*k3.v+k4.v),
		y.i2 + h/6*(k1.i2+2*k2.i2+2*k3.i2+k4.i2),
		y.e + h/6*(k1.e+2*k2.e+2*k3.e+k4.e),
	}
}

// run integrates from v0 for dur seconds in n fixed steps, or until
// event(y) ≤ 0, whose time is then found by bisection of a last, partial
// step. It returns the state at the end and the time run.
func (l refCurveLoad) run(v0, dur float64, n int, event func(refState) float64) (refState, float64, bool) {
	h := dur / float64(n)
	y := refState{v: v0}
	for k := range n {
		next := l.rk4(y, h)
		if event != nil && event(next) <= 0 {
			lo, hi := 0.0, h
			for range 100 {
				mid := lo + (hi-lo)/2
				if mid <= lo || mid >= hi {
					break
				}
				if event(l.rk4(y, mid)) <= 0 {
					hi = mid
				} else {
					lo = mid
				}
			}
			return l.rk4(y, hi), float64(k)*h + hi, true
		}
		y = next
	}
	return y, dur, false
}

// TestPowerCurveAgainstRK4: with a sloped curve, the step's end voltage,
// time, ∫i²dt and ∫u·i dt against a reference integration in t written
// here: the classical RK4 (REFERENCES.md 12.5) on C·dv/dt = −(i + g·v) with
// 20 000 fixed steps, the terminal voltage found by bisection at every
// stage, the stops placed by bisection of a last, partial step. Agreement
// required: 1e-6 relative (RK4's own error at this step is far smaller:
// halving the steps moved none of its figures by more than 1e-9).
func TestPowerCurveAgainstRK4(t *testing.T) {
	t.Parallel()
	// A curve that falls towards low input voltage, with a corner at 20 V
	// and clamped below 10 V and above 40 V.
	pts := [][2]float64{{10, 0.80}, {20, 0.90}, {40, 0.95}}
	dry := newBankModel(10, 0.05, 0)
	leaky := newBankModel(10, 0.05, 0.01)
	cases := []struct {
		name                  string
		m                     bankModel
		imax                  float64
		pl, dur, v0, minV, vt float64
		stop                  stopReason
	}{
		{"discharge across the 20 V corner", dry, 0, 50, 20, 24, 5, 24, stopNone},
		{"discharge with leakage across the 20 V corner", leaky, 0, 50, 20, 24, 5, 24, stopNone},
		{"discharge to the window bottom below the 10 V point", leaky, 0, 50, 100, 24, 8, 24, stopVoltage},
		{"discharge to the input current limit", dry, 6, 50, 100, 24, 5, 24, stopInputCurrent},
		{"discharge to the maximum-power point on a sloped piece", newBankModel(10, 0.5, 0.01), 0, 200, 1.5, 24, 5, 24, stopPower},
		{"charge across both corners", leaky, 0, -100, 10, 8, 5, 60, stopNone},
		{"charge to the top", dry, 0, -100, 100, 8, 5, 30, stopNone},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			m := withCurve(c.m, c.imax, pts...)
			got := m.step(compiledStep{kind: kindPower, x: c.pl, dur: c.dur, toLoad: 1}, c.v0, c.minV, c.vt)
			if got.stop != c.stop {
				t.Fatalf("stop %v, want %v", got.stop, c.stop)
			}
			ref := refCurveLoad{m: c.m, pl: c.pl, cv: m.effCurve}
			var event func(refState) float64
			switch c.stop {
			case stopVoltage:
				event = func(y refState) float64 { return ref.uOf(y.v) - c.minV }
			case stopInputCurrent:
				event = func(y refState) float64 { return c.imax - ref.current(ref.uOf(y.v)) }
			case stopPower:
				// The maximum-power point: the lowest capacitor voltage
				// v(u) = u + R·i(u) on the branch, by golden-section search
				// (v is unimodal on [minV, v0] here); the reference runs to
				// 1e-10 above it, which leaves out less than 1e-8 of the time.
				vOf := func(u float64) float64 { return u + c.m.r*ref.current(u) }
				a, b := c.minV, c.v0
				for range 200 {
					x1, x2 := b-(b-a)/math.Phi, a+(b-a)/math.Phi
					if vOf(x1) < vOf(x2) {
						b = x2
					} else {
						a = x1
					}
				}
				ref.uFloor = a + (b-a)/2
				vMin := vOf(ref.uFloor)
				near(t, "capacitor voltage at the maximum-power point", got.v1, vMin, 1e-9)
				near(t, "terminal voltage at the maximum-power point", got.uEnd, ref.uFloor, 1e-6)
				event = func(y refState) float64 { return y.v - vMin*(1+1e-10) }
			}
			if c.pl < 0 {
				event = func(y refState) float64 { return c.vt - y.v }
			}
			if got.stop != stopPower || got.t > 0 {
				near(t, "start terminal voltage (bisection of u + R·i(u) = v0)", got.uStart, ref.uOf(c.v0), 1e-12)
			}
			y, tRef, hit := ref.run(c.v0, c.dur, 20000, event)
			tRun := got.t
			if got.tTop >= 0 {
				tRun = got.tTop
				if !hit {
					t.Fatal("the reference did not reach the top")
				}
				near(t, "time to the top", tRun, tRef, 1e-6)
				near(t, "∫i²dt to the top", got.i2dt-m.g*c.vt*m.g*c.vt*(c.dur-tRun), y.i2, 1e-6)
				// Held at the top of a bank without leakage, the bank takes
				// nothing: everything the source offers, |P|·η at the held
				// terminal voltage (the top), is rejected.
				if m.g == 0 {
					near(t, "rejected while held", got.reject, -c.pl*m.effCurve.at(c.vt)*(c.dur-tRun), 1e-12)
				}
				return
			}
			near(t, "time", tRun, tRef, 1e-6)
			near(t, "end capacitor voltage", got.v1, y.v, 1e-6)
			if c.stop != stopPower {
				near(t, "end terminal voltage", got.uEnd, ref.uOf(y.v), 1e-6)
			}
			near(t, "∫i²dt", got.i2dt, y.i2, 1e-6)
			near(t, "∫u·i dt", got.eLoad, y.e, 1e-6)
			t.Logf("t %.12g / %.12g s, v1 %.12g / %.12g V, i2dt %.12g / %.12g, eLoad %.12g / %.12g (capbank / RK4)",
				tRun, tRef, got.v1, y.v, got.i2dt, y.i2, got.eLoad, y.e)
		})
	}
}

// TestGaussKronrodTable checks the 7/15-point table of powerCurveStep's
// quadrature (QUADPACK qk15, REFERENCES.md 12.7): the embedded 7 nodes and
// weights are gonum's Gauss–Legendre rule (REFERENCES.md 12.2) within
// 1e-15, and the 15-point rule integrates x^k over [−1, 1] exactly, 2/(k+1)
// for even k and 0 for odd k by symmetry, for every k ≤ 22 (3·7 + 1, the
// degree of a Kronrod extension of a 7-point rule) within 1e-15.
func TestGaussKronrodTable(t *testing.T) {
	t.Parallel()
	x, w := make([]float64, 7), make([]float64, 7)
	quad.Legendre{}.FixedLocations(x, w, -1, 1)
	// The table's Gauss nodes fall from 1 to 0: match each to gonum's node
	// nearest it.
	for j := range 4 {
		best := 0
		for k := range x {
			if math.Abs(x[k]-gkX[2*j+1]) < math.Abs(x[best]-gkX[2*j+1]) {
				best = k
			}
		}
		near(t, fmt.Sprintf("Gauss node %d", j), gkX[2*j+1]+1, x[best]+1, 1e-15)
		near(t, fmt.Sprintf("Gauss weight %d", j), gkG[j], w[best], 1e-15)
	}
	for k := 0; k <= 22; k += 2 {
		sum := gkW[7] * math.Pow(0, float64(k))
		for j := range 7 {
			sum += 2 * gkW[j] * math.Pow(gkX[j], float64(k))
		}
		near(t, fmt.Sprintf("Kronrod ∫x^%d", k), sum, 2/float64(k+1), 1e-15)
	}
	// The degree is no higher: x^24 is not integrated exactly.
	sum := 0.0
	for j := range 7 {
		sum += 2 * gkW[j] * math.Pow(gkX[j], 24)
	}
	if math.Abs(sum-2.0/25) < 1e-12 {
		t.Errorf("Kronrod ∫x^24 = %.15g is exact; the table is not the 15-point one", sum)
	}
}

// curveBenchCurve is an invented converter curve for the benchmarks and
// the allocation test: 85 % at 30 V rising to 95 % at 48 V.
var curveBenchCurve = [][2]float64{{30, 0.85}, {40, 0.92}, {48, 0.95}}

// TestPowerCurveStepAllocatesNothing: the step runs inside the sizing's
// inner loop, which allocates nothing (TestInnerLoopAllocatesNothing).
func TestPowerCurveStepAllocatesNothing(t *testing.T) {
	// Not parallel: AllocsPerRun counts every allocation in the process.
	m := withCurve(newBankModel(40, 0.02, 1e-5), 0, curveBenchCurve...)
	limited := withCurve(newBankModel(40, 0.02, 1e-5), 3, curveBenchCurve...)
	var o stepOutcome
	for _, c := range []struct {
		m  bankModel
		st compiledStep
		v0 float64
	}{
		{m, compiledStep{kind: kindPower, x: 60, dur: 1}, 40},
		{m, compiledStep{kind: kindPower, x: 60, dur: 1e4}, 40},        // to the maximum-power point, 1.2 V
		{limited, compiledStep{kind: kindPower, x: 100, dur: 1e4}, 40}, // to the current limit
		// To the maximum-power point inside the curve's 30–40 V piece.
		{m, compiledStep{kind: kindPower, x: 55000, dur: 1e4}, 80},
		{m, compiledStep{kind: kindPower, x: -15, dur: 1}, 40},
		{m, compiledStep{kind: kindPower, x: -15, dur: 1e5}, 40}, // to the top, held
	} {
		m := c.m
		m.solveStep(c.st, c.v0, 1, 48, &o)
		t.Logf("%g W for %g s from %g V: stop %q after %.6g s at terminal %.6g V", c.st.x, c.st.dur, c.v0, o.stop, o.t, o.uEnd)
		if n := testing.AllocsPerRun(100, func() { m.solveStep(c.st, c.v0, 1, 48, &o) }); n != 0 {
			t.Errorf("a curve step of %g W for %g s allocates %v times", c.st.x, c.st.dur, n)
		}
	}
}

// BenchmarkPowerCurveStep times one constant-power step through the
// invented converter curve on the leaky bank of BenchmarkStepKinds, from
// the states a long logged profile visits (1 s steps), beside the closed
// form of the same step at a flat efficiency (powerStep), and a step run
// down to the window bottom across the curve's points.
func BenchmarkPowerCurveStep(b *testing.B) {
	bank := newBankModel(40, 0.02, 1e-5)
	curved := withCurve(bank, 0, curveBenchCurve...)
	for _, k := range []struct {
		name string
		m    bankModel
		st   compiledStep
	}{
		{"closed_form_flat", bank, compiledStep{kind: kindPower, x: 60 / 0.92, dur: 1}},
		{"curve", curved, compiledStep{kind: kindPower, x: 60, dur: 1}},
		{"curve_charging", curved, compiledStep{kind: kindPower, x: -15, dur: 1}},
		{"curve_to_bottom", curved, compiledStep{kind: kindPower, x: 60, dur: 1e4}},
	} {
		b.Run(k.name, func(b *testing.B) {
			b.ReportAllocs()
			v := 40.0
			var o stepOutcome
			for b.Loop() {
				k.m.solveStep(k.st, v, 24, 48, &o)
				v = o.v1
				if v < 30 || v > 47 || o.stop != stopNone {
					v = 40
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N), "ns/step")
		})
	}
	// The invented logged day (86 400 one-second steps, bench_test.go) on
	// the bank of BenchmarkVersusRK4, once at a flat 0.92 (closed forms)
	// and once through the curve.
	day := dayProfile()
	bankDay := newBankModel(200, 0.003, 2e-4)
	for _, k := range []struct {
		name  string
		m     bankModel
		steps []compiledStep
	}{
		{"day_flat_0.92", bankDay, compileSteps(day, 0.92, false)},
		{"day_curve", withCurve(bankDay, 0, curveBenchCurve...), compileSteps(day, 1, true)},
	} {
		b.Run(k.name, func(b *testing.B) {
			b.ReportAllocs()
			var s passStats
			for b.Loop() {
				s = k.m.run(k.steps, 1, 48, 24, 48)
			}
			if s.stop != stopNone {
				b.Fatalf("the bench bank must carry the day (stopped: %v)", s.stop)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(k.steps)), "ns/step")
		})
	}
}

// TestPowerCurveStepStaysPhysical runs seeded random steps through random
// curves (steep pieces, efficiencies from 0.01 to 1, corners on either
// side of the window) and checks what any step must satisfy, whatever
// its figures (circuit physics; REFERENCES.md 3.11 for the energy): every
// figure finite; 0 ≤ t ≤ dur; a discharge never raises the capacitor
// voltage and ends above the window bottom (its terminal at or above
// min_v) unless it stopped at once; ∫i²dt ≥ 0; the energy balance
// ½C(v0² − v1²) = ∫u·i dt + R·∫i²dt + leakage loss, with a leakage loss
// between 0 and g·max(v0, v1)²·t; and, for a step that ran, the load
// energy P_L·t.
func TestPowerCurveStepStaysPhysical(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(19, 3))
	for n := range 5000 {
		npts := 1 + rng.IntN(5)
		pts := make([][2]float64, npts)
		v := 2 + 20*rng.Float64()
		for k := range pts {
			pts[k] = [2]float64{v, 0.01 + 0.99*rng.Float64()}
			v += 0.01 + 15*rng.Float64()
		}
		c, r := 1+100*rng.Float64(), 0.001+0.2*rng.Float64()
		g := 0.0
		if rng.IntN(2) == 0 {
			g = 0.05 * rng.Float64()
		}
		imax := 0.0
		if rng.IntN(3) == 0 {
			imax = 1 + 50*rng.Float64()
		}
		m := withCurve(newBankModel(c, r, g), imax, pts...)
		maxV := 10 + 50*rng.Float64()
		minV := maxV * (0.1 + 0.6*rng.Float64())
		v0 := minV + (maxV-minV)*rng.Float64()
		pl := 500 * rng.Float64() * rng.Float64()
		if rng.IntN(3) == 0 {
			pl = -pl
		}
		dur := math.Pow(10, -2+5*rng.Float64())
		o := m.step(compiledStep{kind: kindPower, x: pl, dur: dur, toLoad: 1}, v0, minV, maxV)
		name := fmt.Sprintf("case %d (P %g W, %g s, v0 %g V, window %g–%g V, C %g F, R %g Ω, g %g S, imax %g A, curve %v)",
			n, pl, dur, v0, minV, maxV, c, r, g, imax, pts)
		for _, f := range []float64{o.t, o.v1, o.uStart, o.uEnd, o.iStart, o.iEnd, o.iPeak, o.i2dt, o.eLoad, o.eOut, o.reject, o.tTop} {
			if !Finite(f) {
				t.Fatalf("%s: a figure is not finite: %+v", name, o)
			}
		}
		if o.t < 0 || o.t > dur*(1+1e-12) || o.i2dt < 0 {
			t.Fatalf("%s: t %g, ∫i²dt %g: %+v", name, o.t, o.i2dt, o)
		}
		if o.stop == stopPower && o.t == 0 {
			continue // past the maximum-power point from the start
		}
		if pl > 0 {
			if o.v1 > v0*(1+1e-12) {
				t.Fatalf("%s: a discharge raised v to %g: %+v", name, o.v1, o)
			}
			if o.t > 0 && o.uEnd < minV*(1-1e-9) {
				t.Fatalf("%s: terminal %g below the window bottom: %+v", name, o.uEnd, o)
			}
		}
		if o.tTop < 0 && o.t > 0 {
			near(t, name+": load energy", o.eOut, pl*o.t, 1e-12)
			drawn := 0.5 * c * (v0 - o.v1) * (v0 + o.v1)
			leak := drawn - o.eLoad - r*o.i2dt
			// The tolerance: 1e-8 of the energies, and the rounding of
			// v0² − v1² (a few ulp of v², times C).
			tol := 1e-8*max(abs(drawn), abs(o.eLoad), r*o.i2dt) + 1e-14*c*max(v0, o.v1)*max(v0, o.v1)
			if leak < -tol || leak > g*max(v0, o.v1)*max(v0, o.v1)*o.t+tol {
				t.Fatalf("%s: leakage loss %g outside [0, %g] (drawn %g, terminal %g, series %g)",
					name, leak, g*max(v0, o.v1)*max(v0, o.v1)*o.t, drawn, o.eLoad, r*o.i2dt)
			}
		}
	}
}

// TestPowerCurveChargeAtEquilibrium: a charge that exactly balances the
// leakage at the start (R = 0, |P|·η = g·v²: 2 W × 0.5 = 0.01 S × (10 V)²)
// leaves the bank where it is, C·dv/dt = −(i + g·v) = 0 (circuit physics,
// REFERENCES.md 3.11): v1 = v0, ∫i²dt = i²·t with i = −|P|·η/v = −0.1 A,
// ∫u·i dt = −1 W × 3 s and the source gives 2 W × 3 s. The integrand
// dt/du is infinite there, so the step must not integrate it.
func TestPowerCurveChargeAtEquilibrium(t *testing.T) {
	t.Parallel()
	m := withCurve(newBankModel(5, 0, 0.01), 0, [2]float64{5, 0.5})
	o := m.step(compiledStep{kind: kindPower, x: -2, dur: 3, toLoad: 1}, 10, 1, 20)
	near(t, "v1", o.v1, 10, 1e-15)
	near(t, "t", o.t, 3, 1e-15)
	near(t, "∫i²dt", o.i2dt, 0.1*0.1*3, 1e-15)
	near(t, "∫u·i dt", o.eLoad, -3, 1e-15)
	near(t, "energy from the source", o.eOut, -6, 1e-15)
}

// TestPowerCurveRateDerivative: the analytic dw/du that starts the search
// for a step's end voltage against a central difference of w itself
// (h = 1e-5 V; the difference's own error, of order h², is far below the
// 1e-6 relative asked), discharging and charging, on a sloped piece and a
// flat one. A wrong derivative would only cost Newton iterations, so it
// is checked here rather than through the results.
func TestPowerCurveRateDerivative(t *testing.T) {
	t.Parallel()
	m := withCurve(newBankModel(10, 0.05, 0.01), 0, [2]float64{10, 0.80}, [2]float64{20, 0.90}, [2]float64{40, 0.95})
	for _, pl := range []float64{50, -100} {
		s := curveStep{c: m.c, r: m.r, g: m.g, rg1: 1 + m.r*m.g, p: pl, dis: pl > 0, cv: m.effCurve}
		for _, u := range []float64{8, 15, 25, 45} {
			_, dw := s.rate(u, u-1)
			const h = 1e-5
			wp, _ := s.rate(u+h, u-1)
			wm, _ := s.rate(u-h, u-1)
			near(t, fmt.Sprintf("dw/du at %g V, %g W", u, pl), dw, (wp-wm)/(2*h), 1e-6)
		}
	}
}
