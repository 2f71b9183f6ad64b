package form

import (
	"math"
	"reflect"
	"strings"
	"testing"
)

// TestParseEfficiencyCurve: the curve field reads a voltage with its SI
// prefix (SI Brochure, 9th ed., table 7: m = 1e-3, k = 1e3) and an
// efficiency as a share or a percentage (95 % = 0.95); each expected pair
// is the typed text read by hand.
func TestParseEfficiencyCurve(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		text string
		want [][]float64
	}{
		{"20 V: 88 %, 36 V: 93 %, 48 V: 95 %", [][]float64{{20, 0.88}, {36, 0.93}, {48, 0.95}}},
		{"20:0.88, 36:0.93, 48:0.95", [][]float64{{20, 0.88}, {36, 0.93}, {48, 0.95}}},
		{"500mV: 50%; 1.5 kV: 0.975", [][]float64{{0.5, 0.5}, {1500, 0.975}}},
		{" 12V:90 % ,", [][]float64{{12, 0.9}}},
		{"", nil},
		{"  ", nil},
	} {
		got, err := ParseEfficiencyCurve(c.text)
		if err != nil {
			t.Errorf("%q: %v", c.text, err)
			continue
		}
		if len(got) != len(c.want) {
			t.Errorf("%q read %v, want %v", c.text, got, c.want)
			continue
		}
		for i := range got {
			for k := range 2 {
				if math.Abs(got[i][k]-c.want[i][k]) > 1e-12*math.Abs(c.want[i][k]) {
					t.Errorf("%q point %d = %v, want %v", c.text, i+1, got[i], c.want[i])
				}
			}
		}
	}
}

// TestParseEfficiencyCurveProblems: every point that does not read is
// named by its number and its text, with what to write instead.
func TestParseEfficiencyCurveProblems(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		text string
		want []string
	}{
		{"48 V 95 %", []string{"point 1, “48 V 95 %”, has no colon", "e.g. 48 V: 95 %"}},
		{"20 V: 88 %, 36 A: 93 %", []string{"point 2, “36 A: 93 %”: the input voltage is not a number", "(this field is in V)"}},
		{"20: 0,88", []string{"point 2, “88”, has no colon", "decimals with a full stop"}},
		{"20 V: , 48 V: 95 %", []string{"point 1, “20 V:”: the efficiency is required; enter a share such as 0.95 or a percentage such as 95 %"}},
		{": 0.9", []string{"point 1, “: 0.9”: the input voltage is required"}},
		{"20 V: 88 %, 36 V: ninety", []string{"point 2, “36 V: ninety”: the efficiency is not a number"}},
	} {
		got, err := ParseEfficiencyCurve(c.text)
		if err == nil {
			t.Errorf("%q read %v, want a problem", c.text, got)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%q: %q, want %q in it", c.text, err, w)
			}
		}
	}
}

// TestFormatEfficiencyCurve: a design file's curve is written as an
// engineer types it, and reads back as the very same numbers — also those
// whose percentage a multiplication by 100 would round (0.07 × 100 is
// 7.000000000000001 in binary floating point, IEEE 754).
func TestFormatEfficiencyCurve(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		pts  [][]float64
		want string
	}{
		{[][]float64{{20, 0.88}, {36, 0.93}, {48, 0.95}}, "20 V: 88 %, 36 V: 93 %, 48 V: 95 %"},
		{[][]float64{{0.5, 0.07}, {12000, 1}}, "0.5 V: 7 %, 12kV: 100 %"},
		{[][]float64{{0.0004, 0.875}}, "400µV: 87.5 %"},
		{[][]float64{{3.3, 1.0 / 3}}, "3.3 V: 33.33333333333333 %"},
		{[][]float64{{48, 0.123456789012345678}}, ""},
		{[][]float64{{7.25, 0.0100000000000000002}}, ""},
		{nil, ""},
	} {
		got, err := FormatEfficiencyCurve(c.pts)
		if err != nil {
			t.Fatal(err)
		}
		if c.want != "" && got != c.want {
			t.Errorf("%v written %q, want %q", c.pts, got, c.want)
		}
		back, err := ParseEfficiencyCurve(got)
		if err != nil || !reflect.DeepEqual(back, c.pts) {
			t.Errorf("%v written %q reads back as %v (%v), want exactly the same", c.pts, got, back, err)
		}
	}
	if _, err := FormatEfficiencyCurve([][]float64{{20, 0.9}, {48, 0.95, 1}}); err == nil || !strings.Contains(err.Error(), "converter.efficiency_curve[1], of 3 numbers") {
		t.Errorf("a point of three numbers: %v, want it refused by its index", err)
	}
}

// TestFormPathCurvePoint: sizing's problem on one point of the curve lands
// on the curve's field, naming the point by its number from 1.
func TestFormPathCurvePoint(t *testing.T) {
	t.Parallel()
	field, msg := formPath("converter.efficiency_curve[1]", "has efficiency 1.2; give a share between 0.01 and 1", nil, nil)
	if field != "converter.efficiency_curve" || msg != "point 2 has efficiency 1.2; give a share between 0.01 and 1" {
		t.Errorf("got %q, %q", field, msg)
	}
}
