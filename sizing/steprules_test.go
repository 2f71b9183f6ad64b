package sizing

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/go-playground/validator/v10"
)

// divedSteps carries a load's steps under the tag load.steps had before
// stepRules, so that the validator dives into every step by reflection as
// Validate once did.
type divedSteps struct {
	Steps []Step `json:"steps" validate:"max=1000000,dive"`
}

// reflectStepRules is the validation of the steps as Validate did it with
// validator/v10 diving into load.steps: the reference stepRules must match.
func reflectStepRules(tb testing.TB, steps []Step) ValidationError {
	tb.Helper()
	err := designValidator().Struct(&divedSteps{Steps: steps})
	if err == nil {
		return nil
	}
	var ves validator.ValidationErrors
	if !errors.As(err, &ves) {
		tb.Fatalf("the validator failed: %v", err)
	}
	var out ValidationError
	for _, fe := range ves {
		out = append(out, FieldError{Field: "load." + fieldPath(fe.Namespace()), Rule: fe.Tag(), Message: ruleMessage(fe)})
	}
	return out
}

// corpusDesigns decodes every design of the demo files, the bad-design
// corpus (testdata/bad/designs and form) and the fuzz seeds and finds of
// FuzzDesign; those that do not decode carry no steps to check.
func corpusDesigns(tb testing.TB) map[string]*Design {
	tb.Helper()
	var files []string
	for _, pattern := range []string{"../testdata/*.json", "../testdata/bad/designs/*.json", "../testdata/bad/form/*.json",
		"testdata/fuzz/FuzzDesign/*"} {
		m, err := filepath.Glob(pattern)
		if err != nil {
			tb.Fatal(err)
		}
		files = append(files, m...)
	}
	out := map[string]*Design{}
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			tb.Fatal(err)
		}
		if strings.Contains(f, "fuzz") {
			data = fuzzInput(tb, f, data)
		}
		if d, err := DecodeDesign(bytes.NewReader(data)); err == nil {
			out[f] = d
		}
	}
	if len(out) < 50 {
		tb.Fatalf("only %d designs of %d files decode: the corpus is missing", len(out), len(files))
	}
	return out
}

// fuzzInput is the []byte argument of a "go test fuzz v1" corpus file.
func fuzzInput(tb testing.TB, name string, file []byte) []byte {
	tb.Helper()
	lines := strings.SplitN(string(file), "\n", 3)
	if len(lines) < 2 || lines[0] != "go test fuzz v1" {
		tb.Fatalf("%s: not a fuzz corpus file", name)
	}
	arg, ok := strings.CutPrefix(strings.TrimSpace(lines[1]), "[]byte(")
	arg, ok2 := strings.CutSuffix(arg, ")")
	if !ok || !ok2 {
		tb.Fatalf("%s: not a []byte argument", name)
	}
	s, err := strconv.Unquote(arg)
	if err != nil {
		tb.Fatalf("%s: %v", name, err)
	}
	return []byte(s)
}

// edgeSteps are steps at, just inside and just outside every bound of
// Step's tags, and at the values JSON cannot carry but Go callers and
// forms can (NaN, ±Inf, −0, the smallest subnormal), in every field.
func edgeSteps() []Step {
	values := []float64{math.NaN(), math.Inf(1), math.Inf(-1), 0, math.Copysign(0, -1), 5e-324, -5e-324,
		1, -1, 1e300, -1e300}
	for _, b := range []float64{0, 1e-9, 1e9, -1e9, 1e6, -1e6, 1e12, 1e-15} {
		values = append(values, b, math.Nextafter(b, math.Inf(1)), math.Nextafter(b, math.Inf(-1)))
	}
	var steps []Step
	for _, v := range values {
		v := v
		steps = append(steps,
			Step{PowerW: &v, DurationS: 1},
			Step{CurrentA: &v, DurationS: v},
			Step{ResistanceOhm: &v, DurationS: 1},
			Step{Rest: true, DurationS: v},
			Step{PowerW: &v, CurrentA: &v, ResistanceOhm: &v, DurationS: v})
	}
	return steps
}

// TestStepRulesMatchValidator: the loop that checks the steps gives, for
// every design of the bad corpus and the fuzz corpus and for steps at
// every edge of the ranges, the same problems as validator/v10 diving into
// load.steps, in the same order: field path, rule and message, one by one.
func TestStepRulesMatchValidator(t *testing.T) {
	t.Parallel()
	compared := 0
	check := func(name string, steps []Step) {
		t.Helper()
		want, got := reflectStepRules(t, steps), stepRules(steps)
		if len(got) != len(want) {
			t.Errorf("%s: %d step problems, the validator gives %d:\n got %v\nwant %v", name, len(got), len(want), got, want)
			return
		}
		for i := range want {
			if got[i] != want[i] {
				t.Errorf("%s: problem %d is %+v, the validator's %+v", name, i, got[i], want[i])
			}
		}
		compared += len(want)
	}
	designs := corpusDesigns(t)
	for name, d := range designs {
		check(filepath.Base(name), d.Load.Steps)
	}
	fromCorpus := compared
	check("edge values", edgeSteps())
	t.Logf("%d designs, %d step problems from the corpora and %d at the edges compared", len(designs), fromCorpus, compared-fromCorpus)
	if fromCorpus < 3 || compared-fromCorpus < 100 {
		t.Errorf("only %d problems from the corpora and %d at the edges compared: the test shows little", fromCorpus, compared-fromCorpus)
	}
}

// TestValidateReportsStepProblems: Validate gives every problem the
// validator finds in the steps, by path, rule and message, beside the
// design's other problems.
func TestValidateReportsStepProblems(t *testing.T) {
	t.Parallel()
	steps := edgeSteps()
	d := &Design{Window: Window{MaxV: 48, MinV: 24}, Load: Load{Steps: steps}, Cells: cellFamily(1)}
	want := reflectStepRules(t, steps)
	var got ValidationError
	if !errors.As(Validate(d), &got) {
		t.Fatal("Validate passed steps at and past every bound")
	}
	have := map[FieldError]bool{}
	for _, fe := range got {
		have[fe] = true
	}
	for _, fe := range want {
		if !have[fe] {
			t.Errorf("Validate does not report %+v", fe)
		}
	}
}

// TestStepRulesAllocateNothing: checking the 86 400 good steps of the
// logged day allocates nothing (a problem found allocates its message).
func TestStepRulesAllocateNothing(t *testing.T) {
	steps := dayProfile()
	if n := testing.AllocsPerRun(5, func() {
		if errs := stepRules(steps); errs != nil {
			t.Fatal(errs)
		}
	}); n != 0 {
		t.Errorf("%v allocations checking %d steps, want 0", n, len(steps))
	}
}
