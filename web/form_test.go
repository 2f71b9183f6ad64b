package web

import (
	"capbank/web/store"
	"context"
	"strings"
	"testing"
)

// sizing's field paths land on the form's inputs.
func TestFormPath(t *testing.T) {
	t.Parallel()
	sources := []string{"demo-2v7-650f", ""} // a demo cell, then the typed one
	cases := []struct{ path, wantField, wantMsg string }{
		{"load.steps[2].power_w", "load.steps[2].value", "m"},
		{"load.steps[2].current_a", "load.steps[2].value", "m"},
		{"load.steps[2].resistance_ohm", "load.steps[2].value", "m"},
		{"load.steps[2]", "load.steps[2]", "m"},
		{"load.steps[2].duration_s", "load.steps[2].duration_s", "m"},
		{"cells[1].surge_v", "inline.surge_v", "m"},
		{"cells[1].capacitance_tolerance_pct[0]", "inline.capacitance_tolerance_pct[0]", "m"},
		{"cells[1]", "inline.id", "m"},
		{"cells[0].esr_ohm", "cells.pick", "demo-2v7-650f.esr_ohm: m"},
		{"window.min_v", "window.min_v", "m"},
		// the design's second own line is the form's line 5 (a line keeps its index)
		{"boq.extras[1].quantity", "boq.extras[5].quantity", "m"},
		{"boq.extras[0]", "boq.extras[2]", "m"},
	}
	extras := []int{2, 5}
	for _, c := range cases {
		field, msg := formPath(c.path, "m", sources, extras)
		if field != c.wantField || msg != c.wantMsg {
			t.Errorf("formPath(%q) = %q, %q; want %q, %q", c.path, field, msg, c.wantField, c.wantMsg)
		}
	}
	if f, m := formPath("cells", "must have at least 1 item", nil, nil); f != "cells.pick" || !strings.Contains(m, "pick at least one") {
		t.Errorf("no cells: %q %q", f, m)
	}
}

// The typed cell's problems from sizing.Validate appear beside its inputs.
func TestInlineCellProblems(t *testing.T) {
	t.Parallel()
	v := designValues()
	v.Set("inline.id", "mine")
	v.Set("inline.rated_v", "2.7")
	v.Set("inline.surge_v", "2.5")
	v.Set("inline.capacitance_f", "100")
	v.Set("inline.esr_ohm", "")
	v.Set("inline.capacitance_tolerance_pct[1]", "20")
	ev := evaluate(context.Background(), readForm(v), store.DemoCell)
	got := map[string]string{}
	for _, p := range ev.problems {
		got[p.Field] = p.Message
	}
	want := map[string]string{
		"inline.surge_v":                   "must be at least rated_v (2.5 V < 2.7 V)",
		"inline.esr_ohm":                   "is required",
		"inline.capacitance_tolerance_pct": "must have exactly 2 items",
	}
	for f, w := range want {
		if !strings.Contains(got[f], w) {
			t.Errorf("%s: %q, want %q (all: %v)", f, got[f], w, got)
		}
	}
	if ev.report != nil {
		t.Error("a design with problems sized")
	}
}

// An empty optional field is the default; a given 0 is checked like any
// value, so sizing.Validate reports it.
func TestZeroIsNotEmpty(t *testing.T) {
	t.Parallel()
	v := designValues()
	v.Set("load.efficiency", "0")
	ev := evaluate(context.Background(), readForm(v), store.DemoCell)
	if len(ev.problems) != 1 || ev.problems[0].Field != "load.efficiency" {
		t.Fatalf("problems %v", ev.problems)
	}
	v.Set("load.efficiency", "  ")
	if ev := evaluate(context.Background(), readForm(v), store.DemoCell); len(ev.problems) != 0 || ev.sized.Load.Efficiency != nil {
		t.Errorf("blank efficiency: problems %v", ev.problems)
	}
}
