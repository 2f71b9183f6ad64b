package sizing

import (
	"fmt"
	"math"
)

// Preferred-number series of IEC 60063:2015 for resistors, one decade each,
// copied from the published tables (REFERENCES.md 6.3, 6.4, 6.6), not from a
// formula: E24 differs from round(10^(i/24), 1) at eight places (6.5).
var (
	seriesE12 = []float64{1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2}
	seriesE24 = []float64{1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
		3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1}
	seriesE96 = []float64{1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30,
		1.33, 1.37, 1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74, 1.78, 1.82, 1.87, 1.91,
		1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32, 2.37, 2.43, 2.49, 2.55, 2.61, 2.67, 2.74, 2.80,
		2.87, 2.94, 3.01, 3.09, 3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74, 3.83, 3.92, 4.02, 4.12,
		4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49, 5.62, 5.76, 5.90, 6.04,
		6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32, 7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87,
		9.09, 9.31, 9.53, 9.76}
)

// PreferredSeries returns the decade of the named IEC 60063 series ("E12",
// "E24" or "E96").
func PreferredSeries(name string) ([]float64, error) {
	switch name {
	case "E12":
		return seriesE12, nil
	case "E24":
		return seriesE24, nil
	case "E96":
		return seriesE96, nil
	}
	return nil, fmt.Errorf("sizing: unknown preferred series %q (use E12, E24 or E96)", name)
}

// PreferredFloor returns the largest value of the series (a decade of
// mantissas in [1, 10)) that is at most x, for x > 0. The decade is found
// in decimal so that a value of the series (470 Ω) returns itself.
func PreferredFloor(x float64, series []float64) float64 {
	if !(x > 0) || math.IsInf(x, 0) {
		return 0
	}
	exp := math.Floor(math.Log10(x))
	for d := exp + 1; d >= exp-1; d-- {
		scale := math.Pow(10, d)
		for i := len(series) - 1; i >= 0; i-- {
			v := series[i] * scale
			// Compare with a relative tolerance of 1e-9 so 470 counts as 4.7·10².
			if v <= x*(1+1e-9) {
				return roundTo12Digits(v)
			}
		}
	}
	return 0
}

// roundTo12Digits rounds to 12 significant figures, removing the binary noise of
// mantissa × power of ten (4.7 × 100 = 470.00000000000006).
func roundTo12Digits(v float64) float64 {
	if v == 0 {
		return 0
	}
	p := math.Pow(10, 11-math.Floor(math.Log10(math.Abs(v))))
	return math.Round(v*p) / p
}

// resistorPowerRatings are common resistor power ratings, W (common
// practice, no source: the usual catalogue steps for chip, film and
// wirewound resistors).
var resistorPowerRatings = []float64{0.0625, 0.1, 0.125, 0.25, 0.5, 1, 2, 3, 5, 10, 25, 50, 100}

// ResistorRating returns the smallest common power rating at least margin
// times the dissipation w (W); the usual margin is 2 (common practice, no
// source). It returns 0 when even the largest rating is too small.
func ResistorRating(w, margin float64) float64 {
	need := w * margin
	for _, r := range resistorPowerRatings {
		if r >= need*(1-1e-12) {
			return r
		}
	}
	return 0
}
