package sizing

import (
	"strconv"
	"strings"
	"testing"

	"capbank/sizing/cellmodel"
	"capbank/sizing/sizingtest"
)

// loggedDaySteps is the invented logged day (sizingtest.LoggedDayCSV) as
// 86 400 one-second power steps.
func loggedDaySteps(b *testing.B) []compiledStep {
	b.Helper()
	var steps []compiledStep
	for _, line := range strings.Split(sizingtest.LoggedDayCSV(86400), "\n") {
		_, pw, ok := strings.Cut(line, ",")
		if !ok || strings.HasPrefix(line, "time_s") || strings.HasPrefix(line, "#") {
			continue
		}
		p, err := strconv.ParseFloat(pw, 64)
		if err != nil {
			b.Fatal(err)
		}
		steps = append(steps, compiledStep{kind: kindPower, x: p, dur: 1, toLoad: 1})
	}
	if len(steps) != 86400 {
		b.Fatalf("%d steps, want 86400", len(steps))
	}
	return steps
}

// BenchmarkOneDayByModel runs one simulated day (86 400 one-second power
// steps of the logged day) on one bank, 2 in series × 1 string of an
// invented 100 F cell between 5.4 V and 2.5 V, on the ideal RC (closed
// forms) and on the two- and three-branch models (Dormand–Prince 5(4) at
// the default tolerance), side by side. On the models a step that reaches
// the window top ends there (no constant-voltage hold, unlike the ideal
// pass); the cost per step is what is compared.
func BenchmarkOneDayByModel(b *testing.B) {
	steps := loggedDaySteps(b)
	const maxV, minV = 5.4, 2.5
	cell := cellmodel.Model{RiOhm: 12e-3, C0F: 100}
	two := cellmodel.Model{RiOhm: 12e-3, C0F: 85, KvFPerV: 10, Slow: []cellmodel.Branch{{ROhm: 15, CF: 12}}, LeakageOhm: 5000}
	three := cellmodel.Model{RiOhm: 12e-3, C0F: 75, KvFPerV: 12, Slow: []cellmodel.Branch{{ROhm: 1.5, CF: 8}, {ROhm: 20, CF: 10}}, LeakageOhm: 5000}
	b.Run("ideal-rc", func(b *testing.B) {
		m := newBankModel(cell.C0F/2, cell.RiOhm*2, 0)
		run := 0
		for b.Loop() {
			s := m.run(steps, 1, maxV, minV, maxV)
			run = s.steps
		}
		b.ReportMetric(float64(run), "profile-steps/day")
	})
	for _, mc := range []struct {
		name string
		m    cellmodel.Model
	}{{"two-branch", two}, {"three-branch", three}} {
		b.Run(mc.name, func(b *testing.B) {
			bank := mc.m.Bank(2, 1)
			integ := 0
			for b.Loop() {
				sim := cellmodel.NewSim(bank, maxV, cellmodel.Tolerances{})
				for _, st := range steps {
					if _, err := sim.Run(cellmodel.Load{Kind: cellmodel.Power, Value: st.x}, st.dur, cellmodel.Limits{MinV: minV, MaxV: maxV}, nil); err != nil {
						b.Fatal(err)
					}
				}
				integ = sim.Steps()
			}
			b.ReportMetric(float64(integ), "integrator-steps/day")
		})
	}
}
