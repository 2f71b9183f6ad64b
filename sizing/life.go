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
