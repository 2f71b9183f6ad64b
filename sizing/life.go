package sizing

import "math"

// hoursPerYear is 365.25 days of 24 h.
const hoursPerYear = 8766.0

// ExpectedLife returns the expected life, in h, of a cell rated for ratedH
// hours at ratedC (°C) and its rated voltage ratedV (V), run at tempC (°C)
// and cellV (V):
//
//	L = L0 · 2^((T0 − T)/ΔT) · 2^((U_R − U)/ΔU)
//
// life halves for each tempStepK (ΔT) hotter and for each voltStepV (ΔU)
// higher (REFERENCES.md 4.3; rules of thumb, common practice: 10 K is the
// usual ΔT, 0.1–0.2 V the published ΔU).
func ExpectedLife(ratedH, ratedC, ratedV, tempC, cellV, tempStepK, voltStepV float64) float64 {
	return ratedH * math.Exp2((ratedC-tempC)/tempStepK) * math.Exp2((ratedV-cellV)/voltStepV)
}

// MaxLifeYears is the longest expected life capbank reports, in years.
// The halving rules are fitted over thousands to hundreds of thousands of
// hours; a cell held far below its rating and temperature scales to more
// than 10⁶ years, or past the largest float64, and the rules then say only
// that neither voltage nor temperature limits the life (common practice,
// no source, for where to stop).
const MaxLifeYears = 1e6
