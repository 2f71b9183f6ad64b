package web

import (
	"context"
	"testing"

	"capbank/sizing"
	"capbank/sizing/explore"
	"capbank/sizing/sizingtest"
	"capbank/web/store"
)

// exploreBenchDesign is the example design with every demo cell as a
// candidate; day swaps its steps for the 86 400-step logged day.
func exploreBenchDesign(b *testing.B, day bool) *sizing.Design {
	d := exampleForm().Decode(store.DemoCell).Design
	d.UseLibrary(store.DemoCells())
	if day {
		d.Load.Steps = nil
		d.Load.ProfileCSVText = sizingtest.LoggedDayCSV(86400)
	}
	if err := sizing.Validate(d); err != nil {
		b.Fatal(err)
	}
	return d
}

func benchExplore(b *testing.B, day bool) {
	d := exploreBenchDesign(b, day)
	var points int
	for b.Loop() {
		r, err := explore.Explore(context.Background(), d, explore.Options{})
		if err != nil {
			b.Fatal(err)
		}
		points = len(r.Explore.Points)
	}
	b.ReportMetric(float64(points), "points")
}

// BenchmarkExploreExample sweeps the demo cells × 4 series counts on the
// example design's profile (issue 21's target: under 0.5 s on 2 cores).
func BenchmarkExploreExample(b *testing.B) { benchExplore(b, false) }

// BenchmarkExploreLoggedDay sweeps the demo cells × 4 series counts on the
// 86 400-step logged day (target: under 5 s on 2 cores).
func BenchmarkExploreLoggedDay(b *testing.B) { benchExplore(b, true) }
