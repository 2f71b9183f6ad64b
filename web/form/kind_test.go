package form

import (
	"net/url"
	"strings"
	"testing"
)

// TestKindChangeClearsTheValue: a step whose kind changed since the form
// was shown loses the value typed for the old kind (350 W must not become
// 350 A), with a note saying so; an unchanged kind keeps it (issue 17).
func TestKindChangeClearsTheValue(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name, kind, was, value string
		wantValue, wantNote    string
	}{
		{"power to current", "current", "power", "350", "", "from power (W) to current (A)"},
		{"current to resistance", "resistance", "current", "12", "", "from current (A) to resistance (Ω)"},
		{"to rest", "rest", "power", "350", "", "a rest step draws nothing"},
		{"same kind", "power", "power", "350", "350", ""},
		{"first showing", "current", "", "350", "350", ""},
		{"nothing typed", "current", "power", "", "", ""},
	} {
		f := Read(url.Values{
			"load.steps[0].kind": {tc.kind}, "load.steps[0].kind_was": {tc.was},
			"load.steps[0].value": {tc.value}, "load.steps[0].duration_s": {"10"},
		})
		if len(f.Steps) != 1 {
			t.Fatalf("%s: %d steps, want 1", tc.name, len(f.Steps))
		}
		r := f.Steps[0]
		if r.Value != tc.wantValue || r.Kind != tc.kind || r.Duration != "10" {
			t.Errorf("%s: step %+v, want kind %s value %q", tc.name, r, tc.kind, tc.wantValue)
		}
		if (tc.wantNote == "") != (r.KindNote == "") || !strings.Contains(r.KindNote, tc.wantNote) {
			t.Errorf("%s: note %q, want one saying %q", tc.name, r.KindNote, tc.wantNote)
		}
	}
}
