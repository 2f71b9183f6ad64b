package components

import (
	"math"
	"testing"
)

// Points sit on decade axes: a value of 10^k is on the tick of 10^k, and
// labels of points close together do not overlap.
func TestLogLogChart(t *testing.T) {
	pts := []ScatterPoint{{"a", 1000, 10}, {"b", 1100, 10.5}, {"c", 1200, 9.8}, {"d", 100000, 1}}
	c := LogLogChart("t", "T", "D", "x", "y", pts, "W", "Wh")
	// The axes cover 10^2.5.. → 10^2 to 10^6 across, 10^-1 to 10^2 up.
	if len(c.XTicks) != 5 || c.XTicks[0].Label != "100\u00a0W" || c.XTicks[4].Label != "1\u00a0MW" {
		t.Fatalf("x ticks %+v", c.XTicks)
	}
	if len(c.YTicks) != 4 || c.YTicks[0].Label != "100\u00a0mWh" {
		t.Fatalf("y ticks %+v", c.YTicks)
	}
	// a (1 kW, 10 Wh) lies on the 1 kW and 10 Wh ticks.
	if math.Abs(c.Points[0].X-c.XTicks[1].Pos) > 1e-9 || math.Abs(c.Points[0].Y-c.YTicks[2].Pos) > 1e-9 {
		t.Errorf("a at (%g, %g), ticks at (%g, %g)", c.Points[0].X, c.Points[0].Y, c.XTicks[1].Pos, c.YTicks[2].Pos)
	}
	for i := range c.Points {
		for j := range i {
			pi, pj := c.Points[i], c.Points[j]
			if math.Abs(pi.X-pj.X) < 120 && math.Abs(pi.LabelY-pj.LabelY) < labelGap-1e-9 {
				t.Errorf("labels %s and %s overlap: %g and %g", pi.Label, pj.Label, pi.LabelY, pj.LabelY)
			}
		}
	}
	if LogLogChart("t", "T", "D", "x", "y", nil, "W", "Wh") != nil {
		t.Error("no points should give no chart")
	}
}
