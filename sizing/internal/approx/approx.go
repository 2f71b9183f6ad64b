// Package approx is the one tolerance check of the domain's tests (sizing
// and sizing/measure): a figure against its expected value within a stated
// relative tolerance.
package approx

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Near fails tb unless got is a finite number within rel (relative) of
// want, by gonum's scalar.EqualWithinRel:
//
//	got = want, or |got − want| ≤ rel·max(|got|, |want|)
//
// The failure names the figure, both values, the tolerance and how far off
// got is.
func Near(tb testing.TB, name string, got, want, rel float64) {
	tb.Helper()
	if math.IsNaN(got) || math.IsInf(got, 0) || !scalar.EqualWithinRel(got, want, rel) {
		tb.Errorf("%s = %.12g, want %.12g (relative tolerance %g, off by %.3g)", name, got, want, rel, (got-want)/want)
	}
}
