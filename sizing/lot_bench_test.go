package sizing

import "testing"

// lotBenchDesign is an invented 48 V hold-up (demo data): 20 cells of
// 2.5 V in series, a 100-step profile of power pulses and rests, sized so
// that the bank is 20 × 3.
func lotBenchDesign() *Design {
	steps := make([]Step, 100)
	for i := range steps {
		if i%2 == 0 {
			steps[i] = Step{PowerW: fp(900), DurationS: 1}
		} else {
			steps[i] = Step{PowerW: fp(0), DurationS: 2}
		}
	}
	c := Cell{ID: "bench-lot", RatedV: 2.7, SurgeV: fp(2.85), CapacitanceF: 350, ESROhm: 3.2e-3, LeakageA: fp(1e-3),
		CapacitanceTolerancePct: []float64{-10, 20}}
	return &Design{Name: "bench: lot analysis", Window: Window{MaxV: 50, MinV: 25},
		Load: Load{Steps: steps}, CellMaxV: fp(2.5), Balancing: &Balancing{Kind: "active", QuiescentA: fp(20e-6)},
		Cells: []Cell{c}}
}

// BenchmarkLots: issue 18, item 6. 10⁴ lots of a 20-series × 3-string bank
// over a 100-step profile, the pass and the first-charge, standby and
// lowest-cell figures of each lot (target under 1 s on 2 cores).
func BenchmarkLots(b *testing.B) {
	ls, _ := lotSimFor(b, lotBenchDesign(), 1)
	if ls.s != 20 {
		b.Fatalf("series %d, want 20", ls.s)
	}
	b.ReportAllocs()
	for b.Loop() {
		ls.lots(10000, 3, lotRuntime)
	}
}
