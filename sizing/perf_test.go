package sizing

import (
	"context"
	"fmt"
	"reflect"
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
// of REFERENCES.md 3.8 (a drain across the capacitor has no closed form
// under constant power; own derivation).
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

// TestParallelSizingMatchesSerial sizes the same library with one worker
// and with several: the reports must be identical in every figure, flag
// and curve point, and the steps solved the same, whatever order the
// candidates finish in (Size's own promise; the workers share only the
// read-only plan).
func TestParallelSizingMatchesSerial(t *testing.T) {
	t.Parallel()
	// 24 invented cells against two hours of the invented logged day
	// (07:00–09:00, the solar charge starting at 08:00); two of them leak
	// so much (time constant C/g = 1 h, the shortest plausible) that no string count carries
	// the hour before the charge.
	d := dayDesign(24)
	d.Load.Steps = d.Load.Steps[7*3600 : 9*3600]
	for _, i := range []int{3, 17} {
		c := &d.Cells[i]
		c.LeakageA = fp(c.CapacitanceF * c.RatedV / MinSelfDischargeS) // g = C/(1 h), the most Validate accepts
	}
	serial, nSerial, err := sizeWith(context.Background(), d, 1)
	if err != nil {
		t.Fatal(err)
	}
	feasible := 0
	for _, c := range serial.Candidates {
		if c.Feasible {
			feasible++
		}
	}
	if feasible == 0 || feasible == len(serial.Candidates) {
		t.Fatalf("%d of %d candidates feasible; the case must have both kinds", feasible, len(serial.Candidates))
	}
	for _, workers := range []int{2, 3, 7} {
		par, nPar, err := sizeWith(context.Background(), d, workers)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(serial, par) {
			for i := range serial.Candidates {
				if !reflect.DeepEqual(serial.Candidates[i], par.Candidates[i]) {
					t.Errorf("%d workers: candidate %d is %s, serial %s (or their figures differ)", workers, i, par.Candidates[i].CellID, serial.Candidates[i].CellID)
					break
				}
			}
			t.Errorf("%d workers: the report differs from the serial one", workers)
		}
		if nPar != nSerial {
			t.Errorf("%d workers solved %d steps, serial %d", workers, nPar, nSerial)
		}
	}
}

// mixedSteps is an invented profile with every step kind, discharging and
// charging, small and large.
func mixedSteps() []compiledStep {
	return []compiledStep{
		{kind: kindCurrent, x: 2, dur: 1},
		{kind: kindPower, x: 60, dur: 1},
		{kind: kindResistance, x: 20, dur: 2},
		{kind: kindRest, dur: 5},
		{kind: kindPower, x: -15, dur: 3},
		{kind: kindCurrent, x: -1, dur: 2},
		{kind: kindPower, x: 400, dur: 0.5},
		{kind: kindPower, x: -200, dur: 30}, // reaches the top and is held
	}
}

// TestInnerLoopAllocatesNothing: one step of each kind, a pass over the
// invented logged day, and one trial of the sizing search (a pass with its
// checks) allocate nothing, so the cost per step is arithmetic only
// (testing.AllocsPerRun; 0 is the only right answer).
func TestInnerLoopAllocatesNothing(t *testing.T) {
	// Not parallel: AllocsPerRun counts every allocation in the process.
	m := newBankModel(40, 0.02, 1e-5)
	var o stepOutcome
	for _, st := range mixedSteps() {
		if n := testing.AllocsPerRun(100, func() { m.solveStep(st, 40, 1, 48, &o) }); n != 0 {
			t.Errorf("a %v step allocates %v times", st.kind, n)
		}
	}
	steps := mixedSteps()
	if n := testing.AllocsPerRun(100, func() { m.run(steps, 50, 40, 1, 48) }); n != 0 {
		t.Errorf("a pass over the mixed steps allocates %v times", n)
	}
	d := dayDesign(1)
	p := newPlan(d)
	var flags []Flag
	l := p.limits(&d.Cells[0], &flags)
	if n := testing.AllocsPerRun(3, func() { p.try(&l, 300) }); n != 0 {
		t.Errorf("one trial of the search over the 86 400-step day allocates %v times", n)
	}
}

// TestEstimateSearchFindsTheFewestStrings: for passes that never charge
// the bank, the search placed by the trials' energy balance
// (searchByEstimate) must end on the fewest strings that carry the pass,
// which a scan of every count from one string up finds by definition;
// and the trial one string below must be the failing one it reports.
func TestEstimateSearchFindsTheFewestStrings(t *testing.T) {
	t.Parallel()
	// Half an hour of the invented logged day's night (no charge), with
	// passive balancing (the drain grows with the strings) and with
	// active; and the same cells with a low RMS current rating, so that
	// current sets some counts.
	night := dayDesign(12).Load.Steps[:1800]
	designs := map[string]*Design{}
	for _, name := range []string{"passive", "active", "current-limited"} {
		d := dayDesign(12)
		d.Load.Steps = night
		switch name {
		case "passive":
			d.Balancing = nil
		case "current-limited":
			for i := range d.Cells {
				d.Cells[i].MaxCurrentA = fp(1e-5 * d.Cells[i].CapacitanceF)
			}
		}
		designs[name] = d
	}
	limits := map[string]bool{}
	for name, d := range designs {
		p := newPlan(d)
		if p.bound.charges {
			t.Fatalf("%s: the night must not charge the bank", name)
		}
		for i := range d.Cells {
			var flags []Flag
			l := p.limits(&d.Cells[i], &flags)
			if _, ok := p.drainAlone(&l); ok {
				continue
			}
			lo, hi, ok := p.search(&l)
			if !ok || hi.par > 400 {
				continue // the scan below would take too long
			}
			first := 0
			for par := 1; par <= hi.par && first == 0; par++ {
				if p.try(&l, par).ok {
					first = par
				}
			}
			if hi.par != first || !hi.ok {
				t.Errorf("%s, %s: the search ends on %d strings, the scan finds %d", name, d.Cells[i].ID, hi.par, first)
			}
			if lo.par != hi.par-1 || lo.ok {
				t.Errorf("%s, %s: the failing trial is at %d strings (ok %v), want %d", name, d.Cells[i].ID, lo.par, lo.ok, hi.par-1)
			}
			limits[lo.limit] = true
		}
	}
	// The cases must exercise both kinds of limit (own check of the case).
	if !limits["voltage"] || !limits["rms_current"] {
		t.Errorf("limits seen %v; the cases must include voltage and rms_current", limits)
	}
}
