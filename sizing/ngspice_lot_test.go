package sizing_test

import (
	"fmt"
	"strings"
	"testing"

	"capbank/sizing"
)

// TestLotThreeStringsNgspice: issue 18, item 2. capbank runs a sampled lot
// as one equivalent RC (C = Σ C_k, R = Σ C_k²·R_k/C², REFERENCES.md 5.11);
// ngspice runs the same lot with its three strings as separate RC branches
// in parallel, each with its own leakage, so the charge moves between them
// in the rests. Runtime and the lowest terminal voltage over the pass must
// agree within 0.1 %. Invented cells and profile: 4 cells of 100 F whose
// R·C (1.5 s) is as long as the pulses, the case where the strings'
// redistribution matters most, drawn from a lot far looser than the
// default (capacitance σ 8 %, ESR σ 20 %).
func TestLotThreeStringsNgspice(t *testing.T) {
	bin := ngspiceOrSkip(t)
	t.Parallel()
	const par, pulseW, onS, periodS = 3, 30.0, 2.0, 5.0
	d := &sizing.Design{Name: "three-string lot", Window: sizing.Window{MaxV: 10.8, MinV: 5.4},
		Load: sizing.Load{Repeat: spiceInt(4), Steps: []sizing.Step{{PowerW: spiceF64(pulseW), DurationS: onS}, {PowerW: spiceF64(0), DurationS: periodS - onS}}},
		EOL:  &sizing.EOL{ApplyTolerance: new(bool)},
		Cells: []sizing.Cell{{ID: "c", RatedV: 2.7, CapacitanceF: 100, ESROhm: 15e-3, LeakageA: spiceF64(2e-3),
			CapacitanceSigmaPct: spiceF64(8), ESRSigmaPct: spiceF64(20)}}}
	dir := t.TempDir()
	for _, lot := range []int{0, 1, 2} {
		l := sizing.SampleLot(d, par, lot, 5)
		if l.Series != 4 {
			t.Fatalf("series %d, want 4", l.Series)
		}
		passS := 4 * periodS
		var b strings.Builder
		line := func(format string, a ...any) { fmt.Fprintf(&b, format+"\n", a...) }
		line("* capbank sampled lot %d: three strings as separate branches", lot)
		for k := range par {
			line("C%d vc%d 0 %s", k, k, spiceNum(l.StringF[k]))
			line("RL%d vc%d 0 %s", k, k, spiceNum(1/l.DrainS))
			line("RS%d vc%d vt %s", k, k, spiceNum(l.StringOhm[k]))
		}
		// The pulses: 30 W for 2 s in every 5 s, edges of 1 µs.
		line("VP p 0 PULSE(0 1 0 1u 1u %s %s)", spiceNum(onS-1e-6), spiceNum(periodS))
		line("BLOAD vt 0 I = %s * V(p) / max(V(vt), 1e-6)", spiceNum(pulseW))
		stopS := 1.02 * l.RuntimeS // short of the power collapse that follows the window bottom
		line("VBP bp 0 PWL(0 0 %s 0 %s 1)", spiceNum(passS), spiceNum(stopS))
		line("RBP bp 0 1")
		line(".ic v(vc0)=10.8 v(vc1)=10.8 v(vc2)=10.8")
		line(".nodeset v(vt)=10.8")
		line(".options reltol=1e-7 abstol=1e-12 vntol=1e-9 chgtol=1e-16 trtol=1")
		tmax := 1e-3
		line(".tran %s %s 0 %s", spiceNum(tmax), spiceNum(stopS), spiceNum(tmax))
		line(".meas tran umin MIN v(vt) FROM=0 TO=%s", spiceNum(passS))
		line(".meas tran vcend FIND v(vc0) AT=%s", spiceNum(passS))
		line(".meas tran trun WHEN v(vt)=5.4 FALL=1")
		line(".end")
		got := runNgspice(t, bin, dir, fmt.Sprintf("lot%d", lot), b.String())
		t.Logf("lot %d: strings %.4g/%.4g/%.4g F, %.4g/%.4g/%.4g mΩ; runtime %.6g s (ngspice %.6g), lowest %.6g V (ngspice %.6g)",
			lot, l.StringF[0], l.StringF[1], l.StringF[2], 1e3*l.StringOhm[0], 1e3*l.StringOhm[1], 1e3*l.StringOhm[2],
			l.RuntimeS, got["trun"], l.MinTerminalV, got["umin"])
		compareWithNgspice(t, fmt.Sprintf("lot %d", lot), "runtime", l.RuntimeS, got["trun"])
		compareWithNgspice(t, fmt.Sprintf("lot %d", lot), "lowest terminal voltage", l.MinTerminalV, got["umin"])
	}
}
