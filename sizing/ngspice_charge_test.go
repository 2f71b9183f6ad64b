package sizing_test

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"capbank/sizing"
)

// TestChargerNgspice checks the charger's recharge and first charge
// against ngspice: the worst-case bank (capacitor, leakage and balancing
// drain across it, ESR) charged by a behavioural source that gives
// min(I, G·(max_v − v_t)) — constant current, then the constant-voltage
// phase of a source of 1/G ohms — through a 0 V source that measures the
// current, and the time at which that current falls to the end current
// (REFERENCES.md 3.13). With G = 10⁷ S the source's own resistance is
// 10⁻⁷ Ω, 1e-5 of the bank's ESR, far below the 1e-3 tolerance.
func TestChargerNgspice(t *testing.T) {
	t.Parallel()
	bin := ngspiceOrSkip(t)
	cell := sizing.Cell{ID: "chg", RatedV: 2.7, CapacitanceF: 310, ESROhm: 0.0022, LeakageA: spiceF64(0.004)}
	d := &sizing.Design{Name: "charger check", Window: sizing.Window{MaxV: 16.2, MinV: 8},
		Load:    sizing.Load{Steps: []sizing.Step{{CurrentA: spiceF64(30), DurationS: 40}}},
		Charger: &sizing.Charger{CurrentA: 6, EndCurrentPct: spiceF64(5)},
		Cells:   []sizing.Cell{cell}}
	r, err := sizing.Size(d)
	if err != nil {
		t.Fatal(err)
	}
	c := r.Candidates[0]
	if c.RechargeS == nil || c.FirstChargeS == nil || c.LeakageOhm == nil {
		t.Fatalf("recharge %v, first charge %v, leakage %v; flags %+v", c.RechargeS, c.FirstChargeS, c.LeakageOhm, c.Flags)
	}
	dir := t.TempDir()
	for _, k := range []struct {
		name       string
		capF, esr  float64
		v0, capbnk float64
	}{
		{"recharge", c.WorstCapacitanceF, c.WorstESROhm, c.EndCapacitorV, *c.RechargeS},
		{"first-charge", c.CapacitanceF, c.ESROhm, 0, *c.FirstChargeS},
	} {
		stop := 1.5 * k.capbnk
		tmax := stop / 20000
		var b strings.Builder
		line := func(format string, a ...any) { fmt.Fprintf(&b, format+"\n", a...) }
		line("* capbank charger check: %s", k.name)
		line("C1 vc 0 %s", spiceNum(k.capF))
		line("RLEAK vc 0 %s", spiceNum(*c.LeakageOhm))
		line("RESR vc vt %s", spiceNum(k.esr))
		line("VSENSE vs vt 0")
		line("BCHG 0 vs I = min(%s, 1e7*(%s - V(vt)))", spiceNum(6), spiceNum(16.2))
		line(".ic v(vc)=%s", spiceNum(k.v0))
		line(".options reltol=1e-7 abstol=1e-12 vntol=1e-9 chgtol=1e-16 trtol=1")
		line(".tran %s %s 0 %s", spiceNum(tmax), spiceNum(stop), spiceNum(tmax))
		line(".meas tran tend WHEN i(vsense)=%s FALL=1", spiceNum(0.05*6))
		line(".end")
		got := runNgspice(t, bin, dir, k.name, b.String(), "tend")
		if rel := math.Abs(got["tend"]-k.capbnk) / got["tend"]; rel > ngspiceRelTol {
			t.Errorf("%s: capbank %.6g s, ngspice %.6g s (relative %.2g, limit %g)", k.name, k.capbnk, got["tend"], rel, ngspiceRelTol)
		} else {
			t.Logf("%s: capbank %.6g s, ngspice %.6g s (relative %.2g)", k.name, k.capbnk, got["tend"], rel)
		}
	}
}
