package measure

import (
	"errors"
	"math"
	"slices"
	"testing"

	"capbank/sizing"
	"capbank/sizing/internal/approx"
)

// problemsOf lists the field and rule of each problem of a
// sizing.ValidationError, as "field rule".
func problemsOf(t *testing.T, err error) []string {
	t.Helper()
	var ve sizing.ValidationError
	if !errors.As(err, &ve) {
		t.Fatalf("error %T %v, want a sizing.ValidationError", err, err)
	}
	out := make([]string, len(ve))
	for i, p := range ve {
		out[i] = p.Field + " " + p.Rule
	}
	return out
}

func TestRunProblems(t *testing.T) {
	t.Parallel()
	log := ccLog(96, 0.014, 1, 2.7, -1, 0.1, 0, 1, true)
	bad := func(field string) sizing.FieldError {
		return sizing.FieldError{Field: field, Rule: "number", Message: "is not a number"}
	}
	tests := []struct {
		name string
		in   Input
		want []string // "field rule", in order
	}{
		{"nothing given", Input{Method: "constant-current"}, []string{"log required", "rated_v required"}},
		{"every required figure of timed, in the method's order",
			Input{Method: "timed", V1V: ptr(0.5)}, []string{"v0_v required", "duration_s required", "resistor_ohm required"}},
		// The log is needed when the method is not known, as the form has
		// always said.
		{"unknown method", Input{Method: "ac"}, []string{"log required", "method oneof"}},
		{"no method", Input{Log: log}, []string{"method oneof"}},
		// The edge's problems come in the order of the fields, the log and
		// start_s first, and a field with one is never also missing.
		{"the edge's problems in field order", Input{Method: "timed", V1V: ptr(0.5), DurationS: ptr(68),
			Unread: sizing.ValidationError{bad("resistor_ohm"), bad("v0_v"), bad("start_s")}},
			[]string{"start_s number", "v0_v number", "resistor_ohm number"}},
		{"a log the edge could not read is not also missing", Input{Method: "hold", CapacitanceF: ptr(10),
			Unread: sizing.ValidationError{{Field: "log", Rule: "csv", Message: `line 3, voltage_v: "abc" is not a number`}}},
			[]string{"log csv"}},
		{"items of at_s", Input{Method: "hold", Log: log, CapacitanceF: ptr(10),
			Unread: sizing.ValidationError{bad("at_s[1]"), bad("at_s[3]")}},
			[]string{"at_s[1] number", "at_s[3] number"}},
		// The method's own checks come after: v1_v above v0_v.
		{"the method's own problem", Input{Method: "timed", V0V: ptr(0.5), V1V: ptr(1.5), DurationS: ptr(68), ResistorOhm: ptr(1000)},
			[]string{"v1_v below_v0"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := Run(tc.in)
			if got := problemsOf(t, err); !slices.Equal(got, tc.want) {
				t.Errorf("problems %q, want %q", got, tc.want)
			}
		})
	}
}

// An input the method does not take is ignored, and so is the edge's
// problem with it: a form sends every field whatever the method.
func TestRunIgnoresOtherInputs(t *testing.T) {
	t.Parallel()
	r, err := Run(Input{Method: "timed", V0V: ptr(1.5), V1V: ptr(0.5), DurationS: ptr(68), ResistorOhm: ptr(1000),
		RatedV: ptr(2.7), Unread: sizing.ValidationError{{Field: "capacitance_f", Rule: "number", Message: "is not a number"}}})
	if err != nil {
		t.Fatal(err)
	}
	// 68/(1000·ln 3) = 61.9 mF, the timed method's exact figure
	// (TestTimedResistorDischarge).
	approx.Near(t, "CapacitanceF", r.Timed.CapacitanceF, 68/(1000*math.Log(3)), 1e-12)
}

func TestRunResult(t *testing.T) {
	t.Parallel()
	// ccLog's cell: 96 F, 14 mΩ, discharged at 1 A from 2.7 V.
	log := ccLog(96, 0.014, 1, 2.7, -1, 0.1, 0, 1, true)
	base := sizing.Cell{ID: "demo-100f", Name: "demo 100 F", Source: "datasheet", RatedV: 2.7, CapacitanceF: 100,
		CapacitanceTolerancePct: []float64{-10, 20}, ESROhm: 0.012, MassKg: ptr(0.02)}

	t.Run("with a datasheet", func(t *testing.T) {
		t.Parallel()
		r, err := Run(Input{Method: "constant-current", Log: log, RatedV: ptr(2.7), Datasheet: &base})
		if err != nil {
			t.Fatal(err)
		}
		if r.Method != "constant-current" || r.ConstantCurrent == nil || r.Resistor != nil || r.Hold != nil || r.Timed != nil {
			t.Fatalf("method %q, results %v %v %v %v; want the constant-current one alone", r.Method, r.ConstantCurrent, r.Resistor, r.Hold, r.Timed)
		}
		if _, ok := r.Details().(ConstantCurrentResult); !ok {
			t.Errorf("Details is a %T, want a ConstantCurrentResult", r.Details())
		}
		approx.Near(t, "Figures.CapacitanceF", *r.Figures.CapacitanceF, 96, 1e-6)
		approx.Near(t, "Figures.ESROhm", *r.Figures.ESROhm, 0.014, 1e-6)
		// 96 F against 100 F −10 %/+20 % is within; 14 mΩ against a 12 mΩ
		// maximum is not (CompareWithDatasheet's rules).
		if len(r.Comparison) != 2 || !r.Comparison[0].Within || r.Comparison[1].Within {
			t.Errorf("comparison %+v, want capacitance within and ESR not", r.Comparison)
		}
		if r.Cell == nil || r.Cell.ID != "demo-100f-measured" || r.Cell.Notes != DraftCell(nil, r.Figures, r.Summary).Notes {
			t.Fatalf("cell %+v, want the datasheet's, measured, with the test's summary", r.Cell)
		}
		approx.Near(t, "Cell.CapacitanceF", r.Cell.CapacitanceF, 96, 1e-6)
		if base.CapacitanceF != 100 || base.ESROhm != 0.012 || r.Cell.MassKg == base.MassKg {
			t.Errorf("the datasheet cell was changed or shared: %+v", base)
		}
	})
	t.Run("without", func(t *testing.T) {
		t.Parallel()
		r, err := Run(Input{Method: "constant-current", Log: log, RatedV: ptr(2.7)})
		if err != nil {
			t.Fatal(err)
		}
		// The test gives C, ESR and UR: enough for a new cell.
		if r.Comparison != nil || r.Cell == nil || r.Cell.ID != "measured" || r.Cell.RatedV != 2.7 {
			t.Errorf("comparison %v, cell %+v; want none and a new cell of 2.7 V", r.Comparison, r.Cell)
		}
	})
	t.Run("no rated voltage, no cell", func(t *testing.T) {
		t.Parallel()
		r, err := Run(Input{Method: "timed", V0V: ptr(1.5), V1V: ptr(0.5), DurationS: ptr(68), ResistorOhm: ptr(1000)})
		if err != nil {
			t.Fatal(err)
		}
		if r.Cell != nil || r.Figures.ESROhm != nil {
			t.Errorf("cell %+v from a timed discharge, which gives no ESR or rated voltage", r.Cell)
		}
	})
}

// The method table is what the command line's flags and the form follow:
// a change here changes both.
func TestMethods(t *testing.T) {
	t.Parallel()
	var names []string
	for _, m := range Methods() {
		names = append(names, m.Name)
		if got, ok := MethodNamed(m.Name); !ok || got.Name != m.Name {
			t.Errorf("MethodNamed(%q) = %v, %v", m.Name, got, ok)
		}
	}
	if want := []string{"constant-current", "resistor", "hold", "timed"}; !slices.Equal(names, want) {
		t.Errorf("methods %q, want %q", names, want)
	}
	if _, ok := MethodNamed("ac"); ok {
		t.Error(`MethodNamed("ac") found a method`)
	}
	// A caller that changes its copy does not change the table.
	Methods()[0].Required[0] = "x"
	if m, _ := MethodNamed("constant-current"); m.Required[0] != "rated_v" {
		t.Errorf("the table changed through a copy: %v", m)
	}
}
