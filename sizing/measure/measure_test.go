package measure

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat"

	"capbank/sizing"
	"capbank/sizing/internal/approx"
)

// fieldOf returns the field and rule of a one-problem sizing.ValidationError.
func fieldOf(t *testing.T, err error) (string, string, string) {
	t.Helper()
	var ve sizing.ValidationError
	if !errors.As(err, &ve) || len(ve) == 0 {
		t.Fatalf("error %T %v, want a sizing.ValidationError", err, err)
	}
	return ve[0].Field, ve[0].Rule, ve[0].Message
}

func hasWarning(ws []Warning, code string) bool {
	for _, w := range ws {
		if w.Code == code {
			return true
		}
	}
	return false
}

func TestTimedResistorDischarge(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name                 string
		v0, v1, seconds, ohm float64
		exact, quick, errPct float64
	}{
		{
			// The case. quick: 68 s × ((1.5 + 0.5)/(2·1000) A) / 1 V
			// = 68 mF, a bench fact of the trade (no published source).
			// exact: 68/(1000·ln 3) = 61.896 mF (REFERENCES.md 3.6), and the
			// error (r + 1)·ln r/(2(r − 1)) − 1 = ln 3 − 1 at r = 3.
			name: "issue: 1 kΩ, 1.5 V to 0.5 V in 68 s", v0: 1.5, v1: 0.5, seconds: 68, ohm: 1000,
			exact: 68 / (1000 * math.Log(3)), quick: 0.068, errPct: (math.Log(3) - 1) * 100,
		},
		{
			// Own case, worked by hand: 100 Ω, 5 V to 2.5 V in 60 s.
			// exact = 60/(100·ln 2) = 0.865617 F; I = (5 + 2.5)/(2·100)
			// = 37.5 mA, quick = 60·0.0375/2.5 = 0.9 F; error
			// = 0.9/0.865617 − 1 = 1.5·ln 2 − 1 = 3.972 %.
			name: "own: 100 Ω, 5 V to 2.5 V in 60 s", v0: 5, v1: 2.5, seconds: 60, ohm: 100,
			exact: 60 / (100 * math.Ln2), quick: 0.9, errPct: (1.5*math.Ln2 - 1) * 100,
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got, err := TimedResistorDischarge(tc.v0, tc.v1, tc.seconds, tc.ohm)
			if err != nil {
				t.Fatal(err)
			}
			approx.Near(t, "CapacitanceF", got.CapacitanceF, tc.exact, 1e-12)
			approx.Near(t, "QuickCapacitanceF", got.QuickCapacitanceF, tc.quick, 1e-12)
			approx.Near(t, "QuickErrorPct", got.QuickErrorPct, tc.errPct, 1e-9)
			// τ = R·C by definition.
			approx.Near(t, "TimeConstantS", got.TimeConstantS, tc.ohm*tc.exact, 1e-12)
			approx.Near(t, "MeanCurrentA", got.MeanCurrentA, (tc.v0+tc.v1)/(2*tc.ohm), 1e-12)
		})
	}
	t.Run("issue figures as the issue states them", func(t *testing.T) {
		t.Parallel()
		got, _ := TimedResistorDischarge(1.5, 0.5, 68, 1000)
		// The issue: "68 mF by the quick estimate and 61.9 mF by the exact
		// formula", to the figures it gives.
		if math.Abs(got.QuickCapacitanceF-0.068) > 0.5e-3 || math.Abs(got.CapacitanceF-0.0619) > 0.05e-3 {
			t.Errorf("quick %.4g F, exact %.4g F; want 68 mF and 61.9 mF", got.QuickCapacitanceF, got.CapacitanceF)
		}
	})
	t.Run("the quick error depends only on V0/V1", func(t *testing.T) {
		t.Parallel()
		// Invariant of the formulas (QuickErrorPct doc): scaling both
		// voltages, the time or the resistor leaves the error alone.
		a, _ := TimedResistorDischarge(1.5, 0.5, 68, 1000)
		b, _ := TimedResistorDischarge(15, 5, 3, 47)
		approx.Near(t, "QuickErrorPct scaled", b.QuickErrorPct, a.QuickErrorPct, 1e-12)
	})
}

func TestTimedResistorDischargeErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name                 string
		v0, v1, seconds, ohm float64
		field, rule          string
	}{
		{"v1 equal to v0", 1.5, 1.5, 68, 1000, "v1_v", "below_v0"},
		{"v1 above v0", 0.5, 1.5, 68, 1000, "v1_v", "below_v0"},
		{"zero v1", 1.5, 0, 68, 1000, "v1_v", "gt"},
		{"negative v0", -1.5, 0.5, 68, 1000, "v0_v", "gt"},
		{"zero time", 1.5, 0.5, 0, 1000, "duration_s", "gt"},
		{"negative resistor", 1.5, 0.5, 68, -1, "resistor_ohm", "gt"},
		{"NaN time", 1.5, 0.5, math.NaN(), 1000, "duration_s", "finite"},
		{"infinite v0", math.Inf(1), 0.5, 68, 1000, "v0_v", "finite"},
		// Issue 14, item 9: outside the bench ranges, each input is refused
		// by its own field (1e-310 Ω once overflowed C = 68/(1e-310·ln 3)
		// and was named only as "inputs"; v1 = 1e-320 V gave V0/V1 = +Inf).
		{"denormal resistor", 1.5, 0.5, 68, 1e-310, "resistor_ohm", "range"},
		{"denormal v1", 1.5, 1e-320, 68, 1000, "v1_v", "range"},
		{"huge v0", 1e300, 0.5, 68, 1000, "v0_v", "range"},
		{"femtosecond", 1.5, 0.5, 1e-15, 1000, "duration_s", "range"},
		{"huge resistor", 1.5, 0.5, 68, 1e300, "resistor_ohm", "range"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := TimedResistorDischarge(tc.v0, tc.v1, tc.seconds, tc.ohm)
			field, rule, msg := fieldOf(t, err)
			if field != tc.field || rule != tc.rule {
				t.Errorf("got %s (%s): %s; want field %s, rule %s", field, rule, msg, tc.field, tc.rule)
			}
		})
	}
}

// ccLog is a synthetic constant-current discharge of a cell of capacitance
// c (F) and resistance r (Ω) at current i (A) from the rated voltage ur (V):
// rest samples at ur for t < 0, then the terminal voltage
// ur − i·r − (i/c)·t (REFERENCES.md 3.5) from t = 0, sampled every dt s from
// first, down to 0.3·ur. noise (V RMS) is added from a fixed seed; with
// withCurrent the log carries current_a (0 before the switch-on, i after,
// with 0.2 % RMS noise when noise is not 0).
func ccLog(c, r, i, ur, first, dt, noise float64, seed uint64, withCurrent bool) *Log {
	rng := rand.New(rand.NewPCG(seed, 0x5eed))
	log := &Log{}
	if withCurrent {
		log.CurrentA = []float64{}
	}
	for k := 0; ; k++ {
		tt := first + float64(k)*dt
		v, cur := ur, 0.0
		if tt >= 0 {
			v, cur = ur-i*r-i/c*tt, i
		}
		if v < 0.3*ur {
			break
		}
		log.TimeS = append(log.TimeS, tt)
		log.VoltageV = append(log.VoltageV, v+noise*rng.NormFloat64())
		if withCurrent {
			if noise != 0 {
				cur *= 1 + 0.002*rng.NormFloat64()
			}
			log.CurrentA = append(log.CurrentA, cur)
		}
	}
	return log
}

// TestConstantCurrentReferenceRecord is REFERENCES.md 10.6: true C = 2500 F,
// R = 0.4 mΩ, I = 27 A, UR = 2.7 V, v(t) = 2.6892 − 0.0108·t after the
// step; t1 = 49 s, t2 = 149 s, C = 2500 F, a line through 51 points with
// slope −0.0108 V/s and intercept 2.6892 V, ΔU3 = 10.8 mV, R_DC = 0.400 mΩ,
// ΔU3/UR = 0.4 %. Samples every 2 s at odd seconds (51 of them in
// [49 s, 149 s]), the switch-on at t = 0 given as the start.
func TestConstantCurrentReferenceRecord(t *testing.T) {
	t.Parallel()
	log := ccLog(2500, 0.0004, 27, 2.7, -3, 2, 0, 1, false)
	got, err := ConstantCurrentDischarge(log, 2.7, ptr(27), &DischargeOptions{StartS: ptr(0)})
	if err != nil {
		t.Fatal(err)
	}
	const tol = 1e-9 // exact arithmetic on a straight line (REFERENCES.md notes for test authors)
	approx.Near(t, "T1S", got.T1S, 49, tol)
	approx.Near(t, "T2S", got.T2S, 149, tol)
	if got.FitPoints != 51 {
		t.Errorf("FitPoints = %d, want 51 (REFERENCES.md 10.6)", got.FitPoints)
	}
	approx.Near(t, "SlopeVPerS", got.SlopeVPerS, -0.0108, tol)
	approx.Near(t, "LineAtStartV", got.LineAtStartV, 2.6892, tol)
	approx.Near(t, "CapacitanceF", got.CapacitanceF, 2500, tol)
	approx.Near(t, "TwoPointCapacitanceF", got.TwoPointCapacitanceF, 2500, tol)
	approx.Near(t, "DropV", got.DropV, 0.0108, 1e-6) // 2.7 − 2.6892, with the rounding of 2.6892
	approx.Near(t, "DropPct", got.DropPct, 0.4, 1e-6)
	if got.ESROhm == nil {
		t.Fatal("ESROhm = nil, want 0.4 mΩ")
	}
	approx.Near(t, "ESROhm", *got.ESROhm, 0.0004, 1e-6)
	// τ of the cell = R·C = 0.4 mΩ × 2500 F = 1 s (REFERENCES.md 10).
	approx.Near(t, "TimeConstantS", *got.TimeConstantS, 1, 1e-6)
	approx.Near(t, "RSquared", got.RSquared, 1, 1e-12)
	if len(got.Warnings) != 0 {
		t.Errorf("warnings %v, want none (ΔU3/UR = 0.4 %% < 5 %%, REFERENCES.md 10.6)", got.Warnings)
	}
	if got.StartRule != "given" || got.CurrentSource != "given" {
		t.Errorf("StartRule %q, CurrentSource %q; want given, given", got.StartRule, got.CurrentSource)
	}
}

// TestConstantCurrentRecoversCAndR: synthetic logs from the cell of
// REFERENCES.md 10.6 (2500 F, 0.4 mΩ, 27 A, UR 2.7 V) with 0.1 mV RMS noise
// (a 16-bit logger's step on a 5 V range is 76 µV) at 20 samples a second;
// the issue asks for C within 1 % and R within 5 %. Several seeds, all
// fixed, so the test is repeatable and not one lucky draw.
func TestConstantCurrentRecoversCAndR(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name        string
		withCurrent bool
		rule        string
	}{
		{"current logged", true, "current"},
		{"voltage only, current given", false, "voltage"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			for seed := uint64(1); seed <= 5; seed++ {
				log := ccLog(2500, 0.0004, 27, 2.7, -2, 0.05, 1e-4, seed, tc.withCurrent)
				got, err := ConstantCurrentDischarge(log, 2.7, ptr(27), nil)
				if err != nil {
					t.Fatal(err)
				}
				approx.Near(t, "CapacitanceF", got.CapacitanceF, 2500, 0.01)
				approx.Near(t, "TwoPointCapacitanceF", got.TwoPointCapacitanceF, 2500, 0.01)
				if got.ESROhm == nil {
					t.Fatalf("seed %d: ESROhm nil", seed)
				}
				approx.Near(t, "ESROhm", *got.ESROhm, 0.0004, 0.05)
				// The switch-on is the sample at t = 0 (the generator's).
				if got.StartS != 0 || got.StartRule != tc.rule {
					t.Errorf("seed %d: start %g s by %q, want 0 s by %q", seed, got.StartS, got.StartRule, tc.rule)
				}
				// 0.1 mV of noise in a 1.08 V span: R² = 1 − 12·(1e-4/1.08)²
				// ≈ 0.9999999 (MaxResidualFraction doc).
				if got.RSquared < 0.99999 || len(got.Warnings) != 0 {
					t.Errorf("seed %d: R² %.7f, warnings %v; want ≥ 0.99999 and none", seed, got.RSquared, got.Warnings)
				}
				approx.Near(t, "ResidualRMSV", got.ResidualRMSV, 1e-4, 0.2)
				if tc.withCurrent {
					approx.Near(t, "CurrentA", got.CurrentA, 27, 0.001)
				}
			}
		})
	}
}

func TestConstantCurrentCases(t *testing.T) {
	t.Parallel()
	t.Run("log starts at the switch-on", func(t *testing.T) {
		t.Parallel()
		// No rest sample: V_before is UR, as documented, and the record of
		// REFERENCES.md 10.6 still gives R = 0.4 mΩ.
		log := ccLog(2500, 0.0004, 27, 2.7, 0, 0.05, 0, 1, true)
		got, err := ConstantCurrentDischarge(log, 2.7, nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		approx.Near(t, "ESROhm", *got.ESROhm, 0.0004, 1e-6)
		if got.VoltageBeforeV != 2.7 || !strings.Contains(strings.Join(got.Notes, "\n"), "taken as the rated voltage") {
			t.Errorf("VoltageBeforeV %g, notes %q; want UR with a note", got.VoltageBeforeV, got.Notes)
		}
	})
	t.Run("negative logged current", func(t *testing.T) {
		t.Parallel()
		log := ccLog(2500, 0.0004, 27, 2.7, -1, 0.05, 0, 1, true)
		for i := range log.CurrentA {
			log.CurrentA[i] = -log.CurrentA[i]
		}
		got, err := ConstantCurrentDischarge(log, 2.7, nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		// Same cell, so the same 2500 F (REFERENCES.md 10.6), by magnitude.
		approx.Near(t, "CapacitanceF", got.CapacitanceF, 2500, 0.005)
		if !hasWarning(got.Warnings, "negative_current") {
			t.Errorf("warnings %v, want negative_current", got.Warnings)
		}
	})
	t.Run("large drop", func(t *testing.T) {
		t.Parallel()
		// 27 A × 6 mΩ = 0.162 V = 6 % of 2.7 V, above the 5 % of IEC 62391-1
		// (REFERENCES.md 1.5).
		log := ccLog(2500, 0.006, 27, 2.7, -1, 0.05, 0, 1, true)
		got, err := ConstantCurrentDischarge(log, 2.7, nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		approx.Near(t, "ESROhm", *got.ESROhm, 0.006, 1e-6)
		if !hasWarning(got.Warnings, "large_drop") {
			t.Errorf("warnings %v, want large_drop", got.Warnings)
		}
	})
	t.Run("noisy", func(t *testing.T) {
		t.Parallel()
		// 25 mV RMS is 2.3 % of U1 − U2 = 1.08 V, above the 1 % threshold.
		log := ccLog(2500, 0.0004, 27, 2.7, -1, 0.5, 0.025, 3, true)
		got, err := ConstantCurrentDischarge(log, 2.7, nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !hasWarning(got.Warnings, "noisy") || !hasWarning(got.Warnings, "esr_uncertain") {
			t.Errorf("warnings %v, want noisy and esr_uncertain", got.Warnings)
		}
		// Still near 2500 F: 200 points of 25 mV noise give a slope error
		// of about 2.3 %·√(12/200) = 0.6 % (MaxResidualFraction doc).
		approx.Near(t, "CapacitanceF", got.CapacitanceF, 2500, 0.03)
	})
	t.Run("short log", func(t *testing.T) {
		t.Parallel()
		// Every 15 s from −15 s: [49 s, 149 s] holds 60, 75, …, 135 s, six
		// samples — fewer than 10.
		log := ccLog(2500, 0.0004, 27, 2.7, -15, 15, 0, 1, true)
		got, err := ConstantCurrentDischarge(log, 2.7, nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		if got.FitPoints != 6 || !hasWarning(got.Warnings, "short_log") {
			t.Errorf("FitPoints %d, warnings %v; want 6 and short_log", got.FitPoints, got.Warnings)
		}
		// The straight line still gives the exact capacitance (10.6).
		approx.Near(t, "CapacitanceF", got.CapacitanceF, 2500, 1e-9)
	})
	t.Run("coarse start", func(t *testing.T) {
		t.Parallel()
		// Every 1 s the line moves 10.8 mV between samples, 100 % of ΔU3.
		log := ccLog(2500, 0.0004, 27, 2.7, -1, 1, 0, 1, true)
		got, err := ConstantCurrentDischarge(log, 2.7, nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !hasWarning(got.Warnings, "coarse_start") {
			t.Errorf("warnings %v, want coarse_start", got.Warnings)
		}
	})
	t.Run("current varies", func(t *testing.T) {
		t.Parallel()
		log := ccLog(2500, 0.0004, 27, 2.7, -1, 0.5, 0, 1, true)
		for i := range log.CurrentA {
			if i%2 == 1 {
				log.CurrentA[i] *= 0.8 // every other sample 20 % low: a 10 % spread
			}
		}
		got, err := ConstantCurrentDischarge(log, 2.7, nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !hasWarning(got.Warnings, "current_varies") {
			t.Errorf("warnings %v, want current_varies", got.Warnings)
		}
	})
	t.Run("logged current wins over the given one", func(t *testing.T) {
		t.Parallel()
		log := ccLog(2500, 0.0004, 27, 2.7, -1, 0.5, 0, 1, true)
		got, err := ConstantCurrentDischarge(log, 2.7, ptr(30), nil)
		if err != nil {
			t.Fatal(err)
		}
		// The current the generator logged, 27 A ± 0.2 % noise averaged.
		approx.Near(t, "CurrentA", got.CurrentA, 27, 0.001)
		if got.CurrentSource != "log" || !strings.Contains(strings.Join(got.Notes, "\n"), "current_a (30 A) is not used") {
			t.Errorf("source %q, notes %q", got.CurrentSource, got.Notes)
		}
	})
	t.Run("charge before the discharge", func(t *testing.T) {
		t.Parallel()
		// A log that starts with a charge from 0.5 V up to UR: the first
		// fall through U1 is the discharge's.
		d := ccLog(2500, 0.0004, 27, 2.7, -1, 0.5, 0, 1, true)
		log := &Log{}
		for k := 0; k < 20; k++ {
			log.TimeS = append(log.TimeS, -30+float64(k))
			log.VoltageV = append(log.VoltageV, 0.5+0.11*float64(k))
			log.CurrentA = append(log.CurrentA, -27)
		}
		log.TimeS = append(log.TimeS, d.TimeS...)
		log.VoltageV = append(log.VoltageV, d.VoltageV...)
		log.CurrentA = append(log.CurrentA, d.CurrentA...)
		got, err := ConstantCurrentDischarge(log, 2.7, nil, nil)
		if err != nil {
			t.Fatal(err)
		}
		approx.Near(t, "CapacitanceF", got.CapacitanceF, 2500, 1e-6)
		approx.Near(t, "ESROhm", *got.ESROhm, 0.0004, 1e-6)
	})
}

func TestConstantCurrentErrors(t *testing.T) {
	t.Parallel()
	full := ccLog(2500, 0.0004, 27, 2.7, -1, 0.5, 0, 1, true)
	cut := func(minV float64) *Log {
		l := &Log{}
		for i, v := range full.VoltageV {
			if full.TimeS[i] > 0 && v < minV {
				break
			}
			l.TimeS = append(l.TimeS, full.TimeS[i])
			l.VoltageV = append(l.VoltageV, v)
			l.CurrentA = append(l.CurrentA, full.CurrentA[i])
		}
		return l
	}
	noCurrent := &Log{TimeS: full.TimeS, VoltageV: full.VoltageV}
	tests := []struct {
		name    string
		log     *Log
		ratedV  float64
		current *float64
		opts    *DischargeOptions
		field   string
		rule    string
		msg     string
	}{
		// U1 = 0.8 × 2.7 = 2.16 V, U2 = 0.4 × 2.7 = 1.08 V (REFERENCES.md 1.6).
		{"does not reach U2", cut(1.5), 2.7, nil, nil, "log", "reach_u2", "never to U2 = 1.08 V (0.4 × rated_v 2.7 V)"},
		{"does not reach U1", cut(2.3), 2.7, nil, nil, "log", "reach_u1", "never falls to U1 = 2.16 V"},
		// rated_v 5 V puts U1 at 4 V, above the whole 2.7 V log.
		{"never above U1", full, 5, nil, nil, "log", "above_u1", "never rises above U1 = 4 V"},
		{"no current at all", noCurrent, 2.7, nil, nil, "current_a", "required", "the log has no current_a column"},
		{"zero rated voltage", full, 0, nil, nil, "rated_v", "gt", "greater than 0"},
		{"NaN current", noCurrent, 2.7, ptr(math.NaN()), nil, "current_a", "finite", "finite"},
		{"start after t1", full, 2.7, nil, &DischargeOptions{StartS: ptr(60)}, "start_s", "before_t1", "already at or below U1 = 2.16 V"},
		{"start after the log", full, 2.7, nil, &DischargeOptions{StartS: ptr(1e6)}, "start_s", "in_log", "after the log's last sample"},
		{"too few points", ccLog(2500, 0.0004, 27, 2.7, -50, 50, 0, 1, true), 2.7, nil, nil, "log", "fit_points", "at least 3"},
		{"nil log", nil, 2.7, nil, nil, "log", "required", "is required"},
		{"time goes back", &Log{TimeS: []float64{0, 2, 1}, VoltageV: []float64{2.7, 2, 1}}, 2.7, ptr(1), nil,
			"log.time_s[2]", "increasing", "must strictly increase"},
		{"NaN voltage", &Log{TimeS: []float64{0, 1, 2}, VoltageV: []float64{2.7, math.NaN(), 1}}, 2.7, ptr(1), nil,
			"log.voltage_v[1]", "finite", "finite"},
		{"lengths differ", &Log{TimeS: []float64{0, 1, 2}, VoltageV: []float64{2.7, 1}}, 2.7, ptr(1), nil,
			"log.voltage_v", "len", "has 2 samples but time_s has 3"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := ConstantCurrentDischarge(tc.log, tc.ratedV, tc.current, tc.opts)
			field, rule, msg := fieldOf(t, err)
			if field != tc.field || rule != tc.rule || !strings.Contains(msg, tc.msg) {
				t.Errorf("got %s (%s): %s\nwant %s (%s) containing %q", field, rule, msg, tc.field, tc.rule, tc.msg)
			}
		})
	}
}

// rLog is a synthetic discharge of a cell (c F behind esr Ω, at v0 V) into
// a resistor of r Ω switched on at t = 0 (REFERENCES.md 3.6): the terminal
// voltage v0 for t < 0, then v0·R/(R + ESR)·e^(−t/τ), τ = (R + ESR)·C,
// sampled every dt s from first to end, with noise (V RMS) from a fixed
// seed and, with withCurrent, the current u/R.
func rLog(c, esr, r, v0, first, dt, end, noise float64, seed uint64, withCurrent bool) *Log {
	rng := rand.New(rand.NewPCG(seed, 0xdec))
	tau := (r + esr) * c
	log := &Log{}
	if withCurrent {
		log.CurrentA = []float64{}
	}
	for k := 0; ; k++ {
		tt := first + float64(k)*dt
		if tt > end {
			break
		}
		u := v0
		if tt >= 0 {
			u = v0 * r / (r + esr) * math.Exp(-tt/tau)
		}
		log.TimeS = append(log.TimeS, tt)
		log.VoltageV = append(log.VoltageV, u+noise*rng.NormFloat64())
		if withCurrent {
			i := 0.0
			if tt >= 0 {
				i = u / r
			}
			log.CurrentA = append(log.CurrentA, i)
		}
	}
	return log
}

func TestResistorDischargeNoiseless(t *testing.T) {
	t.Parallel()
	// Generator figures: 10 F behind 50 mΩ into 2 Ω from 2.5 V; the circuit
	// of REFERENCES.md 3.6 gives back C = 10 F, ESR = 0.05 Ω and
	// τ = 2.05 × 10 = 20.5 s exactly; the issue asks for 1e-6.
	for _, tc := range []struct {
		name        string
		withCurrent bool
		rule        string
	}{{"current logged", true, "current"}, {"voltage only", false, "voltage"}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			log := rLog(10, 0.05, 2, 2.5, -1, 0.01, 60, 0, 1, tc.withCurrent)
			got, err := ResistorDischargeLog(log, 2, nil)
			if err != nil {
				t.Fatal(err)
			}
			approx.Near(t, "CapacitanceF", got.CapacitanceF, 10, 1e-6)
			if got.ESROhm == nil {
				t.Fatal("ESROhm nil, want 0.05 Ω")
			}
			approx.Near(t, "ESROhm", *got.ESROhm, 0.05, 1e-6)
			approx.Near(t, "TimeConstantS", got.TimeConstantS, 20.5, 1e-6)
			if got.StartS != 0 || got.StartRule != tc.rule {
				t.Errorf("start %g s by %q, want 0 s by %q", got.StartS, got.StartRule, tc.rule)
			}
			// The floor is 10 % of the first voltage after the switch-on,
			// reached at τ·ln 10 = 47.2 s (REFERENCES.md 3.6).
			if got.FitToS > 20.5*math.Log(10) || got.FitToS < 20.5*math.Log(10)-0.01 {
				t.Errorf("FitToS = %g, want the last sample before %g s", got.FitToS, 20.5*math.Log(10))
			}
			if len(got.Warnings) != 0 {
				t.Errorf("warnings %v, want none", got.Warnings)
			}
		})
	}
}

// TestResistorDischargeLnSlope checks the fitted ln V slope against
// gonum's stat.LinearRegression run here on the same points (the samples
// from the switch-on at t = 0 while V ≥ 10 % of the first, as
// ResistorDischargeLog documents), on a noisy log.
func TestResistorDischargeLnSlope(t *testing.T) {
	t.Parallel()
	log := rLog(10, 0.05, 2, 2.5, -1, 0.05, 60, 2e-4, 7, true)
	got, err := ResistorDischargeLog(log, 2, nil)
	if err != nil {
		t.Fatal(err)
	}
	var x, y []float64
	var first float64
	for i, tt := range log.TimeS {
		if tt < 0 {
			continue
		}
		if first == 0 {
			first = log.VoltageV[i]
		}
		if log.VoltageV[i] < 0.1*first {
			break
		}
		x = append(x, tt)
		y = append(y, math.Log(log.VoltageV[i]))
	}
	a, b := stat.LinearRegression(x, y, nil, false)
	if got.FitPoints != len(x) {
		t.Errorf("FitPoints = %d, want %d", got.FitPoints, len(x))
	}
	approx.Near(t, "LnSlopePerS", got.LnSlopePerS, b, 1e-12)
	approx.Near(t, "LineAtStartV", got.LineAtStartV, math.Exp(a), 1e-12)
	approx.Near(t, "RSquared", got.RSquared, stat.RSquared(x, y, nil, a, b), 1e-12)
	// And the physics: −1/τ = −1/20.5 s within the noise (0.2 mV on ≥ 0.24 V).
	approx.Near(t, "LnSlopePerS vs −1/τ", got.LnSlopePerS, -1/20.5, 0.005)
	approx.Near(t, "CapacitanceF", got.CapacitanceF, 10, 0.01)
}

func TestResistorDischargeCases(t *testing.T) {
	t.Parallel()
	t.Run("issue's bench case as a log, starting at the switch-on", func(t *testing.T) {
		t.Parallel()
		// C = 68/(1000·ln 3) F through 1 kΩ from 1.5 V falls to 0.5 V at
		// 68 s (REFERENCES.md 3.6; the exact figure, 61.9 mF).
		c := 68 / (1000 * math.Log(3))
		log := rLog(c, 0, 1000, 1.5, 0, 1, 68, 0, 1, false)
		got, err := ResistorDischargeLog(log, 1000, &DischargeOptions{StartS: ptr(0)})
		if err != nil {
			t.Fatal(err)
		}
		approx.Near(t, "CapacitanceF", got.CapacitanceF, c, 1e-9)
		if got.ESROhm != nil || got.VoltageBeforeV != nil {
			t.Errorf("ESROhm %v, VoltageBeforeV %v; want nil with no sample before the switch-on", got.ESROhm, got.VoltageBeforeV)
		}
	})
	t.Run("wrong resistor", func(t *testing.T) {
		t.Parallel()
		log := rLog(10, 0.05, 2, 2.5, -1, 0.01, 60, 0, 1, true)
		got, err := ResistorDischargeLog(log, 2.5, nil)
		if err != nil {
			t.Fatal(err)
		}
		// V/I = 2 Ω in the log against 2.5 Ω given: 20 % off.
		if !hasWarning(got.Warnings, "current_mismatch") {
			t.Errorf("warnings %v, want current_mismatch", got.Warnings)
		}
	})
	t.Run("coarse sampling at the switch-on", func(t *testing.T) {
		t.Parallel()
		// Every 1 s the decay moves 2.44 V·(1 − e^(−1/20.5)) = 116 mV,
		// nearly twice the 61 mV step.
		log := rLog(10, 0.05, 2, 2.5, -1, 1, 60, 0, 1, true)
		got, err := ResistorDischargeLog(log, 2, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !hasWarning(got.Warnings, "coarse_start") {
			t.Errorf("warnings %v, want coarse_start", got.Warnings)
		}
	})
	t.Run("errors", func(t *testing.T) {
		t.Parallel()
		flat := &Log{TimeS: []float64{0, 1, 2, 3}, VoltageV: []float64{2, 2, 2, 2}}
		rising := &Log{TimeS: []float64{0, 1, 2, 3, 4}, VoltageV: []float64{1, 1, 1.5, 1.6, 1.7}, CurrentA: []float64{0, 0, 1, 1, 1}}
		for _, tc := range []struct {
			name  string
			log   *Log
			ohm   float64
			field string
			rule  string
		}{
			{"zero resistor", flat, 0, "resistor_ohm", "gt"},
			{"no fall", flat, 2, "log", "decay"},
			{"rises", rising, 2, "log", "decay"},
			{"two samples", &Log{TimeS: []float64{0, 1}, VoltageV: []float64{2, 1}}, 2, "log", "samples"},
		} {
			_, err := ResistorDischargeLog(tc.log, tc.ohm, nil)
			field, rule, msg := fieldOf(t, err)
			if field != tc.field || rule != tc.rule {
				t.Errorf("%s: got %s (%s): %s; want %s (%s)", tc.name, field, rule, msg, tc.field, tc.rule)
			}
		}
	})
}

// holdLog is a synthetic open-circuit hold of c F with a parallel
// resistance rp Ω from v0 V: v = v0·e^(−t/(rp·c)) (REFERENCES.md 3.6 with
// the leakage resistance as the load), sampled every dt s for span s, with
// noise (V RMS) from a fixed seed.
func holdLog(c, rp, v0, dt, span, noise float64, seed uint64) *Log {
	rng := rand.New(rand.NewPCG(seed, 0x401d))
	log := &Log{}
	for k := 0; float64(k)*dt <= span; k++ {
		tt := float64(k) * dt
		log.TimeS = append(log.TimeS, tt)
		log.VoltageV = append(log.VoltageV, v0*math.Exp(-tt/(rp*c))+noise*rng.NormFloat64())
	}
	return log
}

func TestHoldLog(t *testing.T) {
	t.Parallel()
	// 10 F with 100 kΩ across it from 2.7 V (τ = 10^6 s), logged every 10 s
	// for 24 h with 20 µV RMS noise. The leakage at t is v(t)/R_p; the issue
	// asks for the leakage and R_p within 1 %.
	const c, rp, v0 = 10.0, 1e5, 2.7
	log := holdLog(c, rp, v0, 10, 86400, 2e-5, 11)
	got, err := HoldLog(log, c, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Default points at 10 %, 50 % and 90 % of 86 400 s (HoldLog doc).
	wantAt := []float64{8640, 43200, 77760}
	if len(got.Points) != 3 {
		t.Fatalf("%d points, want 3", len(got.Points))
	}
	for i, p := range got.Points {
		approx.Near(t, "AtS", p.AtS, wantAt[i], 1e-12)
		v := v0 * math.Exp(-p.AtS/(rp*c))
		approx.Near(t, "VoltageV", p.VoltageV, v, 1e-4)
		approx.Near(t, "LeakageA", p.LeakageA, v/rp, 0.01)
		if p.ParallelResistanceOhm == nil {
			t.Fatalf("point %d: no parallel resistance", i)
		}
		approx.Near(t, "ParallelResistanceOhm", *p.ParallelResistanceOhm, rp, 0.01)
		// The window is 10 % of the hold, 8640 s, at 10 s: 865 samples.
		if p.Points != 865 {
			t.Errorf("point %d: %d samples in the window, want 865", i, p.Points)
		}
	}
	// Total drop: 1 − e^(−86400/10^6) = 8.277 % (REFERENCES.md 3.6).
	approx.Near(t, "DropPct", got.DropPct, 8.277273307458533, 1e-3)
	approx.Near(t, "LeakageA", got.LeakageA, got.Points[2].LeakageA, 0)
	approx.Near(t, "ParallelResistanceOhm", *got.ParallelResistanceOhm, rp, 0.01)
	if len(got.Warnings) != 0 {
		t.Errorf("warnings %v, want none", got.Warnings)
	}

	t.Run("chosen times and errors", func(t *testing.T) {
		t.Parallel()
		got, err := HoldLog(log, c, []float64{0, 86400})
		if err != nil {
			t.Fatal(err)
		}
		// At the log's ends the window is cut to one side: ±4320 s.
		if got.Points[0].FromS != 0 || got.Points[0].ToS != 4320 || got.Points[1].FromS != 82080 {
			t.Errorf("windows %+v", got.Points)
		}
		approx.Near(t, "LeakageA at 0 s", got.Points[0].LeakageA, v0/rp, 0.01)
		_, err = HoldLog(log, c, []float64{100, 90000})
		if field, rule, _ := fieldOf(t, err); field != "at_s[1]" || rule != "in_log" {
			t.Errorf("got %s (%s), want at_s[1] (in_log)", field, rule)
		}
		_, err = HoldLog(log, 0, nil)
		if field, _, _ := fieldOf(t, err); field != "capacitance_f" {
			t.Errorf("got %s, want capacitance_f", field)
		}
	})
	t.Run("rising voltage", func(t *testing.T) {
		t.Parallel()
		up := &Log{}
		for k := range 100 {
			up.TimeS = append(up.TimeS, float64(k))
			up.VoltageV = append(up.VoltageV, 2+0.001*float64(k))
		}
		got, err := HoldLog(up, 1, []float64{50})
		if err != nil {
			t.Fatal(err)
		}
		if got.Points[0].LeakageA != 0 || got.Points[0].ParallelResistanceOhm != nil || !hasWarning(got.Warnings, "rises") {
			t.Errorf("point %+v, warnings %v; want no leakage and the rises warning", got.Points[0], got.Warnings)
		}
	})
	t.Run("noisy", func(t *testing.T) {
		t.Parallel()
		// 20 mV of noise against a 23 mV fall in each window of 144
		// samples: a slope error of 0.02·√12/(0.023·√144) = 25 %.
		got, err := HoldLog(holdLog(c, rp, v0, 60, 86400, 0.02, 2), c, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !hasWarning(got.Warnings, "noisy") {
			t.Errorf("warnings %v, want noisy", got.Warnings)
		}
	})
}

func TestSymmetricCell(t *testing.T) {
	t.Parallel()
	// Hand arithmetic: a 0.25 F coin cell of two equal electrodes in series
	// (C_cell = C_e/2, series capacitors, REFERENCES.md 3.3) has
	// C_e = 0.5 F; 1.5 mg = 0.0015 g per electrode gives 0.5/0.0015
	// = 333.33 F/g; a 12 mm disc, π·0.6² = 1.131 cm², gives 0.4421 F/cm².
	area := math.Pi * 0.6 * 0.6
	got, err := SymmetricCell(0.25, ptr(0.0015), &area)
	if err != nil {
		t.Fatal(err)
	}
	approx.Near(t, "ElectrodeCapacitanceF", got.ElectrodeCapacitanceF, 0.5, 1e-15)
	approx.Near(t, "SpecificCapacitanceFPerG", *got.SpecificCapacitanceFPerG, 0.5/0.0015, 1e-15)
	approx.Near(t, "ArealCapacitanceFPerCm2", *got.ArealCapacitanceFPerCm2, 0.5/area, 1e-15)
	approx.Near(t, "ArealCapacitanceFPerCm2 (hand)", *got.ArealCapacitanceFPerCm2, 0.4421, 1e-4)

	only, err := SymmetricCell(0.25, nil, nil)
	if err != nil || only.SpecificCapacitanceFPerG != nil || only.ArealCapacitanceFPerCm2 != nil {
		t.Errorf("no mass or area: %+v, %v; want only the electrode capacitance", only, err)
	}
	_, err = SymmetricCell(0.25, ptr(-1), nil)
	if field, _, _ := fieldOf(t, err); field != "electrode_mass_g" {
		t.Errorf("field %s, want electrode_mass_g", field)
	}
	_, err = SymmetricCell(0.25, ptr(5e-324), nil)
	if field, rule, _ := fieldOf(t, err); field != "electrode_mass_g" || rule != "range" {
		t.Errorf("denormal mass: field %s (%s), want electrode_mass_g (range)", field, rule)
	}
	_, err = SymmetricCell(math.Inf(1), nil, nil)
	if field, rule, _ := fieldOf(t, err); field != "capacitance_f" || rule != "finite" {
		t.Errorf("field %s (%s), want capacitance_f (finite)", field, rule)
	}
}

func TestCompareWithDatasheet(t *testing.T) {
	t.Parallel()
	// An invented datasheet: 100 F −10 %/+20 %, 12 mΩ, 5 µA at 2.7 V.
	stated := sizing.Cell{ID: "demo-100f", RatedV: 2.7, CapacitanceF: 100, CapacitanceTolerancePct: []float64{-10, 20},
		ESROhm: 0.012, LeakageA: ptr(5e-6)}
	measured := Figures{CapacitanceF: ptr(85), ESROhm: ptr(0.015),
		LeakageA: ptr(3e-6), LeakageAtV: ptr(2.4)}
	got := CompareWithDatasheet(measured, stated)
	if len(got) != 3 {
		t.Fatalf("%d comparisons, want 3: %+v", len(got), got)
	}
	// Hand arithmetic: 85 F is −15 %, below the −10 % bound (90 F).
	c := got[0]
	if c.Quantity != "capacitance_f" || c.Within || *c.AllowedMin != 90 || *c.AllowedMax != 120 {
		t.Errorf("capacitance %+v, want out of [90, 120] F", c)
	}
	approx.Near(t, "capacitance deviation", *c.DeviationPct, -15, 1e-12)
	// 15 mΩ against a 12 mΩ maximum: +25 %, too high.
	e := got[1]
	if e.Quantity != "esr_ohm" || e.Within {
		t.Errorf("ESR %+v, want flagged", e)
	}
	approx.Near(t, "ESR deviation", *e.DeviationPct, 25, 1e-12)
	// 3 µA at 2.4 V is 3·2.7/2.4 = 3.375 µA at 2.7 V (parallel resistance),
	// within 5 µA.
	l := got[2]
	approx.Near(t, "leakage at rated", l.Measured, 3.375e-6, 1e-12)
	if !l.Within || l.Note == "" {
		t.Errorf("leakage %+v, want within with a scaling note", l)
	}

	t.Run("no tolerance stated", func(t *testing.T) {
		t.Parallel()
		bare := stated
		bare.CapacitanceTolerancePct = nil
		got := CompareWithDatasheet(Figures{CapacitanceF: ptr(85)}, bare)
		// ±20 % assumed (DefaultCapacitanceTolerancePct): 85 F is within.
		if len(got) != 1 || !got[0].Within || !strings.Contains(got[0].Limit, "assumed") {
			t.Errorf("got %+v, want within ±20 %% assumed", got)
		}
	})
	t.Run("nothing to compare", func(t *testing.T) {
		t.Parallel()
		bare := stated
		bare.LeakageA = nil
		got := CompareWithDatasheet(Figures{LeakageA: ptr(1e-6)}, bare)
		if len(got) != 0 {
			t.Errorf("got %+v, want nothing: the datasheet states no leakage", got)
		}
	})
}

func TestMeasuredCell(t *testing.T) {
	t.Parallel()
	base := sizing.Cell{ID: "demo-100f", Name: "demo 100 F", Source: "datasheet", RatedV: 2.7, CapacitanceF: 100,
		CapacitanceTolerancePct: []float64{-10, 20}, ESROhm: 0.012, LeakageA: ptr(5e-6), MassKg: ptr(0.02)}
	cc, err := ConstantCurrentDischarge(ccLog(96, 0.014, 1, 2.7, -1, 0.1, 0, 1, true), 2.7, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	hold, err := HoldLog(holdLog(96, 5e5, 2.6, 10, 86400, 0, 1), 96, nil)
	if err != nil {
		t.Fatal(err)
	}
	figs := cc.Figures()
	figs.LeakageA, figs.LeakageAtV = hold.Figures().LeakageA, hold.Figures().LeakageAtV
	summary := Summary("2025-03-14", cc.Summary(), hold.Summary())
	got := DraftCell(&base, figs, summary)

	if got.ID != "demo-100f-measured" || got.Name != "demo 100 F (measured)" || got.Source != "measured" {
		t.Errorf("ID %q, Name %q, Source %q", got.ID, got.Name, got.Source)
	}
	if !strings.HasPrefix(got.Notes, "measured 2025-03-14: constant-current discharge (IEC 62391-1)") ||
		!strings.Contains(got.Notes, "open-circuit hold") || !strings.Contains(got.Notes, "R² ") {
		t.Errorf("Notes = %q", got.Notes)
	}
	// The generator's 96 F and 14 mΩ (ccLog), and the leakage at 2.7 V of a
	// 500 kΩ parallel resistance, 2.7/5e5 = 5.4 µA (the model of
	// sizing.Cell.LeakageA).
	approx.Near(t, "CapacitanceF", got.CapacitanceF, 96, 1e-6)
	approx.Near(t, "ESROhm", got.ESROhm, 0.014, 1e-6)
	approx.Near(t, "LeakageA", *got.LeakageA, 2.7/5e5, 0.01)
	// The base is not changed and shares nothing with the copy.
	*got.MassKg = 1
	got.CapacitanceTolerancePct[0] = -50
	if *base.MassKg != 0.02 || base.CapacitanceTolerancePct[0] != -10 || *base.LeakageA != 5e-6 || base.ID != "demo-100f" {
		t.Errorf("base changed: %+v", base)
	}
	got.CapacitanceTolerancePct[0], *got.MassKg = -10, 0.02

	// The measured cell sizes: Validate passes inside a small design, and
	// Size gives a feasible bank.
	d := &sizing.Design{Name: "measured cell check", Window: sizing.Window{MaxV: 5, MinV: 2.5},
		Load: sizing.Load{Steps: []sizing.Step{{PowerW: ptr(5), DurationS: 10}}}, Cells: []sizing.Cell{got}}
	if err := sizing.Validate(d); err != nil {
		t.Fatalf("Validate: %v", err)
	}
	rep, err := sizing.Size(d)
	if err != nil {
		t.Fatalf("Size: %v", err)
	}
	if !rep.Candidates[0].Feasible {
		t.Errorf("the measured cell is not feasible for a 5 W, 10 s load: %+v", rep.Candidates[0])
	}

	t.Run("no base", func(t *testing.T) {
		t.Parallel()
		c := DraftCell(nil, cc.Figures(), Summary("", cc.Summary()))
		if c.RatedV != 2.7 || c.ID != "measured" || c.Source != "measured" {
			t.Errorf("cell %+v", c)
		}
		d := &sizing.Design{Window: sizing.Window{MaxV: 5, MinV: 2.5}, Load: sizing.Load{Steps: []sizing.Step{{PowerW: ptr(5), DurationS: 10}}}, Cells: []sizing.Cell{c}}
		if err := sizing.Validate(d); err != nil {
			t.Errorf("Validate: %v", err)
		}
		// Without a capacitance or an ESR the cell does not validate, and
		// Validate names the field.
		empty := DraftCell(nil, Figures{RatedV: ptr(2.7)}, "")
		d.Cells = []sizing.Cell{empty}
		err := sizing.Validate(d)
		if err == nil || !strings.Contains(err.Error(), "cells[0].esr_ohm") {
			t.Errorf("Validate: %v, want cells[0].esr_ohm named", err)
		}
	})
	t.Run("long notes are cut", func(t *testing.T) {
		t.Parallel()
		c := DraftCell(&base, Figures{}, strings.Repeat("é", 3000))
		if n := len([]rune(c.Notes)); n != 2000 {
			t.Errorf("notes of %d characters, want 2000 (the validate max)", n)
		}
	})
}

// TestMeasureNeverNaN feeds extreme but finite logs to every method: each
// gives an error or figures that are all finite.
func TestMeasureNeverNaN(t *testing.T) {
	t.Parallel()
	logs := map[string]*Log{
		"huge times":    {TimeS: []float64{-1e308, 0, 1e308}, VoltageV: []float64{2.7, 1, 0.1}, CurrentA: []float64{0, 1, 1}},
		"huge voltages": {TimeS: []float64{0, 1, 2, 3}, VoltageV: []float64{1e308, -1e308, 1e308, -1e308}},
		"tiny":          {TimeS: []float64{0, 1e-300, 2e-300, 3e-300}, VoltageV: []float64{1e-300, 5e-301, 2e-301, 1e-301}},
		"zeros":         {TimeS: []float64{0, 1, 2, 3}, VoltageV: []float64{0, 0, 0, 0}, CurrentA: []float64{0, 0, 0, 0}},
		"steps":         {TimeS: []float64{0, 1, 2, 3, 4, 5}, VoltageV: []float64{2.7, 2.7, 2.1, 2.1, 1, 1}, CurrentA: []float64{0, 5, 5, 5, 5, 5}},
	}
	for name, log := range logs {
		if r, err := ConstantCurrentDischarge(log, 2.7, ptr(1), nil); err == nil {
			approx.AllFinite(t, name+" constant-current", r)
		}
		if r, err := ResistorDischargeLog(log, 1, nil); err == nil {
			approx.AllFinite(t, name+" resistor", r)
		}
		if r, err := HoldLog(log, 1, nil); err == nil {
			approx.AllFinite(t, name+" hold", r)
		}
	}
	if r, err := TimedResistorDischarge(1e308, 1e-308, 1e-308, 1e308); err == nil {
		approx.AllFinite(t, "timed", r)
	}
}

// TestCoarseStartThreshold checks coarse_start on both sides of
// MaxStartIntervalTau: the samples around the switch-on a fifth of the
// cell's time constant ESR·C apart (a clean log: the ESR is overstated by
// at most 20 %) give no warning, 0.375 of it do. The switch-on falls on a
// sample (the times are exact in binary), so each log's ESR is exact and τ
// is the cell's.
func TestCoarseStartThreshold(t *testing.T) {
	t.Parallel()
	const (
		// 2500 F, 0.4 mΩ at 27 A: τ = ESR·C = 0.4e-3·2500 = 1 s (own
		// arithmetic, the record of REFERENCES.md 10.6).
		c, esr, tau = 2500.0, 0.0004, 1.0
		// Into 2 Ω: 10 F behind 50 mΩ, τ = ESR·C = 0.05·10 = 0.5 s.
		rc, resr, rtau = 10.0, 0.05, 0.5
	)
	tests := []struct {
		name   string
		run    func() (warnings []Warning, esrOhm *float64, err error)
		esr    float64
		coarse bool
	}{
		{"constant current, samples 0.2 τ apart", func() ([]Warning, *float64, error) {
			r, err := ConstantCurrentDischarge(ccLog(c, esr, 27, 2.7, -1, 0.2*tau, 0, 1, true), 2.7, nil, nil)
			return r.Warnings, r.ESROhm, err
		}, esr, false},
		{"constant current, samples 0.375 τ apart", func() ([]Warning, *float64, error) {
			r, err := ConstantCurrentDischarge(ccLog(c, esr, 27, 2.7, -0.75, 0.375*tau, 0, 1, true), 2.7, nil, nil)
			return r.Warnings, r.ESROhm, err
		}, esr, true},
		{"constant current, no current column, 0.2 τ", func() ([]Warning, *float64, error) {
			r, err := ConstantCurrentDischarge(ccLog(c, esr, 27, 2.7, -1, 0.2*tau, 0, 1, false), 2.7, new(27.0), nil)
			return r.Warnings, r.ESROhm, err
		}, esr, false},
		{"resistor, samples 0.2 τ apart", func() ([]Warning, *float64, error) {
			r, err := ResistorDischargeLog(rLog(rc, resr, 2, 2.5, -1, 0.2*rtau, 60, 0, 1, true), 2, nil)
			return r.Warnings, r.ESROhm, err
		}, resr, false},
		{"resistor, samples 0.375 τ apart", func() ([]Warning, *float64, error) {
			r, err := ResistorDischargeLog(rLog(rc, resr, 2, 2.5, -0.75*rtau, 0.375*rtau, 60, 0, 1, true), 2, nil)
			return r.Warnings, r.ESROhm, err
		}, resr, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			w, got, err := tt.run()
			if err != nil {
				t.Fatal(err)
			}
			// Noiseless and switched on at a sample: the ESR is exact
			// (rel 1e-6, closed form).
			if got == nil {
				t.Fatal("no ESR")
			}
			approx.Near(t, "ESROhm", *got, tt.esr, 1e-6)
			if hasWarning(w, "coarse_start") != tt.coarse {
				t.Errorf("coarse_start %v, want %v; warnings %v", hasWarning(w, "coarse_start"), tt.coarse, w)
			}
		})
	}
}
