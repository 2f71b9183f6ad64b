package store

import (
	"bytes"
	"reflect"
	"strings"
	"testing"

	"capbank/sizing"
)

func ip(n int) *int { return &n }

// TestCellCSVCarriesModuleAndDerating: a library cell's module and
// voltage derating go out in the cell CSV and come back exactly (a cell
// without them stays without them). Before, the export left both out
// and a library re-imported from its CSV lost them without a word.
func TestCellCSVCarriesModuleAndDerating(t *testing.T) {
	t.Parallel()
	f := func(x float64) *float64 { return &x }
	cells := []sizing.Cell{
		{ID: "mod-a", Name: "=module cell", RatedV: 2.7, CapacitanceF: 650, ESROhm: 0.0008, UnitPrice: f(9),
			Module:          &sizing.Module{Name: "-6S2P pack", Series: 6, Parallel: ip(2), MassKg: f(1.9), VolumeL: f(1.45), UnitPrice: f(120.25)},
			VoltageDerating: [][]float64{{-40, 2.7}, {25, 2.7}, {65, 2.5}, {70.5, 1.0 / 3}}},
		{ID: "mod-b", RatedV: 3, CapacitanceF: 100, ESROhm: 0.01, Module: &sizing.Module{Series: 3}},
		{ID: "plain", RatedV: 2.7, CapacitanceF: 10, ESROhm: 0.1},
	}
	var out bytes.Buffer
	if err := ExportCellsCSV(&out, cells); err != nil {
		t.Fatal(err)
	}
	header, _, _ := strings.Cut(out.String(), "\n")
	for _, col := range append(moduleColumns, deratingKey) {
		if !strings.Contains(header, col) {
			t.Errorf("the header %q has no column %s", header, col)
		}
	}
	if !strings.Contains(out.String(), `"[[-40,2.7],[25,2.7],[65,2.5],[70.5,0.3333333333333333]]"`) {
		t.Errorf("the derating is not written as its JSON pairs:\n%s", out.String())
	}
	rows, fileErr := parseCellsCSV(&out)
	if fileErr != "" || len(rows) != len(cells) {
		t.Fatalf("read back %d rows, file error %q", len(rows), fileErr)
	}
	for i, r := range rows {
		if r.err != "" {
			t.Errorf("row %d: %s", i+1, r.err)
		}
		if !reflect.DeepEqual(r.cell, cells[i]) {
			t.Errorf("row %d read back as %+v (module %+v), want %+v (module %+v)", i+1, r.cell, r.cell.Module, cells[i], cells[i].Module)
		}
	}
}

// TestCellCSVModuleProblems: a module or derating column that does not
// read is a problem of its row naming the column, never dropped.
func TestCellCSVModuleProblems(t *testing.T) {
	t.Parallel()
	head := "id,rated_v,capacitance_f,esr_ohm,module_series,module_parallel,module_unit_price,voltage_derating\n"
	for _, c := range []struct{ name, row, want string }{
		{"module without series", "a,2.7,100,0.009,,2,,", "module_series: is required when any module column is given"},
		{"price without series", "a,2.7,100,0.009,,,70,", "module_series: is required"},
		{"fractional series", "a,2.7,100,0.009,2.5,,,", `module_series: "2.5" is not a whole number`},
		{"fractional parallel", "a,2.7,100,0.009,6,1.5,,", `module_parallel: "1.5" is not a whole number`},
		{"series NaN", "a,2.7,100,0.009,NaN,,,", `module_series: "NaN" is not a plain number`},
		{"derating as text", "a,2.7,100,0.009,,,,25 °C: 2.7 V", `voltage_derating: "25 °C: 2.7 V" is not a list of [temp_c, max_cell_v] pairs`},
		{"derating NaN", `a,2.7,100,0.009,,,,"[[25,NaN]]"`, "voltage_derating:"},
	} {
		rows, fileErr := parseCellsCSV(strings.NewReader(head + c.row + "\n"))
		if fileErr != "" || len(rows) != 1 {
			t.Fatalf("%s: %d rows, file error %q", c.name, len(rows), fileErr)
		}
		if !strings.Contains(rows[0].err, c.want) {
			t.Errorf("%s: %q, want %q", c.name, rows[0].err, c.want)
		}
	}
	// Pairs, order and ranges are the cell's one validation's: a row
	// with a point of three numbers reads, and ValidateCell names the point.
	rows, _ := parseCellsCSV(strings.NewReader(head + `a,2.7,100,0.009,6,,,"[[25,2.7,2.6]]"` + "\n"))
	if err := sizing.ValidateCell(&rows[0].cell); err == nil || !strings.Contains(err.Error(), "voltage_derating[0]: must be a pair [temp_c, max_cell_v]") {
		t.Errorf("a point of three numbers: %v", err)
	}
}
