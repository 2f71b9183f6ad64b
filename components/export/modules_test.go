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
