package web

import (
	"capbank/web/form"
	"capbank/web/store"
	"context"
	"strings"
	"testing"
)

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
	ev := evaluate(context.Background(), form.Read(v), store.DemoCell)
	got := map[string]string{}
	for _, p := range ev.problems {
		got[p.Field] = p.Message
	}
	want := map[string]string{
		"inline.surge_v":                   "must be at least the rated voltage (2.5 V < 2.7 V)",
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
	ev := evaluate(context.Background(), form.Read(v), store.DemoCell)
	if len(ev.problems) != 1 || ev.problems[0].Field != "load.efficiency" {
		t.Fatalf("problems %v", ev.problems)
	}
	v.Set("load.efficiency", "  ")
	if ev := evaluate(context.Background(), form.Read(v), store.DemoCell); len(ev.problems) != 0 || ev.sized.Load.Efficiency != nil {
		t.Errorf("blank efficiency: problems %v", ev.problems)
	}
}
