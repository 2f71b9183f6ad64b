// Package approx holds the checks of figures that the domain's tests
// (sizing and sizing/measure) share: a figure against its expected value
// within a stated relative tolerance, and no NaN or infinity anywhere in a
// result.
package approx

import (
	"math"
	"reflect"
	"strconv"
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

// AllFinite walks v (a result or a report) and fails tb on any NaN or
// infinity in a float64, a *float64 or a slice or struct of them, naming
// its path below name.
func AllFinite(tb testing.TB, name string, v any) {
	tb.Helper()
	var walk func(path string, rv reflect.Value)
	walk = func(path string, rv reflect.Value) {
		switch rv.Kind() {
		case reflect.Float64:
			if x := rv.Float(); math.IsNaN(x) || math.IsInf(x, 0) {
				tb.Errorf("%s%s = %g, want a finite number", name, path, x)
			}
		case reflect.Pointer:
			if !rv.IsNil() {
				walk(path, rv.Elem())
			}
		case reflect.Slice:
			for i := range rv.Len() {
				walk(path+"["+strconv.Itoa(i)+"]", rv.Index(i))
			}
		case reflect.Struct:
			for i := range rv.NumField() {
				walk(path+"."+rv.Type().Field(i).Name, rv.Field(i))
			}
		}
	}
	walk("", reflect.ValueOf(v))
}
