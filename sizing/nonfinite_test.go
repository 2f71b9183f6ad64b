package sizing

import (
	"fmt"
	"math"
	"os"
	"reflect"
	"strings"
	"testing"
)

// pathEachTime is nonFinite as it was, writing every figure's path on the
// way down: the reference the lazy one must match.
func pathEachTime(v reflect.Value, path string) (string, bool) {
	switch v.Kind() {
	case reflect.Float64:
		if !Finite(v.Float()) {
			return path, true
		}
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			return pathEachTime(v.Elem(), path)
		}
	case reflect.Slice, reflect.Array:
		for i := range v.Len() {
			if p, bad := pathEachTime(v.Index(i), fmt.Sprintf("%s[%d]", path, i)); bad {
				return p, true
			}
		}
	case reflect.Struct:
		t := v.Type()
		for i := range v.NumField() {
			f := t.Field(i)
			if !f.IsExported() {
				continue
			}
			name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
			if name == "" || name == "-" {
				name = f.Name
			}
			if path != "" {
				name = path + "." + name
			}
			if p, bad := pathEachTime(v.Field(i), name); bad {
				return p, true
			}
		}
	}
	return "", false
}

// floatsOf returns every float64 reachable in v that can be set.
func floatsOf(v reflect.Value, out *[]reflect.Value) {
	switch v.Kind() {
	case reflect.Float64:
		if v.CanSet() {
			*out = append(*out, v)
		}
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			floatsOf(v.Elem(), out)
		}
	case reflect.Slice, reflect.Array:
		for i := range v.Len() {
			floatsOf(v.Index(i), out)
		}
	case reflect.Struct:
		for i := range v.NumField() {
			if v.Type().Field(i).IsExported() {
				floatsOf(v.Field(i), out)
			}
		}
	}
}

// TestNonFinitePath: a NaN or an infinity put in each figure of the demo
// designs' reports in turn is found at the same JSON path as the path
// written on the way down finds it, and a report without one passes.
func TestNonFinitePath(t *testing.T) {
	t.Parallel()
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json", "logger-hold-up.json"} {
		f, err := os.Open("../testdata/" + name)
		if err != nil {
			t.Fatal(err)
		}
		d, err := DecodeDesign(f)
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		r, err := Size(d)
		if err != nil {
			t.Fatal(err)
		}
		v := reflect.ValueOf(r)
		if p, bad := nonFinite(v, ""); bad {
			t.Fatalf("%s: a finite report flagged at %s", name, p)
		}
		var figs []reflect.Value
		floatsOf(v, &figs)
		if len(figs) < 100 {
			t.Fatalf("%s: only %d figures", name, len(figs))
		}
		for i, fig := range figs {
			keep := fig.Float()
			fig.SetFloat([]float64{math.NaN(), math.Inf(1), math.Inf(-1)}[i%3])
			for _, start := range []string{"", "report"} {
				want, _ := pathEachTime(v, start)
				got, bad := nonFinite(v, start)
				if !bad || got != want {
					t.Errorf("%s: figure %d: path %q (found %v), want %q", name, i, got, bad, want)
				}
			}
			fig.SetFloat(keep)
		}
	}
}
