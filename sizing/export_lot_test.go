package sizing

// SampledLot is one sampled lot of a design's first cell, for the check of
// the equivalent circuit against ngspice (ngspice_lot_test.go).
type SampledLot struct {
	Series int
	// StringF and StringOhm are each string's capacitance (F) and ESR (Ω);
	// DrainS is each string's conductance across its capacitor (S).
	StringF, StringOhm []float64
	DrainS             float64
	// RuntimeS and MinTerminalV are what capbank's equivalent RC gives.
	RuntimeS, MinTerminalV float64
}

// SampleLot draws lot n of par strings of d's first cell (seed) and runs
// it. The design has no balancing key: its strings drain by the cells'
// leakage alone.
func SampleLot(d *Design, par, n int, seed int64) SampledLot {
	ls, _, err := lotSimOf(d, seed)
	if err != nil {
		panic(err)
	}
	var b lotBuf
	out := ls.sample(n, par, lotRuntime, &b)
	tr := ls.run(&b.m)
	return SampledLot{Series: ls.s, StringF: append([]float64(nil), b.ck[:par]...), StringOhm: append([]float64(nil), b.rk[:par]...),
		DrainS: ls.gDrain / float64(ls.s), RuntimeS: out.runtime, MinTerminalV: tr.stats.minU}
}
