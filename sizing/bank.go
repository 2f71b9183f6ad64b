package sizing

import (
	"math"
	"sync/atomic"
)

// MaxSeries is the most cells in series capbank sizes in one string. Ten
// thousand 2.7 V cells make a 27 kV string, beyond any supercapacitor bank
// built (common practice, no source: the largest known are a few kV);
// more means a unit slip in window.max_v or a cell's voltage, and the count
// must still fit an int whatever the input.
const MaxSeries = 10_000

// SeriesCount returns the fewest cells in series that keep each cell at or
// below ceilingV (V) when the string sits at maxV (V):
//
//	n = ⌈maxV / ceilingV⌉
//
// judged in decimal intent: a quotient that is a whole number in decimal
// (42.0 V / 2.8 V = 15) counts as that number even when binary rounding
// makes it 15.000000000000002, so floating-point division never adds a cell.
// The tolerance is 1e-9 relative, far below any real voltage's precision.
// It returns 0 when either voltage is not positive and finite, or when the
// count would pass MaxSeries (so the conversion to int never overflows).
func SeriesCount(maxV, ceilingV float64) int {
	if !(maxV > 0) || !(ceilingV > 0) || math.IsInf(maxV, 0) || math.IsInf(ceilingV, 0) {
		return 0
	}
	q := maxV / ceilingV
	n := math.Ceil(q)
	if r := math.Round(q); r >= 1 && math.Abs(q-r) <= 1e-9*r {
		n = r
	}
	if !(n <= MaxSeries) {
		return 0
	}
	return int(n)
}

// BankCapacitance returns the capacitance, in F, of parallel strings of
// series cells, each cell of capacitance cellF (F):
//
//	C_bank = C_cell · parallel / series
//
// (REFERENCES.md 3.3, circuit theory).
func BankCapacitance(cellF float64, series, parallel int) float64 {
	return cellF * float64(parallel) / float64(series)
}

// BankESR returns the series resistance, in Ω, of parallel strings of series
// cells, each of ESR cellOhm (Ω):
//
//	R_bank = R_cell · series / parallel
//
// (REFERENCES.md 3.3). The time constant R·C is the same for cell and bank.
func BankESR(cellOhm float64, series, parallel int) float64 {
	return cellOhm * float64(series) / float64(parallel)
}

// StoredEnergy returns ½·C·V², in J, for C in F and V in V (REFERENCES.md 3.1).
func StoredEnergy(capacitanceF, v float64) float64 { return 0.5 * capacitanceF * v * v }

// UsableEnergy returns the energy, in J, a capacitor gives up between maxV
// and minV (V), with no loss:
//
//	ΔE = ½·C·(maxV² − minV²)
//
// (REFERENCES.md 3.2). The fraction of the stored energy is 1 − (minV/maxV)².
func UsableEnergy(capacitanceF, maxV, minV float64) float64 {
	return 0.5 * capacitanceF * (maxV - minV) * (maxV + minV)
}

// DefaultAmbientC, in °C, is the ambient temperature when a design gives
// none: 25 °C, where datasheets give ESR and capacitance.
const DefaultAmbientC = 25.0

// roomC is the temperature, in °C, at which datasheet ESR is given.
const roomC = DefaultAmbientC

// ColdFactor returns the factor by which a cell figure at coldC (°C)
// differs from its value at 25 °C, from one datasheet point: the factor f
// given at pointC (< 25 °C). Between the two temperatures it interpolates
// log-linearly,
//
//	k(T) = f^((25 − T)/(25 − pointC)),
//
// since electrolyte resistance rises roughly exponentially as it cools
// (an assumption of capbank, no source; REFERENCES.md 8.3 gives the trend);
// the capacitance factor (f ≤ 1) is interpolated the same way. Above 25 °C
// it returns 1; below pointC it returns f and beyond = true: the datasheet
// says nothing colder, and the caller must say so.
func ColdFactor(coldC, pointC, f float64) (k float64, beyond bool) {
	switch {
	case coldC >= roomC:
		return 1, false
	case coldC <= pointC:
		return f, coldC < pointC
	}
	return math.Pow(f, (roomC-coldC)/(roomC-pointC)), false
}

// ColdESRFactor is ColdFactor for the ESR's factor f (≥ 1).
func ColdESRFactor(coldC, pointC, f float64) (k float64, beyond bool) {
	return ColdFactor(coldC, pointC, f)
}

// bankModel is the worst-case equivalent circuit of a bank: an ideal
// capacitor c (F) behind the series resistance r (Ω), with the leakage as a
// conductance g (S) across the capacitor.
type bankModel struct {
	c, r, g float64
	// Constants of the constant-power solution (see step.go), set by
	// newBankModel: cpA = −R/(1 + R·g), cpB = 1 + R·g/(1 + R·g).
	cpA, cpB float64
	invC     float64 // 1/c, so that steps multiply instead of divide
	work     int     // steps solved by runtime, for the benchmarks
	// halt, when set, stops every step at once (see solveStep); nil for
	// a model that cannot be cancelled.
	halt *atomic.Bool
	// imax is the converter's input current limit, A (0: none), and curve
	// its efficiency against input voltage (nil: flat, already in the
	// steps): see solveStep.
	imax     float64
	effCurve *efficiencyCurve
}

// haltEvery is how often (in steps) the loops over the steps check the
// halt flag: every 1024 steps is a mask and a predictable branch per step,
// and at most ~0.1 ms of solving between checks.
const haltEvery = 1024

// halted reports whether the sizing this model belongs to was cancelled
// (SizeContext): the loops over the steps then stop where they are, and
// the report of a halted sizing is thrown away.
func (m *bankModel) halted() bool { return m.halt != nil && m.halt.Load() }

// newBankModel returns the bank model of capacitance c (F), series
// resistance r (Ω) and leakage conductance g (S).
func newBankModel(c, r, g float64) bankModel {
	k := 1 / (1 + r*g)
	return bankModel{c: c, r: r, g: g, cpA: -r * k, cpB: 1 + r*g*k, invC: 1 / c}
}
