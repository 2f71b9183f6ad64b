package export

import (
	"strings"
	"testing"

	"capbank/components/figures"
	"capbank/sizing"
)

// agvDesign is the invented demo design with modules (a 6-cell module of
// its 650 F cell, series_multiple 4) and a voltage derating table.
const agvDesign = "../../testdata/agv-regen-buffer.json"

// TestExportsShowModulesAndCeilingTemperature: the PDF report and the
// XLSX workbook of the demo with modules show the modules as the bill of
// quantities' ordered line (15 modules of 6 cells: 18 in series = 3
// modules, 5 strings; sizing.moduleCount) with the cells in them not
// ordered apart, the Modules row of the bank, and the temperature the
// derating table was read at.
func TestExportsShowModulesAndCeilingTemperature(t *testing.T) {
	t.Parallel()
	s := mustSize(t, agvDesign, nil, "")
	m := s.c.Modules
	if s.c.CellID != "demo-c650-2v7" || m == nil || m.Count != 15 || m.InSeries != 3 || m.Strings != 5 || s.c.CeilingTempC == nil {
		t.Fatalf("the demo's recommended bank is %s with modules %+v: the test needs the 650 F cell in 15 modules with its derating", s.c.CellID, m)
	}
	var module, cells *sizing.BOQLine
	for i, l := range s.b.Lines {
		switch l.Item {
		case "module":
			module = &s.b.Lines[i]
		case "cell":
			cells = &s.b.Lines[i]
		}
	}
	if module == nil || module.Quantity != 15 || module.UnitPrice == nil || *module.UnitPrice != 56 || cells == nil || cells.UnitPrice != nil {
		t.Fatalf("BOQ module line %+v, cell line %+v: want 15 modules at 56 and the cells unpriced in them", module, cells)
	}
	// Spaces as the PDF's text and the workbook's cells give them: a
	// narrow no-break space between a number and its unit reads as one.
	plain := func(s string) string { return strings.Join(strings.Fields(strings.ReplaceAll(s, "\u00a0", " ")), " ") }
	hot := plain("ceiling " + figures.SI(s.c.CellCeilingV, "V", 4) + " at " + figures.SI(*s.c.CeilingTempC, "°C", 3) + ", the hottest cell (voltage derating)")
	modulesRow := "15 × Demo 6-cell module, 6 × 650 F in series (invented) (6 in series × 1 in parallel): 3 in series × 5 strings"

	// The PDF's table columns wrap side by side, so the Modules row is
	// found in its pieces.
	text := plain(pdfTextOf(t, writePDF(t, s, s.b, A4)))
	for _, want := range []string{"Modules 15 × Demo 6-cell module", "(6 in series × 1 in parallel): 3 in series × 5 strings", hot,
		"in the modules (not ordered apart)", "module-to-module links"} {
		if !strings.Contains(text, want) {
			t.Errorf("the PDF report lacks %q", want)
		}
	}

	f := openXLSX(t, s)
	boq, err := f.GetRows(SheetBOQ)
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, r := range boq {
		if len(r) > 4 && strings.TrimPrefix(r[0], "'") == "module" && r[2] == "15" && strings.Contains(r[1], "Demo 6-cell module") {
			found = true
		}
	}
	if !found {
		t.Errorf("the XLSX BOQ sheet has no line of 15 modules:\n%q", boq)
	}
	res, err := f.GetRows(SheetResults)
	if err != nil {
		t.Fatal(err)
	}
	var joined strings.Builder
	for _, r := range res {
		joined.WriteString(plain(strings.Join(r, "|")) + "\n")
	}
	for _, want := range []string{"Modules|" + modulesRow + "||whole modules", hot} {
		if !strings.Contains(joined.String(), want) {
			t.Errorf("the XLSX Results sheet lacks %q", want)
		}
	}
}

// TestExportsListSystemInputs: the PDF's and the XLSX's design inputs list
// every bank-in-its-system key the demo gives (start voltage, series
// multiple, charger, converter with its efficiency curve, wiring, inrush
// limit) and the 650 F cell's module and voltage derating, each with its
// design-file key, so a reviewer can check every input that moved the
// result.
func TestExportsListSystemInputs(t *testing.T) {
	t.Parallel()
	s := mustSize(t, agvDesign, nil, "")
	plain := func(s string) string { return strings.Join(strings.Fields(strings.ReplaceAll(s, "\u00a0", " ")), " ") }
	pdfWant := []string{
		"44 V (load.start_v)", "4 (series_multiple)", "10 A (charger.current_a)", "450 W (charger.power_w)",
		"10 % of the current limit (charger.end_current_pct)", "0.92 (charger.efficiency)",
		"26 V (converter.min_input_v)", "240 A (converter.max_input_current_a)",
		"24 V: 0.88, 36 V: 0.93, 48 V: 0.95 (converter.efficiency_curve)",
		"converter efficiency by the input voltage (converter.efficiency_curve, below)",
		"(wiring.link_resistance_ohm)", "1.5 mΩ (wiring.bank_resistance_ohm)", "60 A (system.inrush_limit_a)",
		"6 in series × 1 in parallel (cells[demo-c650-2v7].module)", "(cells[demo-c650-2v7].voltage_derating)",
	}
	text := plain(pdfTextOf(t, writePDF(t, s, s.b, A4)))
	for _, want := range pdfWant {
		if !strings.Contains(text, want) {
			t.Errorf("the PDF's design inputs lack %q", want)
		}
	}
	f := openXLSX(t, s)
	rows, err := f.GetRows(SheetInputs)
	if err != nil {
		t.Fatal(err)
	}
	got := map[string][]string{}
	for _, r := range rows {
		if len(r) > 1 {
			key, _, _ := strings.Cut(r[0], " (")
			got[key] = r
		}
	}
	for key, want := range map[string]string{
		"load.start_v": "44", "series_multiple": "4", "charger.current_a": "10", "charger.power_w": "450",
		"converter.max_input_current_a": "240", "wiring.link_resistance_ohm": "0.00012", "wiring.bank_resistance_ohm": "0.0015",
		"system.inrush_limit_a": "60",
	} {
		if r, ok := got[key]; !ok || r[1] != want {
			t.Errorf("the XLSX Inputs row for %s is %q, want the value %s", key, r, want)
		}
	}
	if r := got["cells[demo-c650-2v7].voltage_derating"]; len(r) < 2 || !strings.Contains(plain(r[1]), "°C: ") {
		t.Errorf("the XLSX Inputs row for the cell's voltage derating is %q", r)
	}
}
