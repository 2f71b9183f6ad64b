package form

import (
	"math"
	"reflect"
	"strings"
	"testing"
)

// TestPointTableParse: both tables read each number with its SI prefix
// (SI Brochure, 9th ed., table 7: m = 1e-3, k = 1e3, µ = 1e-6), with or
// without its column's unit, an efficiency as a share or a percentage
// (95 % = 0.95); each expected pair is the typed text read by hand.
func TestPointTableParse(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name  string
		table PointTable
		text  string
		want  [][]float64
	}{
		{"curve with units", EfficiencyCurve, "20 V: 88 %, 36 V: 93 %, 48 V: 95 %", [][]float64{{20, 0.88}, {36, 0.93}, {48, 0.95}}},
		{"curve bare", EfficiencyCurve, "20:0.88, 36:0.93, 48:0.95", [][]float64{{20, 0.88}, {36, 0.93}, {48, 0.95}}},
		{"curve prefixes and semicolons", EfficiencyCurve, "500mV: 50%; 1.5 kV: 0.975", [][]float64{{0.5, 0.5}, {1500, 0.975}}},
		{"curve trailing comma", EfficiencyCurve, " 12V:90 % ,", [][]float64{{12, 0.9}}},
		{"curve empty", EfficiencyCurve, "", nil},
		{"curve blank", EfficiencyCurve, "  ", nil},
		{"derating with units", VoltageDerating, "25 °C: 2.7 V, 65 °C: 2.5 V", [][]float64{{25, 2.7}, {65, 2.5}}},
		{"derating bare", VoltageDerating, "25: 2.7, 65: 2.5", [][]float64{{25, 2.7}, {65, 2.5}}},
		{"derating other spellings", VoltageDerating, "−20 ℃: 2.85V; 40 C: 2700 mV; 85°C: 2.3 V", [][]float64{{-20, 2.85}, {40, 2.7}, {85, 2.3}}},
		{"derating empty", VoltageDerating, "", nil},
	} {
		got, err := c.table.Parse(c.text)
		if err != nil {
			t.Errorf("%s: %q: %v", c.name, c.text, err)
			continue
		}
		if len(got) != len(c.want) {
			t.Errorf("%s: %q read %v, want %v", c.name, c.text, got, c.want)
			continue
		}
		for i := range got {
			for k := range 2 {
				if math.Abs(got[i][k]-c.want[i][k]) > 1e-12*math.Abs(c.want[i][k]) {
					t.Errorf("%s: %q point %d = %v, want %v", c.name, c.text, i+1, got[i], c.want[i])
				}
			}
		}
	}
}

// TestPointTableProblems: every point that does not read is named by its
// number and its text, with what to write instead.
func TestPointTableProblems(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name  string
		table PointTable
		text  string
		want  []string
	}{
		{"curve no colon", EfficiencyCurve, "48 V 95 %", []string{"point 1, “48 V 95 %”, has no colon", "e.g. 48 V: 95 %"}},
		{"curve wrong unit", EfficiencyCurve, "20 V: 88 %, 36 A: 93 %", []string{"point 2, “36 A: 93 %”: the input voltage is not a number", "(this field is in V)"}},
		{"curve decimal comma", EfficiencyCurve, "20: 0,88", []string{"point 2, “88”, has no colon", "decimals with a full stop"}},
		{"curve no efficiency", EfficiencyCurve, "20 V: , 48 V: 95 %", []string{"point 1, “20 V:”: the efficiency is required; enter a share such as 0.95 or a percentage such as 95 %"}},
		{"curve no voltage", EfficiencyCurve, ": 0.9", []string{"point 1, “: 0.9”: the input voltage is required"}},
		{"curve words", EfficiencyCurve, "20 V: 88 %, 36 V: ninety", []string{"point 2, “36 V: ninety”: the efficiency is not a number"}},
		{"derating three numbers", VoltageDerating, "25 °C: 2.7 V: 2.8 V", []string{"point 1, “25 °C: 2.7 V: 2.8 V”, has 3 numbers", "temperature: cell voltage, e.g. 65 °C: 2.5 V"}},
		{"derating swapped", VoltageDerating, "2.7 V: 25 °C", []string{"point 1, “2.7 V: 25 °C”: the temperature is not a number", "(this field is in °C)"}},
		{"derating wrong unit", VoltageDerating, "25 °C: 2.7 V, 65 °C: 2.5 A", []string{"point 2, “65 °C: 2.5 A”: the cell voltage is not a number", "(this field is in V)"}},
		{"derating no voltage", VoltageDerating, "25 °C: 2.7 V, 65 °C:", []string{"point 2, “65 °C:”: the cell voltage is required; enter the highest cell voltage at that temperature in V"}},
		{"derating NaN", VoltageDerating, "NaN °C: 2.7 V", []string{"point 1, “NaN °C: 2.7 V”: the temperature is not a number"}},
		{"derating Inf", VoltageDerating, "25 °C: Inf", []string{"point 1, “25 °C: Inf”: the cell voltage is not a number"}},
		{"derating no colon", VoltageDerating, "25 °C 2.7 V", []string{"point 1, “25 °C 2.7 V”, has no colon"}},
		{"derating two bad", VoltageDerating, "25 °C: x, 65 °C: y", []string{"point 1, “25 °C: x”", "; point 2, “65 °C: y”"}},
	} {
		got, err := c.table.Parse(c.text)
		if err == nil {
			t.Errorf("%s: %q read %v, want a problem", c.name, c.text, got)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: %q: %q, want %q in it", c.name, c.text, err, w)
			}
		}
	}
}

// TestPointTableFormat: a design file's table is written as an engineer
// types it, and reads back as the very same numbers — also those whose
// percentage a multiplication by 100 would round (0.07 × 100 is
// 7.000000000000001 in binary floating point, IEEE 754).
func TestPointTableFormat(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		table PointTable
		pts   [][]float64
		want  string
	}{
		{EfficiencyCurve, [][]float64{{20, 0.88}, {36, 0.93}, {48, 0.95}}, "20 V: 88 %, 36 V: 93 %, 48 V: 95 %"},
		{EfficiencyCurve, [][]float64{{0.5, 0.07}, {12000, 1}}, "0.5 V: 7 %, 12kV: 100 %"},
		{EfficiencyCurve, [][]float64{{0.0004, 0.875}}, "400µV: 87.5 %"},
		{EfficiencyCurve, [][]float64{{3.3, 1.0 / 3}}, "3.3 V: 33.33333333333333 %"},
		{EfficiencyCurve, [][]float64{{48, 0.123456789012345678}}, ""},
		{EfficiencyCurve, [][]float64{{7.25, 0.0100000000000000002}}, ""},
		{EfficiencyCurve, nil, ""},
		{VoltageDerating, [][]float64{{25, 2.7}, {65, 2.5}}, "25 °C: 2.7 V, 65 °C: 2.5 V"},
		{VoltageDerating, [][]float64{{-40, 2.85}, {0, 2.8}, {70.5, 2.35}}, "-40 °C: 2.85 V, 0 °C: 2.8 V, 70.5 °C: 2.35 V"},
		{VoltageDerating, [][]float64{{1e-5, 0.1}, {1.0 / 3, 2.0 / 3}}, "10µ°C: 0.1 V, 0.3333333333333333 °C: 0.6666666666666666 V"},
		{VoltageDerating, nil, ""},
	} {
		got, err := c.table.Format(c.pts)
		if err != nil {
			t.Fatal(err)
		}
		if c.want != "" && got != c.want {
			t.Errorf("%v written %q, want %q", c.pts, got, c.want)
		}
		back, err := c.table.Parse(got)
		if err != nil || !reflect.DeepEqual(back, c.pts) {
			t.Errorf("%v written %q reads back as %v (%v), want exactly the same", c.pts, got, back, err)
		}
	}
	for _, c := range []struct {
		table PointTable
		want  string
	}{
		{EfficiencyCurve, "has an efficiency curve point, converter.efficiency_curve[1], of 3 numbers instead of a pair [input_v, efficiency]"},
		{VoltageDerating, "has a voltage derating point, voltage_derating[1], of 3 numbers instead of a pair [temp_c, max_cell_v]"},
	} {
		if _, err := c.table.Format([][]float64{{20, 0.9}, {48, 0.95, 1}}); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("a point of three numbers: %v, want %q", err, c.want)
		}
	}
}

// TestFormPathTablePoint: sizing's problem on one point of a table lands
// on the table's field, naming the point by its number from 1: the
// curve's, the typed cell's derating, and a picked cell's derating on the
// cell picker by the cell's id and the field's label.
func TestFormPathTablePoint(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ path, msg, field, want string }{
		{"converter.efficiency_curve[1]", "has efficiency 1.2; give a share between 0.01 and 1",
			"converter.efficiency_curve", "point 2 has efficiency 1.2; give a share between 0.01 and 1"},
		{"cells[0].voltage_derating[2]", "has temperature 25 °C, not above the point before it (65 °C)",
			"inline.voltage_derating", "point 3 has temperature 25 °C, not above the point before it (65 °C)"},
		{"cells[1].voltage_derating[0]", "has cell voltage 0; give one between 0.1 and 1000 V",
			"cells.pick", "lib-cell, voltage derating: point 1 has cell voltage 0; give one between 0.1 and 1000 V"},
		{"cells[0].module.series", "must be at least 1", "inline.module.series", "must be at least 1"},
	} {
		field, msg := formPath(c.path, c.msg, []string{"", "lib-cell"}, nil)
		if field != c.field || msg != c.want {
			t.Errorf("%s: got %q, %q; want %q, %q", c.path, field, msg, c.field, c.want)
		}
	}
}
