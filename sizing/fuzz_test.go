package sizing

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzDesign feeds arbitrary bytes to the design decoder, the validator
// and, for designs small enough to size in a fuzzing budget, the solver.
// Whatever the input: no panic, and either a ValidationError naming a
// field, or a report with no NaN or Inf (Size returns ErrNotFinite rather
// than pass one on, so that error is a bug).
func FuzzDesign(f *testing.F) {
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json", "logger-hold-up.json", "check-constant-current.json"} {
		if b, err := os.ReadFile(filepath.Join("..", "testdata", name)); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte(`{"window":{"max_v":5,"min_v":1},"load":{"steps":[{"power_w":-3,"duration_s":1},{"power_w":1e9,"duration_s":1e9}]},"cells":[{"id":"a","rated_v":2.7,"capacitance_f":1,"esr_ohm":1e-9,"leakage_a":1}]}`))
	f.Add([]byte(`{"window":{"max_v":100000,"min_v":1e-300},"load":{"steps":[{"resistance_ohm":1e-300,"duration_s":1e-300}]},"cells":["lib"]}`))
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
