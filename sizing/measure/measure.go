package measure

import (
	"fmt"
	"math"
	"reflect"
	"slices"
	"strings"
	"unicode/utf8"

	"gonum.org/v1/gonum/stat"

	"capbank/sizing"
)

// Voltage points and limits of the constant-current method.
const (
	// IECU1Fraction and IECU2Fraction place the voltage points of the
	// constant-current capacitance method: U1 = 0.8·UR, U2 = 0.4·UR
	// (IEC 62391-1 Table 1; REFERENCES.md 1.6).
	IECU1Fraction = 0.8
	IECU2Fraction = 0.4
	// IECMaxDropFraction: when the drop at the discharge start ΔU3 is more
	// than 5 % of UR, IEC 62391-1 lets the current be cut to 1/2, 1/5 or
	// 1/10 (Table 1 note; REFERENCES.md 1.5). capbank warns.
	IECMaxDropFraction = 0.05
)

// Thresholds of the measurement warnings. Each is a judgement, explained
// beside it.
const (
	// MinFitPoints: a fit over fewer samples warns "short_log". With
	// ten samples the scatter of the fitted slope is about √(12/n) ≈ 1.1
	// times the noise-to-span ratio; fewer makes a single bad sample weigh
	// too much.
	MinFitPoints = 10
	// MaxResidualFraction: the constant-current fit warns "noisy"
	// when its residual RMS exceeds 1 % of U1 − U2. For samples spread
	// evenly along a straight line R² = 1 − 12·(RMS/(U1 − U2))², so this is
	// R² below 0.9988. It is above the bow of a healthy cell's
	// voltage-dependent capacitance (C = 2000 F + 200 F/V·v of REFERENCES.md
	// 10.11, ±4.7 % across U2–U1 of a 2.7 V cell, bows the line by 0.35 %
	// RMS of U1 − U2, by a numerical fit), and it is where the scatter of
	// the fitted capacitance reaches about 1 % at ten samples.
	MaxResidualFraction = 0.01
	// MaxESRNoiseFraction: "esr_uncertain" when the noise (the fit's
	// residual RMS) is more than 10 % of the voltage step the ESR is taken
	// from; the single sample before the switch-on then moves the ESR by
	// that much.
	MaxESRNoiseFraction = 0.1
	// MaxStartIntervalTau: "coarse_start" when the samples around the
	// switch-on are more than a quarter of the cell's time constant
	// τ = ESR·C apart. The switch-on lies somewhere in that interval Δt,
	// and the ESR comes from the step up to the line extended back to the
	// first sample with the discharge on. At constant current the line
	// falls by the whole step in one τ (its slope is I/C, the step I·ESR);
	// into a resistor R in τ·(R + ESR)/R, a little longer (the decay's
	// slope at the switch-on is V·R/((R + ESR)²·C), the step
	// V·ESR/(R + ESR), V the voltage before it). So the ESR is overstated
	// by between 0 and Δt/τ, by about Δt/(2τ) on average. Below τ/4 that is at most 25 %, an error on
	// the safe side (a higher ESR sizes a bigger bank) and small beside the
	// end-of-life factor of 2 sizing applies to the ESR; beyond it the
	// figure says more about the sampling than about the cell (common
	// practice, no source, for the quarter).
	MaxStartIntervalTau = 0.25
	// MaxCurrentVariation: "current_varies" when the logged current's
	// standard deviation over the fit window is more than 5 % of its mean;
	// the constant-current method assumes a constant current.
	MaxCurrentVariation = 0.05
	// ResistorFloorFraction: the ln V fit of a resistor discharge uses the
	// samples from the switch-on down to 10 % of the first voltage after it
	// (2.3 time constants). Below that a logger's offset and resolution (a
	// few mV on a typical 0–5 V channel) are a growing share of the reading
	// and bend ln V.
	ResistorFloorFraction = 0.1
	// ResistorMaxResidualLn: the ln V fit warns "noisy" when its residual
	// RMS exceeds 0.01, i.e. the voltage leaves the fitted exponential by
	// more than about 1 % RMS.
	ResistorMaxResidualLn = 0.01
	// ResistorMinDecayLn: "short_decay" when the fit spans less than a tenth
	// of a time constant (ln(V_first/V_last) < 0.1); the time constant is
	// then poorly fixed.
	ResistorMinDecayLn = 0.1
	// HoldWindowFraction: the local regression for dV/dt in a hold spans
	// 10 % of the hold (±5 % around each time), cut at the log's ends.
	HoldWindowFraction = 0.1
	// HoldMaxSlopeError: "noisy" at a hold point when the standard error of
	// the local slope is more than 10 % of the slope.
	HoldMaxSlopeError = 0.1
	// DefaultCapacitanceTolerancePct is the ± tolerance, in percent, that
	// CompareWithDatasheet assumes for a cell that states none: ±20 % is a
	// common datasheet tolerance for EDLCs (common practice, no source; the
	// widest of the spreads in REFERENCES.md 10.8).
	DefaultCapacitanceTolerancePct = 20.0
)

// Warning is a reason to doubt a measured figure: a short or
// noisy log, a test outside the standard's conditions.
type Warning struct {
	// Code is a short machine name: short_log, noisy, esr_uncertain,
	// coarse_start, large_drop, no_drop, current_varies, negative_current,
	// short_decay, no_step, current_mismatch, rises.
	Code string `json:"code"`
	// Message says what was found and what to do, in plain words.
	Message string `json:"message"`
}

// DischargeOptions adjust how a logged discharge is read. nil: every
// default.
type DischargeOptions struct {
	// StartS, in s, is the discharge start t0 (the switch-on) on the log's
	// time axis. nil: found from the log (see ConstantCurrentDischarge and
	// ResistorDischargeLog).
	StartS *float64 `json:"start_s,omitempty"`
}

// TimedDischarge is the result of TimedResistorDischarge.
type TimedDischarge struct {
	Method string `json:"method"` // "timed"
	// V0V and V1V, in V, are the start and end voltages; DurationS, in s,
	// the time between them; ResistorOhm, in Ω, the discharge resistor.
	V0V         float64 `json:"v0_v"`
	V1V         float64 `json:"v1_v"`
	DurationS   float64 `json:"duration_s"`
	ResistorOhm float64 `json:"resistor_ohm"`
	// CapacitanceF, in F, is the exact figure t/(R·ln(V0/V1)).
	CapacitanceF float64 `json:"capacitance_f"`
	// TimeConstantS, in s, is R·C = t/ln(V0/V1).
	TimeConstantS float64 `json:"time_constant_s"`
	// MeanCurrentA, in A, is the current at the mean voltage, (V0+V1)/(2R),
	// that the quick estimate takes as constant.
	MeanCurrentA float64 `json:"mean_current_a"`
	// QuickCapacitanceF, in F, is the quick bench estimate t·I/(V0 − V1)
	// with I = MeanCurrentA.
	QuickCapacitanceF float64 `json:"quick_capacitance_f"`
	// QuickErrorPct is the quick estimate's error against the exact figure,
	// (quick − exact)/exact × 100. It depends only on r = V0/V1:
	//
	//	quick/exact = (r + 1)·ln r / (2(r − 1))
	//
	// which is above 1 for every r > 1, so the quick estimate always reads
	// high (about 4 % at r = 2, 10 % at r = 3).
	QuickErrorPct float64   `json:"quick_error_pct"`
	Warnings      []Warning `json:"warnings"`
	Notes         []string  `json:"notes"`
}

// TimedResistorDischarge works out the capacitance from a timed discharge
// through a known resistor: the cell falls from v0V to v1V in seconds
// through resistorOhm. The exact figure follows from v(t) = V0·e^(−t/RC)
// (REFERENCES.md 3.6):
//
//	C = t / (R·ln(V0/V1))
//
// Beside it is the quick bench estimate that treats the current as constant
// at its value at the mean voltage:
//
//	I ≈ (V0 + V1)/(2R),  C ≈ t·I/(V0 − V1)
//
// and its error in percent against the exact figure. R is the whole
// resistance the cell discharges through; the cell's own ESR adds to it, so
// when the ESR is not small against R the figure is high by ESR/R (the
// result says so in a note).
//
// Errors (a sizing.ValidationError) name the input: v0_v, v1_v, duration_s or
// resistor_ohm, for a value that is not finite, not positive, outside its
// bench range (1 µV–100 kV, 1 µs–10⁹ s, 1 µΩ–1 TΩ), or a v1_v not below
// v0_v.
func TimedResistorDischarge(v0V, v1V, seconds, resistorOhm float64) (TimedDischarge, error) {
	var c checks
	c.positive("v0_v", v0V, benchVolts)
	c.positive("v1_v", v1V, benchVolts)
	c.positive("duration_s", seconds, benchSeconds)
	c.positive("resistor_ohm", resistorOhm, benchOhms)
	if sizing.Finite(v0V) && sizing.Finite(v1V) && v0V > 0 && v1V >= v0V {
		c.add("v1_v", "below_v0", "must be below the start voltage v0_v (%g V ≥ %g V): the cell discharges from v0_v down to v1_v", v1V, v0V)
	}
	if err := c.err(); err != nil {
		return TimedDischarge{}, err
	}
	lnRatio := math.Log(v0V) - math.Log(v1V) // no overflow of v0/v1
	tau := seconds / lnRatio
	exact := tau / resistorOhm
	meanI := (v0V/2 + v1V/2) / resistorOhm
	quick := seconds * meanI / (v0V - v1V)
	errPct := (quick/exact - 1) * 100
	if err := outputs("the inputs", exact, tau, meanI, quick, errPct); err != nil {
		return TimedDischarge{}, err
	}
	return TimedDischarge{
		Method: "timed", V0V: v0V, V1V: v1V, DurationS: seconds, ResistorOhm: resistorOhm,
		CapacitanceF: exact, TimeConstantS: tau, MeanCurrentA: meanI,
		QuickCapacitanceF: quick, QuickErrorPct: errPct,
		Warnings: []Warning{},
		Notes: []string{
			"C = t/(R·ln(V0/V1)) takes R as the whole resistance in the loop; the cell's ESR adds to it, so C is high by ESR/R when the ESR is not small against R",
			fmt.Sprintf("the quick estimate t·I/ΔV with I = (V0+V1)/(2R) reads %.3g %% high; its error depends only on V0/V1 = %.4g", errPct, v0V/v1V),
		},
	}, nil
}

// ConstantCurrentResult is the result of ConstantCurrentDischarge.
type ConstantCurrentResult struct {
	Method string `json:"method"` // "constant-current"
	// RatedV, in V, is the rated voltage UR the voltage points follow from.
	RatedV float64 `json:"rated_v"`
	// CurrentA, in A, is the discharge current I; CurrentSource says where it
	// came from: "log" (the mean logged current over the fit window) or
	// "given".
	CurrentA      float64 `json:"current_a"`
	CurrentSource string  `json:"current_source"`
	// U1V and U2V, in V, are the voltage points 0.8·UR and 0.4·UR; T1S and
	// T2S, in s, the times the terminal voltage reaches them (linear
	// interpolation between samples).
	U1V float64 `json:"u1_v"`
	U2V float64 `json:"u2_v"`
	T1S float64 `json:"t1_s"`
	T2S float64 `json:"t2_s"`
	// StartS, in s, is the discharge start t0; StartRule says how it was
	// found: "current", "voltage" or "given".
	StartS    float64 `json:"start_s"`
	StartRule string  `json:"start_rule"`
	// VoltageBeforeV, in V, is the voltage before the switch-on: the last
	// sample before t0, or UR when the log starts at t0 (a note says so).
	VoltageBeforeV float64 `json:"voltage_before_v"`
	// LineAtStartV, in V, is the fitted line extended back to t0.
	LineAtStartV float64 `json:"line_at_start_v"`
	// DropV, in V, is ΔU3 = VoltageBeforeV − LineAtStartV; DropPct is ΔU3 as
	// a percentage of UR.
	DropV   float64 `json:"drop_v"`
	DropPct float64 `json:"drop_pct"`
	// CapacitanceF, in F, is I/|slope| from the regression of V on t over the
	// samples in [t1, t2]: the figure capbank reports.
	CapacitanceF float64 `json:"capacitance_f"`
	// TwoPointCapacitanceF, in F, is I·(t2 − t1)/(U1 − U2), the standard's
	// formula from the two crossing times alone.
	TwoPointCapacitanceF float64 `json:"two_point_capacitance_f"`
	// SlopeVPerS, in V/s, is the fitted slope dV/dt (negative).
	SlopeVPerS float64 `json:"slope_v_per_s"`
	// ESROhm, in Ω, is the DC internal resistance ΔU3/I. nil when ΔU3 is not
	// above zero (warning no_drop).
	ESROhm *float64 `json:"esr_ohm,omitempty"`
	// TimeConstantS, in s, is the cell's own ESR·C; nil with ESROhm.
	TimeConstantS *float64 `json:"time_constant_s,omitempty"`
	// FitPoints is the number of samples in [t1, t2]; RSquared the fit's
	// coefficient of determination; ResidualRMSV, in V, the RMS of the
	// samples about the line.
	FitPoints    int       `json:"fit_points"`
	RSquared     float64   `json:"r_squared"`
	ResidualRMSV float64   `json:"residual_rms_v"`
	Warnings     []Warning `json:"warnings"`
	Notes        []string  `json:"notes"`
}

// ConstantCurrentDischarge measures capacitance and DC internal resistance
// from a logged constant-current discharge, by the method of IEC 62391-1
// (REFERENCES.md 1.6, 1.7, 1.9).
//
// The voltage points are U1 = 0.8·UR and U2 = 0.4·UR (ratedV is UR). t1 and
// t2 are the first times the terminal voltage falls to U1, and after it to
// U2, each by linear interpolation between the samples on either side. Over
// the samples with t1 ≤ t ≤ t2, stat.LinearRegression fits V = a + b·(t − t0)
// and
//
//	C = I/|b|                        (capacitance_f)
//	C_two_point = I·(t2 − t1)/(U1 − U2)
//	ΔU3 = V_before − a,  R = ΔU3/I   (esr_ohm)
//
// where a is the line extended back to the discharge start t0 and V_before
// the last sample before t0 (UR when the log starts at t0, with a note).
// RSquared comes from stat.RSquared.
//
// The current I: the mean of the logged current over the fit window when the
// log has a current_a column (currentA is then not used; a note says so),
// otherwise currentA, in A; one of them is required. A logged current that
// is negative while the voltage falls is taken by its magnitude, with a
// warning.
//
// The discharge start t0, unless opts.StartS gives it:
//   - with a current column, the first sample of the run of samples, ending
//     in the fit window, whose current is above half the median current in
//     the fit window (the first sample with the current switched on);
//   - without one, where the voltage starts to fall steadily: the first
//     sample after the highest voltage before t1 that lies below it by more
//     than δ = max(10σ, 0.1 % of it), σ being the log's noise (estimated
//     from the median absolute second difference of the voltage). Such a
//     log must start at rest (at the charge voltage); if it starts with the
//     discharge already on, give StartS.
//
// Warnings: short_log (fewer than MinFitPoints samples in [t1, t2]),
// noisy (MaxResidualFraction), large_drop (ΔU3 above 5 % of UR),
// no_drop, esr_uncertain, coarse_start, current_varies and
// negative_current; see the constants for each threshold. Errors: a
// sizing.ValidationError naming rated_v, current_a, start_s, the log's bad sample,
// or log when the log does not reach U1 or U2 (the message gives the
// voltages) or has fewer than 3 samples between them.
func ConstantCurrentDischarge(log *Log, ratedV float64, currentA *float64, opts *DischargeOptions) (ConstantCurrentResult, error) {
	var c checks
	c.positive("rated_v", ratedV, benchVolts)
	if currentA != nil {
		c.positive("current_a", *currentA, benchAmps)
	}
	startS := startOf(opts)
	if startS != nil && !sizing.Finite(*startS) {
		c.add("start_s", "finite", "must be a finite number")
	}
	c.log(log, 2)
	if err := c.err(); err != nil {
		return ConstantCurrentResult{}, err
	}
	if log.CurrentA == nil && currentA == nil {
		return ConstantCurrentResult{}, fieldError("current_a", "required",
			"is required: the log has no current_a column, so give the discharge current in A")
	}
	t, v := log.TimeS, log.VoltageV
	n := len(t)
	u1, u2 := IECU1Fraction*ratedV, IECU2Fraction*ratedV
	r := ConstantCurrentResult{Method: "constant-current", RatedV: ratedV, U1V: u1, U2V: u2,
		Warnings: []Warning{}, Notes: []string{}}

	from := 0
	if startS != nil {
		from = indexAt(t, *startS)
		if from == n {
			return r, fieldError("start_s", "in_log", fmt.Sprintf(
				"%g s is after the log's last sample (%g s)", *startS, t[n-1]))
		}
	}
	if startS != nil && reached(v[from], u1) {
		return r, fieldError("start_s", "before_t1", fmt.Sprintf(
			"at %g s the voltage (%s) is already at or below U1 = %s (0.8 × rated_v %s); give the switch-on time of the discharge, before the voltage reaches U1",
			*startS, volts(v[from]), volts(u1), volts(ratedV)))
	}
	// t1: the first fall through U1 (a sample at or below it after one
	// above it), so a log may begin with the charge.
	i1 := -1
	for i := from + 1; i < n; i++ {
		if reached(v[i], u1) && !reached(v[i-1], u1) {
			i1 = i
			break
		}
	}
	if i1 < 0 {
		lo, loAt := lowest(v, t, from)
		if hi := slices.Max(v[from:]); hi <= u1 {
			return r, fieldError("log", "above_u1", fmt.Sprintf(
				"never rises above U1 = %s (0.8 × rated_v %s); its highest is %s. The log must begin above U1, from the charge to the rated voltage; check rated_v",
				volts(u1), volts(ratedV), volts(hi)))
		}
		return r, fieldError("log", "reach_u1", fmt.Sprintf(
			"the voltage never falls to U1 = %s (0.8 × rated_v %s); its lowest is %s at %s s. Log the discharge from the rated voltage down past U2 = %s (0.4 × rated_v)",
			volts(u1), volts(ratedV), volts(lo), num(loAt), volts(u2)))
	}
	i2 := -1
	for i := i1; i < n; i++ {
		if reached(v[i], u2) {
			i2 = i
			break
		}
	}
	r.T1S = crossing(t, v, i1, u1)
	if i2 < 0 {
		lo, loAt := lowest(v, t, i1)
		return r, fieldError("log", "reach_u2", fmt.Sprintf(
			"the voltage falls to U1 = %s at %s s but never to U2 = %s (0.4 × rated_v %s); its lowest after U1 is %s at %s s. Log the discharge down past U2",
			volts(u1), num(r.T1S), volts(u2), volts(ratedV), volts(lo), num(loAt)))
	}
	r.T2S = crossing(t, v, i2, u2)
	// The fit window: the samples with t1 ≤ t ≤ t2, that is i1 … i2−1, and
	// i2 itself when it sits on U2.
	wLo, wHi := i1, i2
	if onPoint(v[i2], u2) {
		wHi = i2 + 1
	}
	r.FitPoints = wHi - wLo
	if r.FitPoints < 3 {
		return r, fieldError("log", "fit_points", fmt.Sprintf(
			"has only %d sample(s) between t1 = %s s (U1 = %s) and t2 = %s s (U2 = %s); the fit needs at least 3 and should have %d or more: log faster",
			r.FitPoints, num(r.T1S), volts(u1), num(r.T2S), volts(u2), MinFitPoints))
	}

	// The current.
	var median float64
	sign := 1.0
	if log.CurrentA != nil {
		win := log.CurrentA[wLo:wHi]
		median = medianOf(win)
		if median == 0 {
			return r, fieldError("log.current_a", "zero", fmt.Sprintf(
				"is zero between t1 = %s s and t2 = %s s, while the voltage falls: the logged current is not the discharge current", num(r.T1S), num(r.T2S)))
		}
		if median < 0 {
			sign = -1
			r.Warnings = append(r.Warnings, Warning{"negative_current",
				"the logged current is negative while the voltage falls; capbank takes a discharge as positive current (as in a load profile) and used its magnitude. Check the logger's sign"})
		}
		mean, std := stat.MeanStdDev(win, nil)
		r.CurrentA, r.CurrentSource = sign*mean, "log"
		if !(r.CurrentA > 0) {
			return r, fieldError("log.current_a", "mean", fmt.Sprintf(
				"averages %s A between t1 and t2 against a median of %s A: too scattered to give the discharge current", num(mean), num(median)))
		}
		if len(win) > 1 && std > MaxCurrentVariation*r.CurrentA {
			r.Warnings = append(r.Warnings, Warning{"current_varies", fmt.Sprintf(
				"the logged current varies by %.3g %% (standard deviation over mean) between t1 and t2, more than %g %%; the method assumes a constant current",
				100*std/r.CurrentA, 100*MaxCurrentVariation)})
		}
		if currentA != nil {
			r.Notes = append(r.Notes, fmt.Sprintf("current_a (%s A) is not used: the log has a current column, whose mean over the fit window is %s A",
				num(*currentA), num(r.CurrentA)))
		}
	} else {
		r.CurrentA, r.CurrentSource = *currentA, "given"
	}

	// The discharge start t0 and the voltage before it.
	i0 := 0
	switch {
	case startS != nil:
		if *startS >= r.T1S {
			return r, fieldError("start_s", "before_t1", fmt.Sprintf(
				"%g s is not before t1 = %s s, where the voltage reaches U1; give the switch-on time of the discharge", *startS, num(r.T1S)))
		}
		i0, r.StartS, r.StartRule = from, *startS, "given"
		r.Notes = append(r.Notes, fmt.Sprintf("discharge start t0 = %s s as given", num(r.StartS)))
	case log.CurrentA != nil:
		half := 0.5 * math.Abs(median)
		i0 = wLo
		for i0 > 0 && sign*log.CurrentA[i0-1] > half {
			i0--
		}
		r.StartS, r.StartRule = t[i0], "current"
		r.Notes = append(r.Notes, fmt.Sprintf(
			"discharge start t0 = %s s: the first sample of the run with the current above half the median discharge current (%s A)",
			num(r.StartS), num(half)))
	default:
		var delta float64
		var single bool
		i0, delta, single = voltageStart(v, i1)
		r.StartS, r.StartRule = t[i0], "voltage"
		r.Notes = append(r.Notes, fmt.Sprintf(
			"discharge start t0 = %s s: the first sample more than %s below the highest voltage before U1 (no current column)",
			num(r.StartS), volts(delta)))
		if single {
			r.Notes = append(r.Notes, fmt.Sprintf(
				"only the first sample (%s at %s s) is taken as the rest before the discharge; if the log starts with the discharge already on, give the start time",
				volts(v[0]), num(t[0])))
		}
	}
	if i0 > 0 {
		r.VoltageBeforeV = v[i0-1]
	} else {
		r.VoltageBeforeV = ratedV
		r.Notes = append(r.Notes, fmt.Sprintf(
			"the log starts at the discharge start, with no sample before it: the voltage before the switch-on is taken as the rated voltage UR = %s", volts(ratedV)))
	}

	// The regression over [t1, t2], on time measured from t0 so the
	// intercept is the line at t0.
	x := make([]float64, r.FitPoints)
	y := v[wLo:wHi]
	for i := range x {
		x[i] = t[wLo+i] - r.StartS
	}
	a, b := stat.LinearRegression(x, y, nil, false)
	if !(b < 0) {
		return r, fieldError("log", "falls", fmt.Sprintf(
			"the voltage does not fall between t1 = %s s and t2 = %s s (fitted slope %s V/s); is it a discharge?", num(r.T1S), num(r.T2S), num(b)))
	}
	r.SlopeVPerS, r.LineAtStartV = b, a
	r.RSquared = stat.RSquared(x, y, nil, a, b)
	r.ResidualRMSV = residualRMS(x, y, a, b)
	r.CapacitanceF = r.CurrentA / -b
	r.TwoPointCapacitanceF = r.CurrentA * (r.T2S - r.T1S) / (u1 - u2)
	r.DropV = r.VoltageBeforeV - a
	r.DropPct = 100 * r.DropV / ratedV
	if err := outputs("the log", r.T1S, r.T2S, a, b, r.RSquared, r.ResidualRMSV, r.CapacitanceF,
		r.TwoPointCapacitanceF, r.DropV, r.DropPct, r.CurrentA); err != nil {
		return r, err
	}
	if r.DropV > 0 {
		esr := r.DropV / r.CurrentA
		tau := esr * r.CapacitanceF
		if err := outputs("the log", esr, tau); err != nil {
			return r, err
		}
		r.ESROhm, r.TimeConstantS = &esr, &tau
	}

	// Warnings.
	span := u1 - u2
	if r.FitPoints < MinFitPoints {
		r.Warnings = append(r.Warnings, Warning{"short_log", fmt.Sprintf(
			"only %d samples between U1 and U2, fewer than %d: log faster so the fit rests on more points", r.FitPoints, MinFitPoints)})
	}
	if r.ResidualRMSV > MaxResidualFraction*span {
		r.Warnings = append(r.Warnings, Warning{"noisy", fmt.Sprintf(
			"the samples scatter about the fitted line by %s RMS, %.3g %% of U1 − U2 (R² = %.5f), more than %g %%: the capacitance is uncertain by about %.2g %%; filter the voltage or check the current was constant",
			volts(r.ResidualRMSV), 100*r.ResidualRMSV/span, r.RSquared, 100*MaxResidualFraction,
			100*r.ResidualRMSV*math.Sqrt(12/float64(r.FitPoints))/span)})
	}
	switch {
	case r.DropV <= 0:
		r.Warnings = append(r.Warnings, Warning{"no_drop", fmt.Sprintf(
			"no drop at the switch-on: the voltage before t0 (%s) is not above the line extended back to t0 (%s), so the ESR is not measured; log faster around the switch-on, or check the start time",
			volts(r.VoltageBeforeV), volts(a))})
	default:
		if r.DropV > IECMaxDropFraction*ratedV {
			r.Warnings = append(r.Warnings, Warning{"large_drop", fmt.Sprintf(
				"the drop at the discharge start ΔU3 = %s is %.3g %% of UR, more than 5 %%: IEC 62391-1 lets the current be cut to 1/2, 1/5 or 1/10; repeat the test at a lower current",
				volts(r.DropV), r.DropPct)})
		}
		if r.ResidualRMSV > MaxESRNoiseFraction*r.DropV {
			r.Warnings = append(r.Warnings, Warning{"esr_uncertain", fmt.Sprintf(
				"the noise (%s RMS) is %.3g %% of the drop ΔU3 = %s, more than %g %%: the ESR rests on one noisy sample before the switch-on",
				volts(r.ResidualRMSV), 100*r.ResidualRMSV/r.DropV, volts(r.DropV), 100*MaxESRNoiseFraction)})
		}
		if r.StartRule != "given" && i0 > 0 && r.TimeConstantS != nil {
			if w, ok := coarseStart(t[i0-1], t[i0], *r.TimeConstantS, "the line falls by the whole ΔU3"); ok {
				r.Warnings = append(r.Warnings, w)
			}
		}
	}
	return r, nil
}

// ResistorDischargeResult is the result of ResistorDischargeLog.
type ResistorDischargeResult struct {
	Method string `json:"method"` // "resistor"
	// ResistorOhm, in Ω, is the discharge resistor R.
	ResistorOhm float64 `json:"resistor_ohm"`
	// StartS, in s, is the switch-on t0; StartRule: "current", "voltage" or
	// "given".
	StartS    float64 `json:"start_s"`
	StartRule string  `json:"start_rule"`
	// VoltageBeforeV, in V, is the last sample before t0; nil when the log
	// starts at t0.
	VoltageBeforeV *float64 `json:"voltage_before_v,omitempty"`
	// LineAtStartV, in V, is the fitted exponential at t0, e^a.
	LineAtStartV float64 `json:"line_at_start_v"`
	// FloorV, in V, is the lowest voltage fitted (ResistorFloorFraction of
	// the first sample after t0); FitFromS and FitToS, in s, the fitted
	// samples' first and last times.
	FloorV   float64 `json:"floor_v"`
	FitFromS float64 `json:"fit_from_s"`
	FitToS   float64 `json:"fit_to_s"`
	// LnSlopePerS, in 1/s, is the fitted slope of ln V against t.
	LnSlopePerS float64 `json:"ln_slope_per_s"`
	// TimeConstantS, in s, is τ = −1/slope = (R + ESR)·C.
	TimeConstantS float64 `json:"time_constant_s"`
	// ESROhm, in Ω, is the cell's ESR from the step at the switch-on; nil
	// when no sample before t0 is logged or the step is not above zero.
	ESROhm *float64 `json:"esr_ohm,omitempty"`
	// CapacitanceF, in F, is τ/(R + ESR), or τ/R without an ESR (a note says
	// so).
	CapacitanceF float64 `json:"capacitance_f"`
	// FitPoints is the number of samples fitted; RSquared the fit's
	// coefficient of determination for ln V; ResidualRMSLn the RMS of the
	// residuals of ln V (a relative voltage: 0.01 is about 1 %).
	FitPoints     int       `json:"fit_points"`
	RSquared      float64   `json:"r_squared"`
	ResidualRMSLn float64   `json:"residual_rms_ln"`
	Warnings      []Warning `json:"warnings"`
	Notes         []string  `json:"notes"`
}

// ResistorDischargeLog measures capacitance, and ESR where the switch-on is
// logged, from a logged discharge through a known resistor resistorOhm (R).
// The cell behind its ESR discharges as v(t) = V0·e^(−(t−t0)/τ) with
// τ = (R + ESR)·C, and the logged terminal voltage is u = v·R/(R + ESR)
// (REFERENCES.md 3.6): at the switch-on it drops at once by V0·ESR/(R + ESR),
// then decays with τ.
//
// stat.LinearRegression fits ln u = a + b·(t − t0) over the decay: the
// samples from t0 on, while the voltage stays at or above FloorV
// (ResistorFloorFraction of the first sample). Then
//
//	τ = −1/b
//	u0 = e^a (the decay extended back to t0)
//	ESR = R·(V_before − u0)/u0   (V_before: the last sample before t0)
//	C = τ/(R + ESR)
//
// The switch-on t0, unless opts.StartS gives it: with a current column, the
// first sample whose current is at least half the largest logged current
// (by magnitude); without one, the first sample after the log's highest
// voltage that lies below it by more than δ = max(10σ, 0.1 % of it), as in
// ConstantCurrentDischarge.
//
// Warnings: short_log, noisy (ResistorMaxResidualLn), short_decay,
// esr_uncertain, coarse_start, no_step and, with a current column,
// current_mismatch (the median of V/I over the fit differs from R by more
// than 5 %). Errors: a sizing.ValidationError naming resistor_ohm, start_s, the
// log's bad sample, or log when it has no decay to fit.
func ResistorDischargeLog(log *Log, resistorOhm float64, opts *DischargeOptions) (ResistorDischargeResult, error) {
	var c checks
	c.positive("resistor_ohm", resistorOhm, benchOhms)
	startS := startOf(opts)
	if startS != nil && !sizing.Finite(*startS) {
		c.add("start_s", "finite", "must be a finite number")
	}
	c.log(log, 3)
	if err := c.err(); err != nil {
		return ResistorDischargeResult{}, err
	}
	t, v := log.TimeS, log.VoltageV
	n := len(t)
	r := ResistorDischargeResult{Method: "resistor", ResistorOhm: resistorOhm,
		Warnings: []Warning{}, Notes: []string{}}

	// The switch-on.
	i0 := -1
	current := log.CurrentA
	if startS == nil && current != nil {
		peak := 0.0
		for _, x := range current {
			if math.Abs(x) > math.Abs(peak) {
				peak = x
			}
		}
		if peak == 0 {
			r.Notes = append(r.Notes, "the current column is zero throughout, so the switch-on is found from the voltage")
			current = nil
		} else {
			for i, x := range current {
				if x/peak >= 0.5 {
					i0 = i
					break
				}
			}
			r.StartS, r.StartRule = t[i0], "current"
			r.Notes = append(r.Notes, fmt.Sprintf(
				"switch-on t0 = %s s: the first sample with the current at least half its largest logged value (%s A)", num(r.StartS), num(math.Abs(peak)/2)))
		}
	}
	switch {
	case startS != nil:
		i0 = indexAt(t, *startS)
		if i0 == n {
			return r, fieldError("start_s", "in_log", fmt.Sprintf(
				"%g s is after the log's last sample (%g s)", *startS, t[n-1]))
		}
		r.StartS, r.StartRule = *startS, "given"
		r.Notes = append(r.Notes, fmt.Sprintf("switch-on t0 = %s s as given", num(r.StartS)))
	case i0 < 0:
		var delta float64
		var single bool
		i0, delta, single = voltageStart(v, n)
		if i0 == n {
			return r, fieldError("log", "decay", fmt.Sprintf(
				"the voltage never falls below its highest value (%s) by more than %s: no discharge found", volts(slices.Max(v)), volts(delta)))
		}
		r.StartS, r.StartRule = t[i0], "voltage"
		r.Notes = append(r.Notes, fmt.Sprintf(
			"switch-on t0 = %s s: the first sample more than %s below the log's highest voltage (no current column)", num(r.StartS), volts(delta)))
		if single {
			r.Notes = append(r.Notes, fmt.Sprintf(
				"only the first sample (%s at %s s) is taken as the rest before the discharge; if the log starts with the discharge already on, give the start time",
				volts(v[0]), num(t[0])))
		}
	}
	if !(v[i0] > 0) {
		return r, fieldError("log", "positive", fmt.Sprintf(
			"the voltage at the switch-on (%s at %s s) is not positive; a resistor discharge starts from a charged cell", volts(v[i0]), num(t[i0])))
	}
	r.FloorV = ResistorFloorFraction * v[i0]
	end := i0
	for end < n && v[end] >= r.FloorV {
		end++
	}
	r.FitPoints = end - i0
	if r.FitPoints < 3 {
		return r, fieldError("log", "fit_points", fmt.Sprintf(
			"has only %d sample(s) from the switch-on at %s s down to the floor %s; the fit needs at least 3 and should have %d or more: log faster",
			r.FitPoints, num(t[i0]), volts(r.FloorV), MinFitPoints))
	}
	r.FitFromS, r.FitToS = t[i0], t[end-1]
	x := make([]float64, r.FitPoints)
	y := make([]float64, r.FitPoints)
	for i := range x {
		x[i] = t[i0+i] - r.StartS
		y[i] = math.Log(v[i0+i])
	}
	a, b := stat.LinearRegression(x, y, nil, false)
	if !(b < 0) {
		return r, fieldError("log", "decay", fmt.Sprintf(
			"the voltage does not decay after the switch-on at %s s (fitted ln V slope %s per s); is it a resistor discharge?", num(r.StartS), num(b)))
	}
	r.LnSlopePerS = b
	r.TimeConstantS = -1 / b
	r.LineAtStartV = math.Exp(a)
	r.RSquared = stat.RSquared(x, y, nil, a, b)
	r.ResidualRMSLn = residualRMS(x, y, a, b)
	esr := 0.0
	var step float64
	if i0 > 0 {
		vb := v[i0-1]
		r.VoltageBeforeV = &vb
		step = vb - r.LineAtStartV
		if step > 0 {
			esr = resistorOhm * step / r.LineAtStartV
			r.ESROhm = &esr
		} else {
			r.Warnings = append(r.Warnings, Warning{"no_step", fmt.Sprintf(
				"no step at the switch-on: the voltage before it (%s) is not above the decay extended back to t0 (%s), so the ESR is not measured",
				volts(vb), volts(r.LineAtStartV))})
		}
	} else {
		r.Notes = append(r.Notes, "no sample before the switch-on, so the ESR is not measured")
	}
	if r.ESROhm == nil {
		r.Notes = append(r.Notes, "C = τ/R without the ESR: it is high by ESR/R")
	}
	r.CapacitanceF = r.TimeConstantS / (resistorOhm + esr)
	if err := outputs("the log", r.LnSlopePerS, r.TimeConstantS, r.LineAtStartV, r.RSquared,
		r.ResidualRMSLn, r.CapacitanceF, esr); err != nil {
		return r, err
	}
	if !(r.CapacitanceF > 0) {
		return r, fieldError("log", "overflow", "gives a capacitance that rounds to zero; check the units of time_s (s) and resistor_ohm (Ω)")
	}

	// Warnings.
	if r.FitPoints < MinFitPoints {
		r.Warnings = append(r.Warnings, Warning{"short_log", fmt.Sprintf(
			"only %d samples in the decay, fewer than %d: log faster so the fit rests on more points", r.FitPoints, MinFitPoints)})
	}
	if r.ResidualRMSLn > ResistorMaxResidualLn {
		r.Warnings = append(r.Warnings, Warning{"noisy", fmt.Sprintf(
			"the samples leave the fitted exponential by %.3g %% RMS (R² = %.5f), more than %g %%: check the resistor stayed connected and the logger's offset",
			100*r.ResidualRMSLn, r.RSquared, 100*ResistorMaxResidualLn)})
	}
	if decay := (r.FitToS - r.FitFromS) / r.TimeConstantS; decay < ResistorMinDecayLn {
		r.Warnings = append(r.Warnings, Warning{"short_decay", fmt.Sprintf(
			"the fit spans %.3g of a time constant, less than %g: log the discharge for longer so the time constant is well fixed", decay, ResistorMinDecayLn)})
	}
	if r.ESROhm != nil {
		// The noise in volts near the switch-on: the relative residual at
		// the start voltage.
		noise := r.ResidualRMSLn * r.LineAtStartV
		if noise > MaxESRNoiseFraction*step {
			r.Warnings = append(r.Warnings, Warning{"esr_uncertain", fmt.Sprintf(
				"the noise (about %s RMS near the switch-on) is %.3g %% of the step %s, more than %g %%: the ESR rests on one noisy sample before the switch-on",
				volts(noise), 100*noise/step, volts(step), 100*MaxESRNoiseFraction)})
		}
		if r.StartRule != "given" {
			if w, ok := coarseStart(t[i0-1], t[i0], *r.ESROhm*r.CapacitanceF, "the decay falls by about the whole step"); ok {
				r.Warnings = append(r.Warnings, w)
			}
		}
	}
	if log.CurrentA != nil {
		ratio := make([]float64, 0, r.FitPoints)
		for i := i0; i < end; i++ {
			if log.CurrentA[i] != 0 {
				ratio = append(ratio, math.Abs(v[i]/log.CurrentA[i]))
			}
		}
		if len(ratio) > 0 {
			if m := medianOf(ratio); math.Abs(m-resistorOhm) > 0.05*resistorOhm && sizing.Finite(m) {
				r.Warnings = append(r.Warnings, Warning{"current_mismatch", fmt.Sprintf(
					"the logged voltage over the logged current is %s Ω (median over the fit), not the %s Ω given: check resistor_ohm, or whether the voltage is logged across the resistor",
					num(m), num(resistorOhm))})
			}
		}
	}
	return r, nil
}

// coarseStart is the "coarse_start" warning when the samples before and
// at the switch-on, at before and after s, are more than
// MaxStartIntervalTau of the cell's time constant tauS = ESR·C apart; falls
// says how the curve falls by the step the ESR comes from in one tauS.
func coarseStart(before, after, tauS float64, falls string) (Warning, bool) {
	dt := after - before
	if !(tauS > 0) || !(dt > MaxStartIntervalTau*tauS) {
		return Warning{}, false
	}
	return Warning{"coarse_start", fmt.Sprintf(
		"the samples at %s s and %s s around the switch-on are %s s apart, %.3g of the cell's time constant ESR·C = %s, more than %g of it: the switch-on lies somewhere in between, and %s in one time constant, so the ESR may be overstated by up to %.3g %%. Log every %s or faster around the switch-on",
		num(before), num(after), num(dt), dt/tauS, sizing.Quantity(tauS, "s", 3), MaxStartIntervalTau, falls, 100*dt/tauS,
		sizing.Quantity(MaxStartIntervalTau*tauS, "s", 2))}, true
}

// HoldPoint is the leakage at one time of a hold.
type HoldPoint struct {
	// AtS, in s, is the time on the log's axis.
	AtS float64 `json:"at_s"`
	// VoltageV, in V, is the local line's voltage at AtS.
	VoltageV float64 `json:"voltage_v"`
	// SlopeVPerS, in V/s, is the local dV/dt (negative while it falls).
	SlopeVPerS float64 `json:"slope_v_per_s"`
	// LeakageA, in A, is C·|dV/dt| while the voltage falls; 0 where it does
	// not (warning rises).
	LeakageA float64 `json:"leakage_a"`
	// ParallelResistanceOhm, in Ω, is the equivalent parallel resistance
	// V/I; nil where the leakage is 0.
	ParallelResistanceOhm *float64 `json:"parallel_resistance_ohm,omitempty"`
	// FromS and ToS, in s, bound the local regression's window; Points is
	// the number of samples in it.
	FromS  float64 `json:"from_s"`
	ToS    float64 `json:"to_s"`
	Points int     `json:"points"`
}

// HoldResult is the result of HoldLog.
type HoldResult struct {
	Method string `json:"method"` // "hold"
	// CapacitanceF, in F, is the capacitance the leakage is worked out with.
	CapacitanceF float64 `json:"capacitance_f"`
	// StartS, EndS, in s, and StartV, EndV, in V, are the first and last
	// samples; DropPct is the total drop, 100·(StartV − EndV)/StartV.
	StartS  float64 `json:"start_s"`
	EndS    float64 `json:"end_s"`
	StartV  float64 `json:"start_v"`
	EndV    float64 `json:"end_v"`
	DropPct float64 `json:"drop_pct"`
	// WindowS, in s, is the full width of each local regression window.
	WindowS float64     `json:"window_s"`
	Points  []HoldPoint `json:"points"`
	// LeakageA, in A, and ParallelResistanceOhm, in Ω, are the figures at the
	// latest point, the closest to the steady leakage; LeakageAtV, in V, is
	// the voltage there.
	LeakageA              float64   `json:"leakage_a"`
	LeakageAtV            float64   `json:"leakage_at_v"`
	ParallelResistanceOhm *float64  `json:"parallel_resistance_ohm,omitempty"`
	Warnings              []Warning `json:"warnings"`
	Notes                 []string  `json:"notes"`
}

// HoldLog works out the leakage from an open-circuit hold after charging:
// the log is the cell's voltage from the disconnection on. At each time in
// atS (s, on the log's time axis), stat.LinearRegression fits a line to the
// samples within ±HoldWindowFraction/2 of the hold's duration around it (the
// window cut at the log's ends), and
//
//	I = C·|dV/dt|   (leakage_a, while the voltage falls)
//	R_p = V/I       (parallel_resistance_ohm, V the line at that time)
//
// with C = capacitanceF, in F. With no atS, the points are at 10 %, 50 % and
// 90 % of the hold (a note says so). The top-level LeakageA is the latest
// point's. The early drop of a hold also holds the charge moving into the
// electrodes' pores, so the early points overstate the steady leakage.
//
// Warnings: rises (the voltage does not fall at a point), noisy (the local
// slope's standard error above HoldMaxSlopeError of it), short_log (fewer
// than MinFitPoints samples in a window). Errors: a sizing.ValidationError
// naming capacitance_f, at_s[i] (outside the log, or fewer than 3 samples
// around it), the log's bad sample, or log.
func HoldLog(log *Log, capacitanceF float64, atS []float64) (HoldResult, error) {
	var c checks
	c.positive("capacitance_f", capacitanceF, benchFarads)
	for i, at := range atS {
		if !sizing.Finite(at) {
			c.add(fmt.Sprintf("at_s[%d]", i), "finite", "must be a finite number")
		}
	}
	c.log(log, 3)
	if err := c.err(); err != nil {
		return HoldResult{}, err
	}
	t, v := log.TimeS, log.VoltageV
	n := len(t)
	r := HoldResult{Method: "hold", CapacitanceF: capacitanceF,
		StartS: t[0], EndS: t[n-1], StartV: v[0], EndV: v[n-1],
		Warnings: []Warning{}, Notes: []string{}}
	if !(v[0] > 0) {
		return r, fieldError("log", "positive", fmt.Sprintf(
			"starts at %s; a hold starts from a charged cell", volts(v[0])))
	}
	span := t[n-1] - t[0]
	half := HoldWindowFraction / 2 * span
	r.WindowS = 2 * half
	r.DropPct = 100 * (v[0] - v[n-1]) / v[0]
	if len(atS) == 0 {
		atS = []float64{t[0] + 0.1*span, t[0] + 0.5*span, t[0] + 0.9*span}
		r.Notes = append(r.Notes, fmt.Sprintf("no times given: the leakage is worked out at 10 %%, 50 %% and 90 %% of the hold (%s s, %s s, %s s)",
			num(atS[0]), num(atS[1]), num(atS[2])))
	}
	latest := -1
	for i, at := range atS {
		field := fmt.Sprintf("at_s[%d]", i)
		if at < t[0] || at > t[n-1] {
			return r, fieldError(field, "in_log", fmt.Sprintf(
				"%g s is outside the log, which runs from %s s to %s s", at, num(t[0]), num(t[n-1])))
		}
		lo := indexAt(t, at-half)
		hi := indexAt(t, math.Nextafter(at+half, math.Inf(1)))
		p := HoldPoint{AtS: at, FromS: max(at-half, t[0]), ToS: min(at+half, t[n-1]), Points: hi - lo}
		if p.Points < 3 {
			return r, fieldError(field, "window", fmt.Sprintf(
				"has only %d sample(s) within ±%s s of %g s; the local fit needs at least 3: log more often", p.Points, num(half), at))
		}
		x := make([]float64, p.Points)
		y := v[lo:hi]
		for j := range x {
			x[j] = t[lo+j] - at
		}
		a, b := stat.LinearRegression(x, y, nil, false)
		p.VoltageV, p.SlopeVPerS = a, b
		if b < 0 {
			p.LeakageA = capacitanceF * -b
			if a > 0 {
				rp := a / p.LeakageA
				p.ParallelResistanceOhm = &rp
			}
		} else {
			r.Warnings = append(r.Warnings, Warning{"rises", fmt.Sprintf(
				"the voltage does not fall around %s s (dV/dt = %s V/s): no leakage there. Is the log the open-circuit hold after the charge?", num(at), num(b))})
		}
		if p.Points < MinFitPoints {
			r.Warnings = append(r.Warnings, Warning{"short_log", fmt.Sprintf(
				"only %d samples within ±%s s of %s s, fewer than %d: log more often", p.Points, num(half), num(at), MinFitPoints)})
		}
		if b != 0 {
			var sxx float64
			mx := stat.Mean(x, nil)
			for _, xi := range x {
				sxx += (xi - mx) * (xi - mx)
			}
			se := residualRMS(x, y, a, b) * math.Sqrt(float64(p.Points)/float64(p.Points-2)/sxx)
			if se > HoldMaxSlopeError*math.Abs(b) {
				r.Warnings = append(r.Warnings, Warning{"noisy", fmt.Sprintf(
					"around %s s the slope is uncertain by %.3g %% (standard error), more than %g %%: log longer, more often or with finer resolution",
					num(at), 100*se/math.Abs(b), 100*HoldMaxSlopeError)})
			}
		}
		if err := outputs("the log", p.VoltageV, p.SlopeVPerS, p.LeakageA); err != nil {
			return r, err
		}
		if p.ParallelResistanceOhm != nil && !sizing.Finite(*p.ParallelResistanceOhm) {
			p.ParallelResistanceOhm = nil
		}
		r.Points = append(r.Points, p)
		if latest < 0 || at > r.Points[latest].AtS {
			latest = len(r.Points) - 1
		}
	}
	if err := outputs("the log", r.DropPct, r.WindowS); err != nil {
		return r, err
	}
	lp := r.Points[latest]
	r.LeakageA, r.LeakageAtV, r.ParallelResistanceOhm = lp.LeakageA, lp.VoltageV, lp.ParallelResistanceOhm
	r.Notes = append(r.Notes,
		"the early drop of a hold includes charge moving into the electrodes' pores, so early points overstate the steady leakage; the latest point is the closest to it",
		"a datasheet's leakage is usually measured with the cell held at its rated voltage for hours; compare at the same voltage (CompareWithDatasheet scales by the parallel resistance)")
	return r, nil
}

// SymmetricCellResult is the result of SymmetricCell.
type SymmetricCellResult struct {
	// CellCapacitanceF, in F, is the measured cell capacitance.
	CellCapacitanceF float64 `json:"cell_capacitance_f"`
	// ElectrodeCapacitanceF, in F, is one electrode's capacitance, 2·C_cell.
	ElectrodeCapacitanceF float64 `json:"electrode_capacitance_f"`
	// ElectrodeMassG, in g, and ElectrodeAreaCm2, in cm², are the inputs.
	ElectrodeMassG   *float64 `json:"electrode_mass_g,omitempty"`
	ElectrodeAreaCm2 *float64 `json:"electrode_area_cm2,omitempty"`
	// SpecificCapacitanceFPerG, in F/g, is C_electrode per electrode mass;
	// nil without a mass.
	SpecificCapacitanceFPerG *float64 `json:"specific_capacitance_f_per_g,omitempty"`
	// ArealCapacitanceFPerCm2, in F/cm², is C_electrode per electrode area;
	// nil without an area.
	ArealCapacitanceFPerCm2 *float64 `json:"areal_capacitance_f_per_cm2,omitempty"`
}

// SymmetricCell does the bookkeeping of a home-made symmetric cell: two
// equal electrodes in series, so
//
//	C_cell = C_electrode/2,  C_electrode = 2·C_cell
//
// The specific figures are per ONE electrode, the convention of electrode
// research: electrodeMassG is the active mass of one electrode in g and
// electrodeAreaCm2 the geometric area of one electrode in cm², and
//
//	C_sp = C_electrode/m = 2·C_cell/m   (F/g)
//	C_A  = C_electrode/A = 2·C_cell/A   (F/cm²)
//
// Per the total mass of both electrodes (M = 2m) the same cell gives
// C_cell/M = C_sp/4; say which convention when quoting. These two figures
// are in g and cm², the units the field publishes in, not SI.
//
// nil mass or area leaves that figure nil. Errors (a sizing.ValidationError) name
// capacitance_f, electrode_mass_g or electrode_area_cm2 when one is not
// finite and positive, or outside its bench range (1 µF–1 MF, 1 µg–1 t,
// 10⁻⁶–10⁶ cm²).
func SymmetricCell(cellF float64, electrodeMassG, electrodeAreaCm2 *float64) (SymmetricCellResult, error) {
	var c checks
	c.positive("capacitance_f", cellF, benchFarads)
	if electrodeMassG != nil {
		c.positive("electrode_mass_g", *electrodeMassG, benchGrams)
	}
	if electrodeAreaCm2 != nil {
		c.positive("electrode_area_cm2", *electrodeAreaCm2, benchCm2)
	}
	if err := c.err(); err != nil {
		return SymmetricCellResult{}, err
	}
	r := SymmetricCellResult{CellCapacitanceF: cellF, ElectrodeCapacitanceF: 2 * cellF}
	if electrodeMassG != nil {
		m, sp := *electrodeMassG, r.ElectrodeCapacitanceF / *electrodeMassG
		r.ElectrodeMassG, r.SpecificCapacitanceFPerG = &m, &sp
	}
	if electrodeAreaCm2 != nil {
		a, ca := *electrodeAreaCm2, r.ElectrodeCapacitanceF / *electrodeAreaCm2
		r.ElectrodeAreaCm2, r.ArealCapacitanceFPerCm2 = &a, &ca
	}
	var outs []float64
	outs = append(outs, r.ElectrodeCapacitanceF)
	if r.SpecificCapacitanceFPerG != nil {
		outs = append(outs, *r.SpecificCapacitanceFPerG)
	}
	if r.ArealCapacitanceFPerCm2 != nil {
		outs = append(outs, *r.ArealCapacitanceFPerCm2)
	}
	if err := outputs("the inputs", outs...); err != nil {
		return SymmetricCellResult{}, err
	}
	return r, nil
}

// Figures are a cell's figures from one or more tests; nil is not
// measured. The results' Figures methods give them; the web may merge those
// of several tests.
type Figures struct {
	// CapacitanceF, in F.
	CapacitanceF *float64 `json:"capacitance_f,omitempty"`
	// ESROhm, in Ω, the DC ESR.
	ESROhm *float64 `json:"esr_ohm,omitempty"`
	// LeakageA, in A, at LeakageAtV (V); nil LeakageAtV: at the cell's
	// rated voltage.
	LeakageA   *float64 `json:"leakage_a,omitempty"`
	LeakageAtV *float64 `json:"leakage_at_v,omitempty"`
	// RatedV, in V, is the rated voltage the test assumed; DraftCell takes
	// it for a cell with no base.
	RatedV *float64 `json:"rated_v,omitempty"`
}

// Figures are the timed discharge's figures: the exact capacitance.
func (r TimedDischarge) Figures() Figures {
	return Figures{CapacitanceF: ptr(r.CapacitanceF)}
}

// Figures are the constant-current discharge's figures: the regression
// capacitance, the ESR when measured, and the rated voltage.
func (r ConstantCurrentResult) Figures() Figures {
	return Figures{CapacitanceF: ptr(r.CapacitanceF), ESROhm: clone(r.ESROhm), RatedV: ptr(r.RatedV)}
}

// Figures are the resistor discharge's figures: the capacitance, and the
// ESR when measured.
func (r ResistorDischargeResult) Figures() Figures {
	return Figures{CapacitanceF: ptr(r.CapacitanceF), ESROhm: clone(r.ESROhm)}
}

// Figures are the hold's figures: the latest point's leakage and the voltage
// it was found at.
func (r HoldResult) Figures() Figures {
	return Figures{LeakageA: ptr(r.LeakageA), LeakageAtV: ptr(r.LeakageAtV)}
}

// Summary is a one-line account of the test for a measured cell's notes.
func (r TimedDischarge) Summary() string {
	return fmt.Sprintf("timed discharge through %s Ω from %s to %s in %s s: C = %s F (exact; the quick estimate reads %.3g %% high)",
		num(r.ResistorOhm), volts(r.V0V), volts(r.V1V), num(r.DurationS), num(r.CapacitanceF), r.QuickErrorPct)
}

// Summary is a one-line account of the test for a measured cell's notes.
func (r ConstantCurrentResult) Summary() string {
	esr := "not measured"
	if r.ESROhm != nil {
		esr = num(*r.ESROhm) + " Ω"
	}
	return fmt.Sprintf("constant-current discharge (IEC 62391-1) at %s A from UR %s: U1 %s at %s s, U2 %s at %s s, %d points, R² %.5f, residual %s RMS; C = %s F (two-point %s F), ESR %s (ΔU3 %s)%s",
		num(r.CurrentA), volts(r.RatedV), volts(r.U1V), num(r.T1S), volts(r.U2V), num(r.T2S), r.FitPoints, r.RSquared,
		volts(r.ResidualRMSV), num(r.CapacitanceF), num(r.TwoPointCapacitanceF), esr, volts(r.DropV), warningCodes(r.Warnings))
}

// Summary is a one-line account of the test for a measured cell's notes.
func (r ResistorDischargeResult) Summary() string {
	esr := "not measured"
	if r.ESROhm != nil {
		esr = num(*r.ESROhm) + " Ω"
	}
	return fmt.Sprintf("resistor discharge through %s Ω: ln V fit from %s s to %s s, %d points, R² %.5f, residual %.3g %% RMS; τ = %s s, C = %s F, ESR %s%s",
		num(r.ResistorOhm), num(r.FitFromS), num(r.FitToS), r.FitPoints, r.RSquared, 100*r.ResidualRMSLn,
		num(r.TimeConstantS), num(r.CapacitanceF), esr, warningCodes(r.Warnings))
}

// Summary is a one-line account of the test for a measured cell's notes.
func (r HoldResult) Summary() string {
	parts := make([]string, len(r.Points))
	for i, p := range r.Points {
		parts[i] = fmt.Sprintf("%s A at %s s", num(p.LeakageA), num(p.AtS))
	}
	return fmt.Sprintf("open-circuit hold from %s to %s over %s s (drop %.3g %%), C %s F: leakage %s%s",
		volts(r.StartV), volts(r.EndV), num(r.EndS-r.StartS), r.DropPct, num(r.CapacitanceF), strings.Join(parts, ", "), warningCodes(r.Warnings))
}

// Summary joins test summaries into one note for DraftCell,
// with the test date first when one is given: "measured 2025-03-14: …; …".
func Summary(date string, summaries ...string) string {
	s := strings.Join(summaries, "; ")
	if date = strings.TrimSpace(date); date != "" {
		return "measured " + date + ": " + s
	}
	return "measured: " + s
}

// Comparison is one measured figure against the datasheet's.
type Comparison struct {
	// Quantity is the figure's key: capacitance_f, esr_ohm or leakage_a;
	// Unit its unit (F, Ω, A).
	Quantity string `json:"quantity"`
	Unit     string `json:"unit"`
	// Measured and Stated are in Unit. A leakage measured at another voltage
	// is scaled to the cell's rated voltage first (see Note).
	Measured float64 `json:"measured"`
	Stated   float64 `json:"stated"`
	// DeviationPct is (Measured − Stated)/Stated × 100; nil when Stated is 0.
	DeviationPct *float64 `json:"deviation_pct,omitempty"`
	// AllowedMin and AllowedMax, in Unit, bound the figure (nil: no bound on
	// that side); Within says whether Measured lies in them.
	AllowedMin *float64 `json:"allowed_min,omitempty"`
	AllowedMax *float64 `json:"allowed_max,omitempty"`
	Within     bool     `json:"within_tolerance"`
	// Limit says where the bounds come from, in plain words.
	Limit string `json:"limit"`
	Note  string `json:"note,omitempty"`
}

// CompareWithDatasheet sets each measured figure beside the datasheet's
// (stated):
//   - capacitance_f within the cell's capacitance_tolerance_pct, or within
//     ±DefaultCapacitanceTolerancePct when the cell gives none (Limit says
//     so);
//   - esr_ohm and leakage_a at most the stated value, which a datasheet
//     gives as a maximum. A leakage measured at another voltage is scaled
//     to the rated voltage by the parallel-resistance model capbank sizes
//     with (I·UR/V, as sizing.Cell.LeakageA).
//
// A figure not measured, or not stated (a nil leakage_a, a stated value
// that is not finite, or not positive; a stated leakage of 0 is kept, with
// no deviation), is left out.
func CompareWithDatasheet(measured Figures, stated sizing.Cell) []Comparison {
	out := []Comparison{}
	if m := measured.CapacitanceF; m != nil && sizing.Finite(*m) && sizing.Finite(stated.CapacitanceF) && stated.CapacitanceF > 0 {
		minus, plus := -DefaultCapacitanceTolerancePct, DefaultCapacitanceTolerancePct
		limit := fmt.Sprintf("±%g %% assumed: the cell states no capacitance tolerance", DefaultCapacitanceTolerancePct)
		if tol := stated.CapacitanceTolerancePct; len(tol) == 2 && sizing.Finite(tol[0]) && sizing.Finite(tol[1]) {
			minus, plus = tol[0], tol[1]
			limit = fmt.Sprintf("%+g %% to %+g %%, the cell's capacitance tolerance", minus, plus)
		}
		lo, hi := stated.CapacitanceF*(1+minus/100), stated.CapacitanceF*(1+plus/100)
		out = append(out, Comparison{Quantity: "capacitance_f", Unit: "F", Measured: *m, Stated: stated.CapacitanceF,
			DeviationPct: deviation(*m, stated.CapacitanceF), AllowedMin: &lo, AllowedMax: &hi,
			Within: *m >= lo && *m <= hi, Limit: limit})
	}
	if m := measured.ESROhm; m != nil && sizing.Finite(*m) && sizing.Finite(stated.ESROhm) && stated.ESROhm > 0 {
		hi := stated.ESROhm
		out = append(out, Comparison{Quantity: "esr_ohm", Unit: "Ω", Measured: *m, Stated: stated.ESROhm,
			DeviationPct: deviation(*m, stated.ESROhm), AllowedMax: &hi, Within: *m <= hi,
			Limit: "at most the stated ESR, a datasheet maximum"})
	}
	if m := measured.LeakageA; m != nil && sizing.Finite(*m) && stated.LeakageA != nil && sizing.Finite(*stated.LeakageA) && *stated.LeakageA >= 0 {
		leak, note := leakageAtRated(*m, measured.LeakageAtV, stated.RatedV)
		hi := *stated.LeakageA
		out = append(out, Comparison{Quantity: "leakage_a", Unit: "A", Measured: leak, Stated: hi,
			DeviationPct: deviation(leak, hi), AllowedMax: &hi, Within: leak <= hi,
			Limit: "at most the stated leakage current, a datasheet maximum", Note: note})
	}
	return out
}

// DraftCell makes a library cell of measured figures: a copy of base
// (nil: a new cell) with every measured figure in place of the stated one,
// Source "measured" and Notes holding summary (see Summary; cut
// to the 2000 characters Notes holds).
//
// The ID is base's with "-measured" added ("measured" with no base) and the
// Name base's with " (measured)"; the web lets the user change both. A new
// cell takes its rated voltage from figures.RatedV. A leakage measured at
// another voltage is scaled to the rated voltage (I·UR/V). Figures left nil
// keep base's values; with no base they stay zero, and Validate names them
// (cells[0].esr_ohm: must be greater than 0), so call Validate before
// sizing with the cell, as for any cell.
func DraftCell(base *sizing.Cell, figures Figures, summary string) sizing.Cell {
	var c sizing.Cell
	if base != nil {
		c = cloneCell(*base)
		if !strings.HasSuffix(c.ID, "-measured") {
			c.ID = cut(c.ID, 100-len("-measured")) + "-measured"
		}
		if c.Name == "" {
			c.Name = base.ID
		}
		if !strings.HasSuffix(c.Name, " (measured)") {
			c.Name = cut(c.Name, 200-len(" (measured)")) + " (measured)"
		}
	} else {
		c.ID, c.Name = "measured", "measured cell"
		if figures.RatedV != nil {
			c.RatedV = *figures.RatedV
		}
	}
	c.Source = "measured"
	c.Notes = cut(summary, 2000)
	if figures.CapacitanceF != nil {
		c.CapacitanceF = *figures.CapacitanceF
	}
	if figures.ESROhm != nil {
		c.ESROhm = *figures.ESROhm
	}
	if figures.LeakageA != nil {
		leak, _ := leakageAtRated(*figures.LeakageA, figures.LeakageAtV, c.RatedV)
		c.LeakageA = &leak
	}
	return c
}

// leakageAtRated scales a leakage I measured at atV to the rated
// voltage by the parallel-resistance model: I·UR/V.
func leakageAtRated(i float64, atV *float64, ratedV float64) (float64, string) {
	if atV == nil || !(*atV > 0) || !sizing.Finite(*atV) || !(ratedV > 0) || !sizing.Finite(ratedV) || *atV == ratedV {
		return i, ""
	}
	scaled := i * ratedV / *atV
	if !sizing.Finite(scaled) {
		return i, ""
	}
	return scaled, fmt.Sprintf("measured %s A at %s, scaled to the rated %s as I·UR/V (a parallel resistance)", num(i), volts(*atV), volts(ratedV))
}

func deviation(measured, stated float64) *float64 {
	if stated == 0 {
		return nil
	}
	d := (measured - stated) / stated * 100
	if !sizing.Finite(d) {
		return nil
	}
	return &d
}

// cloneCell copies a cell with its own copies of every pointer and
// slice, so the measured cell and its base never share a value.
func cloneCell(c sizing.Cell) sizing.Cell {
	out := c
	rv := reflect.ValueOf(&out).Elem()
	for i := range rv.NumField() {
		f := rv.Field(i)
		switch f.Kind() {
		case reflect.Pointer:
			if !f.IsNil() {
				p := reflect.New(f.Type().Elem())
				p.Elem().Set(f.Elem())
				f.Set(p)
			}
		case reflect.Slice:
			if !f.IsNil() {
				s := reflect.MakeSlice(f.Type(), f.Len(), f.Len())
				reflect.Copy(s, f)
				f.Set(s)
			}
		}
	}
	return out
}

// cut cuts s to at most n characters (runes), ending it with "…"
// when it was cut.
func cut(s string, n int) string {
	if utf8.RuneCountInString(s) <= n {
		return s
	}
	r := []rune(s)
	return string(r[:n-1]) + "…"
}

func warningCodes(ws []Warning) string {
	if len(ws) == 0 {
		return ""
	}
	codes := make([]string, len(ws))
	for i, w := range ws {
		codes[i] = w.Code
	}
	return " (warnings: " + strings.Join(codes, ", ") + ")"
}

// checks collects the input problems of a measurement call.
type checks struct{ errs sizing.ValidationError }

func (c *checks) add(field, rule, format string, a ...any) {
	c.errs = append(c.errs, sizing.FieldError{Field: field, Rule: rule, Message: fmt.Sprintf(format, a...)})
}

// benchRange is the range of a measurement input: wider than any bench
// test of a supercapacitor cell or bank reaches, narrow enough that no
// figure worked out from the inputs overflows (the timed method's V0/V1
// stays within 10¹¹, its capacitance within 10³¹ F). A value outside is a
// slip of unit or a typo (1e-320 for 1e-3), refused by its field.
type benchRange struct {
	lo, hi float64
	unit   string
}

var (
	benchVolts   = benchRange{1e-6, 1e5, "V"}   // a logger's microvolt to the design window's 100 kV
	benchSeconds = benchRange{1e-6, 1e9, "s"}   // a microsecond to 30 years
	benchOhms    = benchRange{1e-6, 1e12, "Ω"}  // a busbar's microohm to an insulation tester's teraohm
	benchAmps    = benchRange{1e-9, 1e6, "A"}   // a nanoampere to a megaampere
	benchFarads  = benchRange{1e-6, 1e6, "F"}   // the design's range of cell capacitance
	benchGrams   = benchRange{1e-6, 1e6, "g"}   // a microgram of electrode to a tonne
	benchCm2     = benchRange{1e-6, 1e6, "cm²"} // a hundredth of a square millimetre to 100 m²
)

// positive checks that x is a finite number greater than zero, within the
// bench range r.
func (c *checks) positive(field string, x float64, r benchRange) {
	switch {
	case !sizing.Finite(x):
		c.add(field, "finite", "must be a finite number (got %g)", x)
	case !(x > 0):
		c.add(field, "gt", "must be greater than 0 %s (got %g)", r.unit, x)
	case x < r.lo:
		c.add(field, "range", "is %g %s, below %g %s, less than any bench test measures; check the value and its unit", x, r.unit, r.lo, r.unit)
	case x > r.hi:
		c.add(field, "range", "is %g %s, above %g %s, more than any bench test measures; check the value and its unit", x, r.unit, r.hi, r.unit)
	}
}

// log checks a log's shape: at least min samples, equal lengths, finite
// numbers, strictly increasing time. It stops at the first bad sample.
func (c *checks) log(log *Log, min int) {
	if log == nil {
		c.add("log", "required", "is required: give the logged samples")
		return
	}
	n := len(log.TimeS)
	switch {
	case len(log.VoltageV) != n:
		c.add("log.voltage_v", "len", "has %d samples but time_s has %d; give one voltage per time", len(log.VoltageV), n)
		return
	case log.CurrentA != nil && len(log.CurrentA) != n:
		c.add("log.current_a", "len", "has %d samples but time_s has %d; give one current per time", len(log.CurrentA), n)
		return
	case n < min:
		c.add("log", "samples", "has %d sample(s); this method needs at least %d", n, min)
		return
	}
	for i := range n {
		if !sizing.Finite(log.TimeS[i]) {
			c.add(fmt.Sprintf("log.time_s[%d]", i), "finite", "must be a finite number")
			return
		}
		if i > 0 && !(log.TimeS[i] > log.TimeS[i-1]) {
			c.add(fmt.Sprintf("log.time_s[%d]", i), "increasing", "%g s is not after the sample before it (%g s); time_s must strictly increase",
				log.TimeS[i], log.TimeS[i-1])
			return
		}
		if !sizing.Finite(log.VoltageV[i]) {
			c.add(fmt.Sprintf("log.voltage_v[%d]", i), "finite", "must be a finite number")
			return
		}
		if log.CurrentA != nil && !sizing.Finite(log.CurrentA[i]) {
			c.add(fmt.Sprintf("log.current_a[%d]", i), "finite", "must be a finite number")
			return
		}
	}
}

func (c *checks) err() error {
	if len(c.errs) == 0 {
		return nil
	}
	return c.errs
}

func fieldError(field, rule, msg string) error {
	return sizing.ValidationError{{Field: field, Rule: rule, Message: msg}}
}

// outputs reports an error when a computed figure is not finite:
// extreme inputs (times of 1e300 s, a resistor of 1e-300 Ω) can overflow,
// and no NaN or infinity may leave the package.
func outputs(from string, xs ...float64) error {
	for _, x := range xs {
		if !sizing.Finite(x) {
			field := "log"
			if from == "the inputs" {
				field = "inputs"
			}
			return fieldError(field, "overflow", fmt.Sprintf(
				"%s give figures too large or too small to compute; check their units (s, V, A, Ω, F)", from))
		}
	}
	return nil
}

func startOf(opts *DischargeOptions) *float64 {
	if opts == nil {
		return nil
	}
	return opts.StartS
}

func ptr(x float64) *float64 { return &x }

func clone(p *float64) *float64 {
	if p == nil {
		return nil
	}
	x := *p
	return &x
}

// indexAt returns the index of the first of the
// increasing times at or after s, or len(t) when there is none.
func indexAt(t []float64, s float64) int {
	i, _ := slices.BinarySearch(t, s)
	return i
}

// onPoint reports whether a sample's voltage is on the voltage point u:
// within 1e-12 of it (relative), so that a sample the rounding of its
// arithmetic puts a hair above or below the point still counts as on it.
func onPoint(x, u float64) bool { return math.Abs(x-u) <= 1e-12*math.Abs(u) }

// reached reports whether a falling voltage x has reached u: below it
// or on it.
func reached(x, u float64) bool { return x < u || onPoint(x, u) }

// crossing is the time the voltage reaches u between samples i−1
// (above u) and i (at or below it), by linear interpolation; a sample on u
// gives its own time.
func crossing(t, v []float64, i int, u float64) float64 {
	if onPoint(v[i], u) || i == 0 {
		return t[i]
	}
	f := min(max((v[i-1]-u)/(v[i-1]-v[i]), 0), 1)
	return t[i-1] + f*(t[i]-t[i-1])
}

// lowest is the lowest voltage from sample from on, and its time.
func lowest(v, t []float64, from int) (float64, float64) {
	j := from
	for i := from; i < len(v); i++ {
		if v[i] < v[j] {
			j = i
		}
	}
	return v[j], t[j]
}

// voltageStart finds the discharge start from the voltage alone: the
// first sample after the highest voltage in v[:end] that lies below it by
// more than δ = max(10σ, 0.1 % of it), with σ from noiseRMS. It returns
// the index (end when there is none before it, or len(v)), δ, and whether
// the rest before it is only the log's first sample.
func voltageStart(v []float64, end int) (int, float64, bool) {
	m := 0
	for i := 1; i < end; i++ {
		if v[i] > v[m] {
			m = i
		}
	}
	delta := max(10*noiseRMS(v), 1e-3*math.Abs(v[m]))
	for i := m + 1; i < len(v) && i <= end; i++ {
		if v[i] < v[m]-delta {
			return i, delta, m == 0 && i == 1
		}
	}
	return min(end, len(v)), delta, false
}

// noiseRMS estimates the RMS noise of a voltage log from its second
// differences d = v[i+1] − 2v[i] + v[i−1]: for white noise of RMS σ they
// have RMS σ√6, a smooth curve adds little to them, and their median
// ignores a step. σ = 1.4826·median|d|/√6 (1.4826 turns a median absolute
// deviation into an RMS for normal noise).
func noiseRMS(v []float64) float64 {
	if len(v) < 3 {
		return 0
	}
	d := make([]float64, len(v)-2)
	for i := 1; i < len(v)-1; i++ {
		d[i-1] = math.Abs(v[i+1] - 2*v[i] + v[i-1])
	}
	s := 1.4826 * medianOf(d) / math.Sqrt(6)
	if !sizing.Finite(s) {
		return 0
	}
	return s
}

// medianOf is the median of xs (not changed).
func medianOf(xs []float64) float64 {
	s := slices.Clone(xs)
	slices.Sort(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return s[n/2-1]/2 + s[n/2]/2
}

// residualRMS is the RMS of y about the line a + b·x.
func residualRMS(x, y []float64, a, b float64) float64 {
	var ss float64
	for i := range x {
		d := y[i] - (a + b*x[i])
		ss += d * d
	}
	return math.Sqrt(ss / float64(len(x)))
}

// num formats a figure for a message: up to 6 significant figures.
func num(x float64) string { return fmt.Sprintf("%.6g", x) }

// volts writes a voltage for a message.
func volts(x float64) string { return sizing.Quantity(x, "V", 5) }
