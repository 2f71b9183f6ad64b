package sizing_test

import (
	"math"
	"testing"

	"capbank/sizing"
	"capbank/sizing/explore"
)

// TestNgspiceExploredStrings checks three explored points of the
// constant-power hold-up design (ngspiceCases: 48 V → 24 V, 2 kW at 95 %
// for 30 s, exaggerated leakage) in ngspice: the explorer's string count
// carries the pass (the terminal voltage stays at or above the window
// bottom, and the runtime agrees with capbank's within ngspiceRelTol),
// and the same bank with one string fewer, C·(p−1)/p behind R·p/(p−1)
// with its leakage likewise (circuit theory, REFERENCES.md 3.3), reaches
// the window bottom within the pass.
func TestNgspiceExploredStrings(t *testing.T) {
	bin := ngspiceOrSkip(t)
	t.Parallel()
	tc := ngspiceCases()[0]
	d := tc.design
	d.Explore = &sizing.ExploreOptions{ExtraSeries: spiceInt(2)}
	r, err := explore.Explore(t.Context(), &d, explore.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Explore.Points) != 3 {
		t.Fatalf("%d points, want 3 (the least series count and two more)", len(r.Explore.Points))
	}
	z, err := sizing.NewSeriesSizer(&d)
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range r.Explore.Points {
		if !p.Feasible || p.Parallel < 2 {
			t.Fatalf("%s × %d: feasible %v with %d strings; the check needs a feasible bank of two strings or more", p.CellID, p.Series, p.Feasible, p.Parallel)
		}
		c, err := z.Size(t.Context(), 0, p.Series)
		if err != nil {
			t.Fatal(err)
		}
		if c.Parallel != p.Parallel || c.RuntimeS == nil {
			t.Fatalf("%d in series: candidate %d strings, point %d; runtime %v", p.Series, c.Parallel, p.Parallel, c.RuntimeS)
		}
		stop := 1.05*math.Max(*c.RuntimeS, r.PassDurationS) + 5
		n := spiceBankNetlist{title: tc.design.Name, capF: c.WorstCapacitanceF, esrOhm: c.WorstESROhm, leakageOhm: c.LeakageOhm,
			v0: r.MaxV, load: tc.load, passS: r.PassDurationS, minV: r.MinV, stopS: stop}
		got := runNgspice(t, bin, t.TempDir(), "bank", n.String())
		// Expected values: ngspice 39 transient simulation, tolerance
		// ngspiceRelTol.
		compareWithNgspice(t, c.CellID, "runtime_s (s)", *c.RuntimeS, got["trun"])
		compareWithNgspice(t, c.CellID, "min_terminal_v (V)", c.MinTerminalV, got["umin"])
		if !(got["umin"] >= r.MinV*(1-1e-3)) {
			t.Errorf("%d × %d: ngspice's lowest terminal voltage %g V is below the window bottom %g V", p.Series, p.Parallel, got["umin"], r.MinV)
		}
		k := float64(p.Parallel-1) / float64(p.Parallel)
		fewer := n
		fewer.capF, fewer.esrOhm = c.WorstCapacitanceF*k, c.WorstESROhm/k
		if c.LeakageOhm != nil {
			l := *c.LeakageOhm / k
			fewer.leakageOhm = &l
		}
		got = runNgspice(t, bin, t.TempDir(), "fewer", fewer.String(), "trun")
		t.Logf("%d × %d: one string fewer runs %.6g s in ngspice, the pass is %g s", p.Series, p.Parallel-1, got["trun"], r.PassDurationS)
		if !(got["trun"] < r.PassDurationS) {
			t.Errorf("%d in series: %d strings, one fewer than explored, carry the %g s pass in ngspice (runtime %g s)", p.Series, p.Parallel-1, r.PassDurationS, got["trun"])
		}
	}
}
