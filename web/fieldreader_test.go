package web

import (
	"capbank/web/form"
	"capbank/web/store"
	"math"
	"net/url"
	"testing"
)

// The design form, the cell form and the measurement form read their
// numbers with one reader, so a number that does not parse is one problem
// named by its field on every form, and reads NaN rather than 0 or a
// guess. Before, the measurement form reported a bad required number
// twice (it did not parse, and then it was "required"), and the cell form
// read it as 0.
func TestOneFieldReader(t *testing.T) {
	t.Parallel()
	count := func(problems []string, field string) int {
		n := 0
		for _, f := range problems {
			if f == field {
				n++
			}
		}
		return n
	}

	_, err := runMeasurement(measureInput{values: map[string]string{"method": "timed", "v0_v": "2.7", "v1_v": "2,1", "duration_s": "60", "resistor_ohm": "10"}}, store.DemoCell)
	var fields []string
	for _, fe := range validationErrors(err) {
		fields = append(fields, fe.Field)
	}
	if count(fields, "v1_v") != 1 {
		t.Errorf("measurement problems %v; want v1_v named once", fields)
	}

	vals := url.Values{"id": {"x"}, "rated_v": {"2.7"}, "capacitance_f": {"abc"}, "esr_ohm": {"1m"}}
	cell, problems := readCellForm(vals)
	fields = nil
	for _, fe := range problems {
		fields = append(fields, fe.Field)
	}
	if count(fields, "capacitance_f") != 1 || !math.IsNaN(cell.CapacitanceF) {
		t.Errorf("cell problems %v, capacitance %v; want capacitance_f named once and NaN", fields, cell.CapacitanceF)
	}

	v := designValues()
	v.Set("window.max_v", "4x8")
	dec := form.Read(v).Decode(store.DemoCell)
	fields = nil
	for _, fe := range dec.Problems {
		fields = append(fields, fe.Field)
	}
	if count(fields, "window.max_v") != 1 || !math.IsNaN(dec.Design.Window.MaxV) {
		t.Errorf("design problems %v, max_v %v; want window.max_v named once and NaN", fields, dec.Design.Window.MaxV)
	}
}
