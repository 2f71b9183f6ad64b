package sizing

import (
	"math"
	"math/rand/v2"
	"runtime"
	"testing"
)

// dayProfile is an invented logged day at one sample per second (86 400
// power steps, demo data): a remote station's 2–3 W standby with noise,
// 40 W radio bursts of 2–5 s about every ten minutes, and a solar charger
// pushing 12–18 W into the bank from 08:00 to 16:00.
func dayProfile() []Step {
	rng := rand.New(rand.NewPCG(1, 2))
	steps := make([]Step, 86400)
	vals := make([]float64, len(steps))
	burst := 0
	for i := range steps {
		h := float64(i) / 3600
		p := 2 + rng.Float64()
		if burst > 0 {
			p, burst = 40, burst-1
		} else if rng.IntN(600) == 0 {
			burst = 2 + rng.IntN(4)
		}
		if h >= 8 && h < 16 && burst == 0 {
			p -= 12 + 6*rng.Float64()
		}
		vals[i] = p
		steps[i] = Step{PowerW: &vals[i], DurationS: 1}
	}
	return steps
}

// cellFamily is n invented cells (demo data, no real product) from 10 F to
// 3000 F, with ESR falling, and mass, leakage and price rising, with size.
func cellFamily(n int) []Cell {
	cells := make([]Cell, n)
	volts := []float64{2.5, 2.7, 3.0}
	for i := range cells {
		f := float64(i) / float64(max(n-1, 1))
		c := 10 * math.Pow(300, f)
		cells[i] = Cell{ID: "bench-" + string(rune('a'+i%26)) + string(rune('a'+i/26%26)) + string(rune('a'+i/676)),
			RatedV: volts[i%3], CapacitanceF: c, ESROhm: 0.9 / c, LeakageA: fp(3e-6 * c),
			MaxCurrentA: fp(0.1 * c), PeakCurrentA: fp(0.6 * c),
			MassKg: fp(0.00018 * c), VolumeL: fp(0.00014 * c), UnitPrice: fp(0.5 + 0.011*c)}
	}
	return cells
}

func dayDesign(cells int) *Design {
	// Active balancing: a bank that must bridge a night on its own cannot
	// afford passive resistors' standing drain.
	return &Design{Name: "bench: remote station day", Window: Window{MaxV: 48, MinV: 24},
		Load:      Load{Efficiency: fp(0.92), Steps: dayProfile()},
		Balancing: &Balancing{Kind: "active", QuiescentA: fp(20e-6)},
		Cells:     cellFamily(cells)}
}

// BenchmarkSizeDay sizes 100 cells against an 86 400-step logged day and
// reports the time per simulated step (every step of every trial string
// count and of the runtime, over all candidates) on one core.
func BenchmarkSizeDay(b *testing.B) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(1))
	d := dayDesign(100)
	if err := Validate(d); err != nil {
		b.Fatal(err)
	}
	var steps int64
	b.ResetTimer()
	for b.Loop() {
		_, n, err := size(d)
		if err != nil {
			b.Fatal(err)
		}
		steps += n
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(steps), "ns/step")
	b.ReportMetric(float64(steps)/float64(b.N), "steps/op")
}

// BenchmarkStepKinds times one step of each kind on a leaky bank, from
// the states a long logged profile visits (small steps, as a 1 s log gives).
func BenchmarkStepKinds(b *testing.B) {
	m := newBankModel(40, 0.02, 1e-5)
	for _, k := range []struct {
		name string
		st   compiledStep
	}{
		{"current", compiledStep{kind: kindCurrent, x: 2, dur: 1}},
		{"power", compiledStep{kind: kindPower, x: 60, dur: 1}},
		{"charging_power", compiledStep{kind: kindPower, x: -15, dur: 1}},
		{"resistance", compiledStep{kind: kindResistance, x: 20, dur: 1}},
		{"rest", compiledStep{kind: kindRest, dur: 1}},
	} {
		b.Run(k.name, func(b *testing.B) {
			v := 40.0
			var o stepOutcome
			for b.Loop() {
				m.solveStep(k.st, v, 1, 48, &o)
				v = o.v1
				if v < 30 || v > 47 {
					v = 40
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N), "ns/step")
		})
	}
}
