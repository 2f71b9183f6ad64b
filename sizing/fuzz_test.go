package sizing

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"capbank/sizing/internal/approx"
)

// FuzzDesign feeds arbitrary bytes to the design decoder, the validator
// and, for designs small enough to size in a fuzzing budget, the solver.
// Whatever the input: no panic, and either a ValidationError naming a
// field, or a report with no NaN or Inf anywhere in it. Every design that
// Validate accepts must size to finite figures (Size returns ErrNotFinite
// rather than pass one on, so that error is a gap in validation), and the
// report is walked here as well, field by field.
func FuzzDesign(f *testing.F) {
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json", "logger-hold-up.json", "check-constant-current.json"} {
		if b, err := os.ReadFile(filepath.Join("..", "testdata", name)); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte(`{"window":{"max_v":5,"min_v":1},"load":{"steps":[{"power_w":-3,"duration_s":1},{"power_w":1e9,"duration_s":1e9}]},"cells":[{"id":"a","rated_v":2.7,"capacitance_f":1,"esr_ohm":1e-9,"leakage_a":1}]}`))
	f.Add([]byte(`{"window":{"max_v":100000,"min_v":1e-300},"load":{"steps":[{"resistance_ohm":1e-300,"duration_s":1e-300}]},"cells":["lib"]}`))
	// Designs at the floors and ceilings of the ranges (issue 14, item 4),
	// for the fuzzer to push past them.
	f.Add([]byte(`{"window":{"max_v":0.002,"min_v":0.001},"load":{"efficiency":0.01,"steps":[{"power_w":1e-15,"duration_s":1e-9},{"power_w":-1e9,"duration_s":1e9}]},"eol":{"capacitance_factor":0.1,"esr_factor":100},"cells":[{"id":"a","rated_v":0.1,"capacitance_f":1e-6,"esr_ohm":1e-6,"leakage_a":1e-12,"max_current_a":5e-324,"mass_kg":5e-324,"thermal_resistance_k_per_w":5e-324}]}`))
	f.Add([]byte(`{"window":{"max_v":100000,"min_v":1},"cell_max_v":1000,"ambient_c":-100,"life":{"temp_step_k":1,"voltage_step_v":0.01},"balancing":{"kind":"active","quiescent_a":1e-12},"standby_h":1e6,"load":{"steps":[{"current_a":1e6,"duration_s":1e-9},{"resistance_ohm":5e-324,"duration_s":1}]},"cells":[{"id":"a","rated_v":1000,"capacitance_f":1e6,"esr_ohm":1e4,"rated_life_h":1e7,"rated_life_temp_c":200}]}`))
	f.Add([]byte(`{"window":{"max_v":27,"min_v":13.5},"balancing":{"leakage_spread_a":1e-12,"current_multiple":1},"load":{"steps":[{"power_w":1e-12,"duration_s":10}]},"cells":[{"id":"a","rated_v":2.7,"capacitance_f":100,"esr_ohm":0.01,"leakage_a":1000}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		d, err := DecodeDesign(strings.NewReader(string(data)))
		if err != nil {
			requireFieldErrors(t, err)
			return
		}
		if err := Validate(d); err != nil {
			requireFieldErrors(t, err)
			return
		}
		// Keep each run within a fuzzing budget: sizing is linear in the
		// steps of the pass (see the benchmarks), so big passes add nothing
		// but time here.
		repeat := 1
		if d.Load.Repeat != nil {
			repeat = *d.Load.Repeat
		}
		if len(d.Load.Steps)*repeat*len(d.Cells) > 2000 {
			return
		}
		r, err := Size(d)
		if errors.Is(err, ErrNotFinite) {
			t.Fatalf("a figure came out NaN or Inf for %s", data)
		}
		if err != nil {
			t.Fatalf("Size of a valid design: %v", err)
		}
		if len(r.Candidates) != len(d.Cells) {
			t.Fatalf("%d candidates for %d cells", len(r.Candidates), len(d.Cells))
		}
		approx.AllFinite(t, "report", r)
	})
}

func requireFieldErrors(t *testing.T, err error) {
	t.Helper()
	var ve ValidationError
	if !errors.As(err, &ve) || len(ve) == 0 {
		t.Fatalf("error %v is not a ValidationError", err)
	}
	for _, fe := range ve {
		if fe.Field == "" || fe.Message == "" {
			t.Fatalf("a problem without a field or message: %+v", fe)
		}
	}
}
