package form

import (
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
		{"cells[0].esr_ohm", "cells.pick", "demo-2v7-650f, ESR (DC): m"},
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
