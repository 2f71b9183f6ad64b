package sizing

import (
	"fmt"
	"math"
	"os"
	"strings"
	"testing"
)

// demoDesign reads a demo design of the repository's testdata.
func demoDesign(t testing.TB, name string) *Design {
	t.Helper()
	f, err := os.Open("../testdata/" + name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	d, err := DecodeDesign(f)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return d
}

// TestSeriesForcedFewestStrings sizes every cell of two demo designs at
// its least series count and three more with the design's series key,
// and checks that the strings are the fewest that carry the pass: the
// bank of that many passes the sizing pass and one string fewer fails it,
// judged by the solver's own trial (the window, the maximum-power point,
// the current ratings and the temperature). The series sizer of the
// explorer gives the very same candidate.
func TestSeriesForcedFewestStrings(t *testing.T) {
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json"} {
		d := demoDesign(t, name)
		z, err := NewSeriesSizer(d)
		if err != nil {
			t.Fatal(err)
		}
		for i := range d.Cells {
			least, step := z.LeastSeries(i)
			for k := range 4 {
				s := least + k*step
				dc := *d
				dc.Series = &s
				dc.Cells = []Cell{d.Cells[i]}
				r, err := Size(&dc)
				if err != nil {
					t.Fatalf("%s %s series %d: %v", name, d.Cells[i].ID, s, err)
				}
				c := r.Candidates[0]
				if c.Series != s {
					t.Fatalf("%s %s: series %d forced, report has %d", name, c.CellID, s, c.Series)
				}
				if want := dc.Window.MaxV / float64(s); math.Abs(c.CellV-want) > 1e-12*want {
					t.Errorf("%s %s series %d: cell_v %g, want max_v/series = %g", name, c.CellID, s, c.CellV, want)
				}
				zc, err := z.Size(t.Context(), i, s)
				if err != nil {
					t.Fatal(err)
				}
				if zc.Parallel != c.Parallel || zc.Feasible != c.Feasible {
					t.Errorf("%s %s series %d: series sizer %d strings (feasible %v), capbank size with series %d strings (feasible %v)",
						name, c.CellID, s, zc.Parallel, zc.Feasible, c.Parallel, c.Feasible)
				}
				if !c.Feasible {
					continue
				}
				p := newPlan(&dc)
				cell := &dc.Cells[0]
				q := p.forSeries(cell, s)
				var flags []Flag
				l := q.limits(cell, &flags)
				if tr := q.try(&l, c.Parallel); !tr.ok {
					t.Errorf("%s %s series %d: %d strings fail the pass (%s)", name, c.CellID, s, c.Parallel, tr.limit)
				}
				if c.Parallel > 1 {
					if tr := q.try(&l, c.Parallel-1); tr.ok {
						t.Errorf("%s %s series %d: %d strings, one fewer, also carry the pass", name, c.CellID, s, c.Parallel-1)
					}
				}
			}
		}
	}
}

// TestSeriesRefusedByField: a series count that puts a cell above its
// ceiling at the window top, or is not whole modules, is refused on the
// field series with the figures and the least count.
func TestSeriesRefusedByField(t *testing.T) {
	d := demoDesign(t, "ups-ride-through.json") // 42 V over 2.5 V, the lowest-rated cell: at least 16.8, so 17
	cases := []struct {
		name   string
		series int
		edit   func(*Design)
		want   []string // in the message on field "series"; nil: accepted
	}{
		{"below the ceiling's count", 15, nil, []string{"15 cells in series give 2.8 V per cell", "demo-c100-2v5", "2.5 V", "at least 17"}},
		{"one short for the lowest-rated cell", 16, nil, []string{"2.625 V per cell", "demo-c100-2v5", "at least 17"}},
		{"the least for every cell", 17, nil, nil},
		{"whole modules", 19, func(d *Design) { d.SeriesMultiple = ip(2) }, []string{"not a whole number", "multiple of 2"}},
		{"even modules", 18, func(d *Design) { d.SeriesMultiple = ip(2) }, nil},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			dc := *d
			dc.Series = ip(tc.series)
			if tc.edit != nil {
				tc.edit(&dc)
			}
			err := Validate(&dc)
			if tc.want == nil {
				if err != nil {
					t.Fatalf("series %d refused: %v", tc.series, err)
				}
				return
			}
			ve, ok := err.(ValidationError)
			if !ok || len(ve) == 0 {
				t.Fatalf("series %d: want a ValidationError, got %v", tc.series, err)
			}
			var msg string
			for _, fe := range ve {
				if fe.Field == "series" {
					msg = fe.Message
				}
			}
			for _, w := range tc.want {
				if !strings.Contains(msg, w) {
					t.Errorf("series %d: message on field series %q lacks %q (all: %v)", tc.series, msg, w, err)
				}
			}
		})
	}
}

// TestWhyPowerCollapse: a bank whose strings are set by the power
// collapse says so, naming the step, the power it draws and the figures
// of one string fewer, and the binding holds the same figures.
//
// The design: 10 cells of 10 F and 0.1 Ω (worst case ×2) in series, a
// 500 W pulse of 0.1 s. Energy is no limit (one string holds 281.6 J above
// 5 V; the pulse takes 50 J), but the most power p strings give at the
// start is v²/(4R) = 27²·p/(4·2) = 91.1·p W, so it takes at least 6
// strings; the bottom 5 V is below √(P·R) for any p < 40, so the bank
// collapses before it reaches the window bottom (REFERENCES.md 3.8).
func TestWhyPowerCollapse(t *testing.T) {
	d := &Design{
		Window:    Window{MaxV: 27, MinV: 5},
		Balancing: &Balancing{Kind: "none"},
		Load:      Load{Steps: []Step{{Rest: true, DurationS: 1}, {PowerW: fp(500), DurationS: 0.1}}},
		EOL:       &EOL{CapacitanceFactor: fp(0.8), ESRFactor: fp(2)},
		Cells:     []Cell{{ID: "pulse", RatedV: 2.7, CapacitanceF: 10, ESROhm: 0.1}},
	}
	r, err := Size(d)
	if err != nil {
		t.Fatal(err)
	}
	c := r.Candidates[0]
	if !c.Feasible || c.Limit != "power" {
		t.Fatalf("want a feasible bank set by power, got feasible %v limit %q (%s)", c.Feasible, c.Limit, c.Reason)
	}
	b := c.Binding
	if b == nil || b.Step == nil || b.NeedW == nil || b.FewerESROhm == nil || b.CollapseV == nil || b.AtS == nil {
		t.Fatalf("binding lacks the power figures: %+v", b)
	}
	if *b.Step != 2 || b.FewerParallel != c.Parallel-1 {
		t.Errorf("binding step %d, fewer %d; want step 2 and %d", *b.Step, b.FewerParallel, c.Parallel-1)
	}
	// Worst-case bank resistance at one string fewer: 0.1 Ω × 2 × 10 / (p−1),
	// circuit theory (REFERENCES.md 3.3).
	wantR := 0.1 * 2 * 10 / float64(c.Parallel-1)
	if math.Abs(*b.FewerESROhm-wantR) > 1e-12*wantR {
		t.Errorf("fewer_esr_ohm %g, want %g", *b.FewerESROhm, wantR)
	}
	if math.Abs(*b.NeedW-500) > 1e-9 {
		t.Errorf("need_w %g, want 500 (efficiency 1)", *b.NeedW)
	}
	// The collapse point v = 2·√(P·R), REFERENCES.md 3.8.
	if want := 2 * math.Sqrt(500*wantR); math.Abs(*b.CollapseV-want) > 1e-9*want {
		t.Errorf("collapse_v %g, want 2·√(P·R) = %g", *b.CollapseV, want)
	}
	if !(*b.AtS >= 1 && *b.AtS < 1.1) {
		t.Errorf("at_s %g, want within the pulse (1 s to 1.1 s)", *b.AtS)
	}
	for _, w := range []string{
		"set by the power collapse",
		"step 2",
		Quantity(500, "W", 4),
		Quantity(wantR, "Ω", 4),
		Quantity(*b.CollapseV, "V", 4),
		Quantity(*b.AtS, "s", 4),
	} {
		if !strings.Contains(c.Why, w) {
			t.Errorf("why %q lacks %q", c.Why, w)
		}
	}
	if c.Parallel < 6 {
		t.Errorf("%d strings, below the 6 the start of the pulse already needs (91.1 W per string)", c.Parallel)
	}
}

// TestEveryCandidateSaysWhy: every candidate of the demo designs, feasible
// or not, carries a why line and its binding, and the line starts with
// the string count and gives the series count and the per-cell voltage of
// one more in series, as the binding holds them.
func TestEveryCandidateSaysWhy(t *testing.T) {
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json", "agv-regen-buffer.json", "logger-hold-up.json"} {
		d := demoDesign(t, name)
		if d.Load.ProfileCSV != "" {
			continue // names a file beside it; the command line reads it
		}
		r, err := Size(d)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		for _, c := range r.Candidates {
			b := c.Binding
			if c.Why == "" || b == nil {
				t.Errorf("%s %s: no why line or binding", name, c.CellID)
				continue
			}
			if c.Feasible && !strings.HasPrefix(c.Why, fmt.Sprintf("%d string", c.Parallel)) {
				t.Errorf("%s %s: why %q does not start with its %d strings", name, c.CellID, c.Why, c.Parallel)
			}
			if b.NextSeries <= c.Series || math.Abs(b.NextCellV-r.MaxV/float64(b.NextSeries)) > 1e-12 {
				t.Errorf("%s %s: next_series %d, next_cell_v %g for %d in series", name, c.CellID, b.NextSeries, b.NextCellV, c.Series)
			}
			if want := fmt.Sprintf("%d in series", b.NextSeries); !strings.Contains(c.Why, want) || !strings.Contains(c.Why, Quantity(b.NextCellV, "V", 4)) {
				t.Errorf("%s %s: why %q lacks %q at %s", name, c.CellID, c.Why, want, Quantity(b.NextCellV, "V", 4))
			}
		}
	}
}

// TestWhyNamesWhatSetTheBottom: where a bank's strings are set by the
// lowest voltage it may reach, the why line names what set that voltage:
// the window bottom, a hybrid cell's own floor (min_v × series), or the
// converter's minimum input voltage, each with its figure.
func TestWhyNamesWhatSetTheBottom(t *testing.T) {
	base := func() *Design {
		return &Design{
			Window:    Window{MaxV: 27, MinV: 10},
			Balancing: &Balancing{Kind: "none"},
			Load:      Load{Steps: []Step{{CurrentA: fp(2), DurationS: 30}}},
			Cells:     []Cell{{ID: "c", RatedV: 2.7, CapacitanceF: 10, ESROhm: 0.01}},
		}
	}
	hybrid := base()
	hybrid.Cells[0].MinV = fp(1.5) // 10 × 1.5 V = 15 V, above the 10 V bottom
	conv := base()
	conv.Converter = &Converter{MinInputV: fp(18)}
	for _, tc := range []struct {
		name string
		d    *Design
		want string
	}{
		{"window", base(), "set by the window bottom, at "},
		{"hybrid floor", hybrid, "set by the cells' own floor (10 × 1.5 V min_v, above the 10 V window bottom), at "},
		{"converter", conv, "set by the converter's minimum input voltage (above the 10 V window bottom), at "},
	} {
		r, err := Size(tc.d)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		c := r.Candidates[0]
		if c.Limit != "voltage" && c.Parallel > 1 {
			t.Fatalf("%s: strings set by %q, want the bottom", tc.name, c.Limit)
		}
		if !strings.Contains(c.Why, tc.want) {
			t.Errorf("%s: why %q, want it to contain %q", tc.name, c.Why, tc.want)
		}
	}
}
