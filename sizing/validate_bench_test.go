package sizing

import (
	"runtime"
	"testing"
)

// BenchmarkValidateDay validates the design of BenchmarkLibrary200Day (200
// invented cells against the 86 400-step logged day) and reports the time
// and the allocations per step (runtime.MemStats.Mallocs over the loop ÷
// steps). The target is under 5 ms a day and under 1 allocation
// per step.
func BenchmarkValidateDay(b *testing.B) {
	d := dayDesign(200)
	steps := len(d.Load.Steps)
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	for b.Loop() {
		if err := Validate(d); err != nil {
			b.Fatal(err)
		}
	}
	runtime.ReadMemStats(&after)
	n := float64(b.N)
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/n/1e6, "ms/day")
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/n/float64(steps), "ns/step")
	b.ReportMetric(float64(after.Mallocs-before.Mallocs)/n/float64(steps), "allocs/step")
}
