package main

// These tests run capbank measure end to end on the invented demo logs in
// testdata/measure/, whose comment lines give the model each was made
// from.

import (
	"context"
	"encoding/json"
	"io"
	"math"
	"os"
	"strings"
	"testing"

	"capbank/sizing/measure"
)

const (
	ccDemoLog       = "../../testdata/measure/cc-discharge.csv"
	resistorDemoLog = "../../testdata/measure/resistor-discharge.csv"
	holdDemoLog     = "../../testdata/measure/hold.csv"
)

// measureOK runs capbank measure with args, requires success and no stderr,
// and returns stdout.
func measureOK(t *testing.T, args ...string) string {
	t.Helper()
	status, stdout, stderr := runCapbank(t, context.Background(), append([]string{"measure"}, args...)...)
	if status != 0 || stderr != "" {
		t.Fatalf("capbank measure %s: exit status %d, stderr:\n%s", strings.Join(args, " "), status, stderr)
	}
	return stdout
}

// decodeStrict decodes out into v, every key a field of v.
func decodeStrict(t *testing.T, out string, v any) {
	t.Helper()
	dec := json.NewDecoder(strings.NewReader(out))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		t.Fatalf("the JSON does not decode as %T: %v\n%s", v, err, out)
	}
}

// hasKeys fails unless the JSON object out has every key.
func hasKeys(t *testing.T, out string, keys ...string) {
	t.Helper()
	var m map[string]any
	if err := json.Unmarshal([]byte(out), &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range keys {
		if _, ok := m[k]; !ok {
			t.Errorf("JSON has no key %q", k)
		}
	}
}

func within(t *testing.T, name string, got, want, rel float64) {
	t.Helper()
	if math.Abs(got-want) > rel*math.Abs(want) {
		t.Errorf("%s = %.6g, want %.6g ± %g %%", name, got, want, 100*rel)
	}
}

func TestMeasureJSON(t *testing.T) {
	t.Parallel()
	t.Run("constant-current", func(t *testing.T) {
		t.Parallel()
		out := measureOK(t, "--method", "constant-current", "--rated-v", "2.7", "--format", "json", ccDemoLog)
		var r measure.ConstantCurrentResult
		decodeStrict(t, out, &r)
		hasKeys(t, out, "capacitance_f", "esr_ohm", "time_constant_s", "two_point_capacitance_f", "r_squared", "warnings")
		// The log's model (its comment lines): 100 F, 25 mΩ; the issue's
		// tolerances, 1 % and 5 %.
		within(t, "capacitance_f", r.CapacitanceF, 100, 0.01)
		within(t, "esr_ohm", *r.ESROhm, 0.025, 0.05)
		if r.Method != "constant-current" || r.CurrentSource != "log" {
			t.Errorf("method %q, current from %q", r.Method, r.CurrentSource)
		}
	})
	t.Run("resistor", func(t *testing.T) {
		t.Parallel()
		out := measureOK(t, "--method=resistor", "--resistor-ohm=2", "--format=json", resistorDemoLog)
		var r measure.ResistorDischargeResult
		decodeStrict(t, out, &r)
		hasKeys(t, out, "capacitance_f", "esr_ohm", "time_constant_s")
		// The log's model: 10 F, 0.1 Ω, τ = (2 + 0.1)·10 = 21 s.
		within(t, "capacitance_f", r.CapacitanceF, 10, 0.01)
		within(t, "esr_ohm", *r.ESROhm, 0.1, 0.05)
		within(t, "time_constant_s", r.TimeConstantS, 21, 0.01)
	})
	t.Run("hold", func(t *testing.T) {
		t.Parallel()
		out := measureOK(t, "--method", "hold", "--capacitance-f", "10", "--at", "43200, 77760", "--format", "json", holdDemoLog)
		var r measure.HoldResult
		decodeStrict(t, out, &r)
		hasKeys(t, out, "leakage_a", "parallel_resistance_ohm", "points")
		// The log's model: 200 kΩ across 10 F; late in the day the
		// redistribution term has died away, so I = V/200 kΩ ≈ 12.9 µA at
		// 2.58 V.
		if len(r.Points) != 2 {
			t.Fatalf("%d points, want 2", len(r.Points))
		}
		within(t, "parallel_resistance_ohm", *r.ParallelResistanceOhm, 2e5, 0.01)
		within(t, "leakage_a", r.LeakageA, r.LeakageAtV/2e5, 0.01)
	})
	t.Run("timed", func(t *testing.T) {
		t.Parallel()
		out := measureOK(t, "--method", "timed", "--v0", "1.5", "--v1", "0.5", "--seconds", "68", "--resistor-ohm", "1000", "--format", "json")
		var r measure.TimedDischarge
		decodeStrict(t, out, &r)
		// The issue: 68 mF quick (a bench fact), 68/(1000·ln 3) = 61.9 mF exact.
		within(t, "quick_capacitance_f", r.QuickCapacitanceF, 0.068, 1e-12)
		within(t, "capacitance_f", r.CapacitanceF, 68/(1000*math.Log(3)), 1e-12)
	})
}

func TestMeasureText(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		args []string
		want []string // lines (trimmed of the table's spacing) that must appear
	}{
		{
			// The bench case: 61.9 mF exact, 68 mF quick, 9.86 %
			// (ln 3 − 1) high.
			name: "timed",
			args: []string{"--method", "timed", "--v0", "1.5", "--v1", "0.5", "--seconds", "68", "--resistor-ohm", "1000"},
			want: []string{"Timed resistor discharge", "capacitance, exact t/(R·ln(V0/V1)) 61.9 mF",
				"capacitance, quick t·I/ΔV 68 mF", "quick estimate's error 9.86 %", "Warnings: none"},
		},
		{
			// The demo log's model: 100 F, 25 mΩ, 1 A; U1, U2 of 2.7 V.
			name: "constant-current",
			args: []string{"--method", "constant-current", "--rated-v", "2.7", ccDemoLog},
			want: []string{"Constant-current discharge (IEC 62391-1), " + ccDemoLog + ", UR 2.7 V",
				"capacitance C = I/|slope| (fit t1–t2) 100 F", "U1 = 0.8·UR 2.16 V", "U2 = 0.4·UR 1.08 V",
				"discharge start t0 (by current) 0 s", "Warnings: none"},
		},
		{
			name: "hold",
			args: []string{"--method", "hold", "--capacitance-f", "10", holdDemoLog},
			want: []string{"Open-circuit hold, " + holdDemoLog, "capacitance used 10 F", "fit window 8640 s",
				"at (s) voltage (V) dV/dt (V/s) leakage (µA) parallel R (kΩ) samples"},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			out := measureOK(t, tc.args...)
			lines := map[string]bool{}
			for _, l := range strings.Split(out, "\n") {
				lines[strings.Join(strings.Fields(l), " ")] = true
			}
			for _, w := range tc.want {
				if !lines[w] {
					t.Errorf("no line %q in:\n%s", w, out)
				}
			}
		})
	}
}

// Not parallel: replaces the package's stdin.
func TestMeasureFromStdin(t *testing.T) {
	data, err := os.ReadFile(resistorDemoLog)
	if err != nil {
		t.Fatal(err)
	}
	defer func(r io.Reader) { stdin = r }(stdin)
	stdin = strings.NewReader(string(data))
	status, stdout, stderr := runCapbank(t, context.Background(), "measure", "--method", "resistor", "--resistor-ohm", "2", "--format", "json", "-")
	if status != 0 || stderr != "" {
		t.Fatalf("exit status %d, stderr %s", status, stderr)
	}
	var r measure.ResistorDischargeResult
	decodeStrict(t, stdout, &r)
	within(t, "capacitance_f", r.CapacitanceF, 10, 0.01) // the log's model
}

func TestMeasureExitStatus2(t *testing.T) {
	t.Parallel()
	badCSV := writeFile(t, "bad.csv", "# bench log\ntime_s,voltage_v\n0,2.7\n1,2.6\n2,abc\n")
	short := writeFile(t, "short.csv", "time_s,voltage_v,current_a\n-1,2.7,0\n0,2.69,1\n10,2.4,1\n20,2.1,1\n30,1.8,1\n40,1.5,1\n")
	tests := []struct {
		name string
		args []string
		want string // a part of stderr
	}{
		{"no method", []string{ccDemoLog}, "give --method"},
		{"unknown method", []string{"--method", "ac", ccDemoLog}, `--method must be constant-current, resistor, hold or timed (got "ac")`},
		{"bad format", []string{"--method", "hold", "--capacitance-f", "1", "--format", "xml", holdDemoLog}, "--format must be text or json"},
		{"flag of another method", []string{"--method", "hold", "--capacitance-f", "1", "--rated-v", "2.7", holdDemoLog},
			"--rated-v does not apply to --method hold (its flags: --capacitance-f, --at)"},
		{"required flag missing", []string{"--method", "constant-current", ccDemoLog}, "--method constant-current needs --rated-v"},
		{"timed flags missing", []string{"--method", "timed", "--v0", "1.5"}, "--method timed needs --v1"},
		{"not a number", []string{"--method", "resistor", "--resistor-ohm", "2k", resistorDemoLog}, `invalid value "2k" for flag -resistor-ohm`},
		{"bad --at item", []string{"--method", "hold", "--capacitance-f", "1", "--at", "10,ten", holdDemoLog}, `--at: item 2 ("ten") is not a number`},
		{"no log", []string{"--method", "resistor", "--resistor-ohm", "2"}, "give the log file"},
		{"two logs", []string{"--method", "resistor", "--resistor-ohm", "2", resistorDemoLog, holdDemoLog}, "give one log file, not 2"},
		{"timed with a log", []string{"--method", "timed", "--v0", "1.5", "--v1", "0.5", "--seconds", "68", "--resistor-ohm", "1000", holdDemoLog}, "takes no log"},
		// Line 5 of the file, hand counted (a comment, the header, three rows).
		{"bad CSV line", []string{"--method", "resistor", "--resistor-ohm", "2", badCSV}, badCSV + `: line 5, voltage_v: "abc" is not a number`},
		// U2 = 0.4 × 2.7 V = 1.08 V (sizing/REFERENCES.md 1.6): the log stops at 1.5 V.
		{"log short of U2", []string{"--method", "constant-current", "--rated-v", "2.7", short}, short + ": the voltage falls to U1 = 2.16 V"},
		{"log short of U2 names U2", []string{"--method", "constant-current", "--rated-v", "2.7", short}, "never to U2 = 1.08 V (0.4 × --rated-v 2.7 V)"},
		{"value named by its flag", []string{"--method", "timed", "--v0", "0.5", "--v1", "1.5", "--seconds", "68", "--resistor-ohm", "1000"},
			"--v1: must be below the start voltage --v0 (1.5 V ≥ 0.5 V)"},
		{"NaN given", []string{"--method", "resistor", "--resistor-ohm", "NaN", resistorDemoLog}, "--resistor-ohm: must be a finite number"},
		{"current needed", []string{"--method", "constant-current", "--rated-v", "2.5", resistorDemoLog}, "--current-a: is required: the log has no current_a column"},
		{"time outside the hold", []string{"--method", "hold", "--capacitance-f", "10", "--at", "1e9", holdDemoLog}, "--at (item 1): 1e+09 s is outside the log"},
		// Issue 14, item 9: a denormal end voltage answered "V0/V1 = +Inf".
		{"denormal end voltage", []string{"--method", "timed", "--v0", "1.5", "--v1", "1e-320", "--seconds", "68", "--resistor-ohm", "1000"},
			"--v1: is 1e-320 V, below 1e-06 V"},
		{"absurd resistor", []string{"--method", "resistor", "--resistor-ohm", "1e-300", resistorDemoLog}, "--resistor-ohm: is 1e-300 Ω, below 1e-06 Ω"},
		{"absurd capacitance", []string{"--method", "hold", "--capacitance-f", "1e300", holdDemoLog}, "--capacitance-f: is 1e+300 F, above 1e+06 F"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			status, stdout, stderr := runCapbank(t, context.Background(), append([]string{"measure"}, tc.args...)...)
			if status != 2 || stdout != "" {
				t.Errorf("exit status %d, stdout %q; want 2 and nothing", status, stdout)
			}
			if !strings.Contains(stderr, tc.want) {
				t.Errorf("stderr %q, want it to contain %q", stderr, tc.want)
			}
		})
	}
}

func TestMeasureMissingFile(t *testing.T) {
	t.Parallel()
	// As capbank size with a design file it cannot open: status 1.
	status, _, stderr := runCapbank(t, context.Background(), "measure", "--method", "hold", "--capacitance-f", "1", "no-such-log.csv")
	if status != 1 || !strings.Contains(stderr, `cannot read the log "no-such-log.csv"`) {
		t.Errorf("exit status %d, stderr %q; want 1 naming the file", status, stderr)
	}
}
