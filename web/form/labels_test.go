package form

import (
	"testing"

	"capbank/sizing"
)

// TestPageMessageUsesLabels: a message on the page names the fields it
// mentions by their labels, with their values where it does not quote them
// already; the JSON keys stay for API problems (issue 17).
func TestPageMessageUsesLabels(t *testing.T) {
	t.Parallel()
	surge := 2.5
	d := &sizing.Design{
		Window: sizing.Window{MaxV: 48, MinV: 60},
		Cells:  []sizing.Cell{{ID: "a", RatedV: 2.7, CapacitanceF: 650, ESROhm: 0.8e-3, SurgeV: &surge}},
	}
	values := ValuesOf(d)
	cell := ValuesOf(d.Cells[0])
	const nb = "\u00a0"
	for _, tc := range []struct {
		name, field, msg string
		values           Values
		want             string
	}{
		// sizing.cellRules' message: the figures are quoted already.
		{"cell in a design", "cells[0].surge_v", "must be at least rated_v (2.5 V < 2.7 V)", values,
			"must be at least the rated voltage (2.5 V < 2.7 V)"},
		{"cell on its own", "surge_v", "must be at least rated_v", cell,
			"must be at least the rated voltage (2.7" + nb + "V)"},
		{"design key", "window.min_v", "must be below window.max_v (60 V ≥ 48 V)", values,
			"must be below the window top (60 V ≥ 48 V)"},
		{"key with value", "cells[0].rated_v", "check window.max_v and rated_v", values,
			"check the window top (48" + nb + "V) and the rated voltage (2.7" + nb + "V)"},
		{"pair, one missing", "cells[0].cold_esr_temp_c", "cold_esr_factor and cold_esr_temp_c go together: give both or neither", values,
			"the cold ESR factor and the temperature of the cold ESR factor go together: give both or neither"},
		{"acronym kept", "cells[0].esr_ohm", "esr_ohm is zero", values, "the ESR (DC) (800" + nb + "µΩ) is zero"},
		{"words left alone", "load.efficiency", "must be at most 1, e.g. 0.94", values, "must be at most 1, e.g. 0.94"},
	} {
		if got := PageMessage(tc.field, tc.msg, tc.values); got != tc.want {
			t.Errorf("%s: %q, want %q", tc.name, got, tc.want)
		}
	}
}

// TestMergeProblemsLabelsMessages: the design form's problems read in
// labels, the API's (sizing.Validate itself) in keys.
func TestMergeProblemsLabelsMessages(t *testing.T) {
	t.Parallel()
	surge := 2.5
	d := &sizing.Design{
		Window: sizing.Window{MaxV: 48, MinV: 24},
		Load:   sizing.Load{Steps: []sizing.Step{{PowerW: ptrF(100), DurationS: 1}}},
		Cells:  []sizing.Cell{{ID: "mine", RatedV: 2.7, CapacitanceF: 650, ESROhm: 0.8e-3, SurgeV: &surge}},
	}
	err := sizing.Validate(d)
	ve, ok := err.(sizing.ValidationError)
	if !ok {
		t.Fatalf("Validate: %v, want a ValidationError", err)
	}
	found := false
	for _, p := range ve {
		if p.Field == "cells[0].surge_v" {
			found = true
			if p.Message != "must be at least rated_v (2.5 V < 2.7 V)" {
				t.Errorf("API message %q changed", p.Message)
			}
		}
	}
	if !found {
		t.Fatalf("no surge_v problem in %v", ve)
	}
	page := MergeProblems(Decoded{Design: d, Sources: []string{""}}, ve)
	for _, p := range page {
		if p.Field == "inline.surge_v" {
			if want := "must be at least the rated voltage (2.5 V < 2.7 V)"; p.Message != want {
				t.Errorf("page message %q, want %q", p.Message, want)
			}
			return
		}
	}
	t.Errorf("no inline.surge_v problem in %v", page)
}

func ptrF(v float64) *float64 { return &v }
