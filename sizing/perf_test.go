package sizing

import (
	"fmt"
	"testing"
)

// The tests in this file guard the speed work on the inner loop: the fast
// paths must stay exact to rounding, allocate nothing, and the parallel
// search must not change a single figure. The benchmarks that measure the
// speed are in bench_test.go.

// TestConstantPowerStepGrid runs one constant-power step from a grid of
// states on invented banks (a leaky bank as the logged day gives, the
// common bank of REFERENCES.md 10.1–10.5, a high-ESR bank, a small logger
// bank, and one whose leakage outweighs the load), from a tenth of a
// millisecond's worth of drop to near the maximum-power point and for
// charging, and checks every step that runs its whole duration against
// gonum's Gauss–Legendre quadrature of dt = C·dv/(i(v) + g·v), with i(v)
// of REFERENCES.md 3.8 (PHYSICS-NOTES.md, drains).
//
// The end voltage must be right to 1e-12 of the voltage: a duration error
// δt is an end-voltage error δt·|dv/dt|. An earlier Newton iteration
// stopped after falling back to bisection when its answer sat within
// rounding of the bracket's end, and was off by up to 7e-7 V (1.5e-8 of
// the voltage) in about one case in ten of this grid.
func TestConstantPowerStepGrid(t *testing.T) {
	t.Parallel()
	banks := []struct {
		name string
		m    bankModel
	}{
		{"day bank", newBankModel(206.03363405693977, 0.006989150128769945, 2.869911584124163e-4)},
		{"reference bank", refBank},
		{"high ESR", newBankModel(20, 0.5, 1e-3)},
		{"logger", newBankModel(2.5, 0.09, 1e-5)},
		{"leak outweighs load", newBankModel(10, 0.05, 0.5)},
	}
	// Power as a fraction of the matched-load power v0²/(4R) (REFERENCES.md
	// 3.12); negative charges.
	fracs := []float64{1e-4, 1e-3, 0.01, 0.05, 0.2, 0.5, 0.9, 0.99, -1e-4, -1e-3, -0.01, -0.2}
	durs := []float64{1e-3, 0.1, 1, 10}
	checked := 0
	for _, b := range banks {
		m := b.m
		for _, frac := range fracs {
			for _, dur := range durs {
				for k := 0; k <= 40; k++ {
					v0 := 30 + 17.9*float64(k)/40
					p := frac * v0 * v0 / (4 * m.r)
					o := m.stepOf(kindPower, p, dur, v0, 1, 48)
					if o.stop != stopNone || o.tTop >= 0 {
						continue // stopped or held at the top: other tests
					}
					checked++
					name := fmt.Sprintf("%s, P = %.6g W, %g s from %g V", b.name, p, dur, v0)
					dtdv := func(v float64) float64 { return m.c / (iCP(p, m.r, v) + m.g*v) }
					lo, hi, sign := o.v1, v0, 1.0
					if lo > hi {
						lo, hi, sign = hi, lo, -1
					}
					dt := sign * gl(dtdv, lo, hi, 64)
					if ev := (dt - dur) / dtdv(o.v1); !(abs(ev) <= 1e-12*v0) {
						t.Errorf("%s: end voltage %.15g is off by %.3g V by quadrature (tolerance %.3g V)", name, o.v1, ev, 1e-12*v0)
						continue
					}
					// ∫i²dt by the same quadrature, to 1e-9 plus what the
					// end voltage's own tolerance moves it.
					i2 := sign * gl(func(v float64) float64 { i := iCP(p, m.r, v); return i * i * dtdv(v) }, lo, hi, 64)
					i1 := iCP(p, m.r, o.v1)
					tol := 1e-9*abs(i2) + i1*i1*abs(dtdv(o.v1))*1e-12*v0
					if !(abs(o.i2dt-i2) <= tol) {
						t.Errorf("%s: ∫i²dt = %.15g, quadrature %.15g (tolerance %.3g)", name, o.i2dt, i2, tol)
					}
				}
			}
		}
	}
	// 5 banks × 12 powers × 4 durations × 41 voltages, less the steps that
	// stop or reach the top: most of them must be checked (own count).
	if checked < 5000 {
		t.Errorf("only %d steps of the grid ran their whole duration; the grid no longer tests what it says", checked)
	}
}
