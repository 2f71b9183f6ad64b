package export

import (
	"bytes"
	"encoding/json"
	"fmt"
	"slices"
	"strconv"
	"strings"
	"testing"

	"capbank/components/figures"
	"capbank/sizing"

	"github.com/xuri/excelize/v2"
)

// openXLSX writes the workbook and reopens it with excelize.
func openXLSX(t *testing.T, s sized) *excelize.File {
	t.Helper()
	var buf bytes.Buffer
	if err := BOQXLSX(&buf, s.d, s.r, s.b); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&buf)
	if err != nil {
		t.Fatalf("the workbook does not open: %v", err)
	}
	t.Cleanup(func() { f.Close() })
	return f
}

// numberCell requires a number cell (no t attribute, or t="n": ECMA-376
// Part 1 §18.3.1.4, the cell type defaults to n) and returns its value.
func numberCell(t *testing.T, f *excelize.File, sheet, ref string) float64 {
	t.Helper()
	typ, err := f.GetCellType(sheet, ref)
	if err != nil {
		t.Fatal(err)
	}
	if typ != excelize.CellTypeUnset && typ != excelize.CellTypeNumber {
		t.Fatalf("%s!%s has cell type %v, want a number", sheet, ref, typ)
	}
	raw, err := f.GetCellValue(sheet, ref, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	x, err := strconv.ParseFloat(raw, 64)
	if err != nil {
		t.Fatalf("%s!%s = %q is not a number", sheet, ref, raw)
	}
	return x
}

func calc(t *testing.T, f *excelize.File, sheet, ref string) string {
	t.Helper()
	v, err := f.CalcCellValue(sheet, ref, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatalf("calculating %s!%s: %v", sheet, ref, err)
	}
	return v
}

func TestBOQXLSXNumbersAndFormulas(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, withExtras(sizing.BOQExtra{Item: "monitoring", Quantity: 1}), "")
	f := openXLSX(t, s)

	if got, want := f.GetSheetList(), []string{"BOQ", "Inputs", "Results"}; !slices.Equal(got, want) {
		t.Fatalf("sheets %q, want %q", got, want)
	}
	header, err := f.GetRows("BOQ")
	if err != nil {
		t.Fatal(err)
	}
	// Headers with units: prices in the design's currency.
	if got := strings.Join(header[0], "|"); got != "Item|Description|Quantity|Unit|Unit price (EUR)|Extended price (EUR)" {
		t.Errorf("header %q", got)
	}
	for i, l := range s.b.Lines {
		row := BOQFirstLineRow + i
		if got := numberCell(t, f, "BOQ", cellName(colQuantity, row)); got != l.Quantity {
			t.Errorf("%s: quantity %v, want the engine's %v", l.Item, got, l.Quantity)
		}
		ext := cellName(colExtended, row)
		formula, err := f.GetCellFormula("BOQ", ext)
		if err != nil {
			t.Fatal(err)
		}
		wantFormula := fmt.Sprintf(`IF(ISNUMBER(E%d),C%d*E%d,"")`, row, row, row)
		if formula != wantFormula {
			t.Errorf("%s: extended price formula %q, want %q", l.Item, formula, wantFormula)
		}
		if l.UnitPrice == nil {
			// Unpriced: no unit price, and the formula gives "".
			if v, _ := f.GetCellValue("BOQ", cellName(colUnitPrice, row)); v != "" {
				t.Errorf("%s: unit price %q, want empty", l.Item, v)
			}
			if v := calc(t, f, "BOQ", ext); v != "" {
				t.Errorf("%s: extended price calculates to %q, want empty", l.Item, v)
			}
			continue
		}
		up := numberCell(t, f, "BOQ", cellName(colUnitPrice, row))
		if up != *l.UnitPrice {
			t.Errorf("%s: unit price %v, want the engine's %v", l.Item, up, *l.UnitPrice)
		}
		// The cached value is the engine's extended price; the formula
		// recalculates to quantity × unit price.
		if got := numberCell(t, f, "BOQ", ext); !closeTo(got, *l.ExtendedPrice, 1e-12) {
			t.Errorf("%s: cached extended price %v, want %v", l.Item, got, *l.ExtendedPrice)
		}
		if got := parseNum(t, calc(t, f, "BOQ", ext), "calculated extended price"); !closeTo(got, l.Quantity*up, 1e-12) {
			t.Errorf("%s: extended price calculates to %v, want %v × %v", l.Item, got, l.Quantity, up)
		}
	}

	totalRow := BOQFirstLineRow + len(s.b.Lines)
	ref := cellName(colExtended, totalRow)
	formula, err := f.GetCellFormula("BOQ", ref)
	if err != nil {
		t.Fatal(err)
	}
	if want := fmt.Sprintf("SUM(F%d:F%d)", BOQFirstLineRow, totalRow-1); formula != want {
		t.Errorf("total formula %q, want %q", formula, want)
	}
	total := parseNum(t, calc(t, f, "BOQ", ref), "calculated total")
	// The engine's total (sizing.BillOfQuantities) and the 683.50 hand sum
	// of TestBOQCSVRoundTrip: the unpriced line adds nothing.
	if !closeTo(total, s.b.Total, 1e-12) || !closeTo(total, 683.5, 1e-12) {
		t.Errorf("SUM calculates to %v, want the engine's %v (683.50)", total, s.b.Total)
	}
	if got := numberCell(t, f, "BOQ", ref); !closeTo(got, s.b.Total, 1e-12) {
		t.Errorf("cached total %v, want %v", got, s.b.Total)
	}
	// The price cells carry a number format with the currency.
	style, err := f.GetCellStyle("BOQ", ref)
	if err != nil {
		t.Fatal(err)
	}
	st, err := f.GetStyle(style)
	if err != nil {
		t.Fatal(err)
	}
	if st.CustomNumFmt == nil || *st.CustomNumFmt != `#,##0.00##\ \E\U\R` {
		t.Errorf("total number format %v, want #,##0.00##\\ \\E\\U\\R", st.CustomNumFmt)
	}
	if v, _ := f.GetCellValue("BOQ", cellName(colDescription, totalRow+1)); v != "no: without a unit price, not in the total: monitoring" {
		t.Errorf("completeness %q", v)
	}
	for col, want := range map[string]float64{"A": 30, "B": 70} {
		if w, err := f.GetColWidth("BOQ", col); err != nil || w != want {
			t.Errorf("column %s width %v (%v), want %v", col, w, err, want)
		}
	}
}

func TestBOQXLSXNeutralisesFormulas(t *testing.T) {
	t.Parallel()
	for _, tt := range formulaPrefixes {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			s := mustSize(t, upsDesign, func(d *sizing.Design) {
				withExtras(sizing.BOQExtra{Item: tt.item, Quantity: 1, UnitPrice: price(1)})(d)
				d.Name = tt.item
			}, "")
			f := openXLSX(t, s)
			row := BOQFirstLineRow + len(s.b.Lines) - 1
			ref := cellName(colItem, row)
			typ, _ := f.GetCellType("BOQ", ref)
			formula, _ := f.GetCellFormula("BOQ", ref)
			v, _ := f.GetCellValue("BOQ", ref)
			// A string cell (shared or inline) with no formula, quote in
			// front (as in the CSV).
			isString := typ == excelize.CellTypeSharedString || typ == excelize.CellTypeInlineString
			if !isString || formula != "" || v != "'"+tt.item {
				t.Errorf("item cell: type %v, formula %q, value %q; want a string %q", typ, formula, v, "'"+tt.item)
			}
			// The design name on the streamed Inputs sheet too.
			rows, err := f.GetRows("Inputs")
			if err != nil {
				t.Fatal(err)
			}
			if len(rows) < 3 || rows[2][0] != "name" || rows[2][1] != "'"+tt.item {
				t.Errorf("Inputs name row %q, want name, %q", rows[2], "'"+tt.item)
			}
		})
	}
}

// rowsByLabel maps column A of a sheet to its rows (the first row with
// each label).
func rowsByLabel(t *testing.T, f *excelize.File, sheet string) map[string][]string {
	t.Helper()
	rows, err := f.GetRows(sheet, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	m := map[string][]string{}
	for _, r := range rows {
		if len(r) > 0 && r[0] != "" {
			if _, seen := m[r[0]]; !seen {
				m[r[0]] = r
			}
		}
	}
	return m
}

func TestBOQXLSXInputsAndResults(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	f := openXLSX(t, s)

	in := rowsByLabel(t, f, "Inputs")
	// Values of testdata/ups-ride-through.json, and the applied defaults.
	for label, want := range map[string]string{
		"window.max_v (window top)":           "42",
		"window.min_v (cut-off)":              "21",
		"cell_max_v (per-cell ceiling)":       "2.8",
		"ambient_c":                           "25",
		"cold_c":                              "-30",
		"eol.capacitance_factor (as applied)": "0.8",
		"eol.esr_factor (as applied)":         "2",
		"load.efficiency":                     "0.94",
		"life_years":                          "10",
		"standby_h":                           "12",
	} {
		if r := in[label]; len(r) < 2 || r[1] != want {
			t.Errorf("Inputs %q = %q, want %s", label, r, want)
		}
	}
	for _, c := range s.d.Cells {
		r := in[c.ID]
		// The datasheet row: id, name, rated_v, surge_v, capacitance_f.
		if len(r) < 5 || r[1] != c.Name || r[2] != plainNumber(c.RatedV) || r[4] != plainNumber(c.CapacitanceF) {
			t.Errorf("Inputs row of %s = %q", c.ID, r)
		}
	}
	// The four load steps of the demo, with their durations (s).
	for i, want := range []string{"power|3500||11", "current||40|1.5", "resistance|||18", "rest|||3.5"} {
		r := in[strconv.Itoa(i+1)]
		if len(r) < 6 {
			t.Errorf("step %d row %q", i+1, r)
			continue
		}
		got := strings.Join([]string{r[1], r[2], r[3], r[5]}, "|")
		if got != want {
			t.Errorf("step %d: kind|power_w|current_a|duration_s = %q, want %q", i+1, got, want)
		}
	}

	res := rowsByLabel(t, f, "Results")
	c := s.c
	for label, want := range map[string]float64{
		"series (cells per string)":       float64(c.Series), // 15, as capbank size --format text prints it
		"parallel (strings)":              float64(c.Parallel),
		"cells":                           float64(c.Cells),
		"Runtime":                         *c.RuntimeS,
		"Lowest terminal voltage":         c.MinTerminalV,
		"Usable energy in the window":     c.UsableEnergyJ,
		"Stored energy at the window top": c.StoredEnergyJ,
		"Peak current":                    c.PeakCurrentA,
		"Hot spot":                        c.Thermal.HotSpotC,
		"Expected life":                   c.Life.ExpectedYears,
		"Short-circuit current":           c.Hazards.ShortCircuitCurrentA,
		"Bill of quantities total":        s.b.Total,
	} {
		r := res[label]
		if len(r) < 2 {
			t.Errorf("Results has no %q", label)
			continue
		}
		if got := parseNum(t, r[1], label); !closeTo(got, want, 1e-12) {
			t.Errorf("Results %q = %v, want the report's %v", label, got, want)
		}
	}
	if c.Series != 15 || c.Parallel != 5 {
		t.Errorf("bank %d s × %d p, want 15 s × 5 p (capbank size --format text on the demo)", c.Series, c.Parallel)
	}
	for label, unit := range map[string]string{"Runtime": "s", "Lowest terminal voltage": "V", "Usable energy in the window": "J", "Hot spot": "°C", "Expected life": "years", "Price": "EUR"} {
		if r := res[label]; len(r) < 3 || r[2] != unit {
			t.Errorf("Results %q unit %q, want %q", label, r, unit)
		}
	}
	// Every flag (a code can come twice, with different messages) has a
	// row with its code, severity, message and caution.
	all, err := f.GetRows("Results")
	if err != nil {
		t.Fatal(err)
	}
	for _, fl := range c.Flags {
		found := slices.ContainsFunc(all, func(r []string) bool {
			caution := ""
			if len(r) > 4 {
				caution = r[4]
			}
			return len(r) > 3 && r[0] == fl.Code && r[1] == string(fl.Severity) && r[3] == fl.Message && caution == fl.Caution
		})
		if !found {
			t.Errorf("no row for flag %s (%s): %s", fl.Code, fl.Severity, fl.Message)
		}
	}
}

// TestBOQXLSXResultsRows: the Results sheet's figures are the page's rows,
// figures.Candidate: for the demo's recommended bank every group title
// and row label is there, in the page's order, with the row's note, a
// number cell holding the row's unrounded number in its unit without
// prefix, and words as the page writes them. Before the sheet rendered
// these rows it had its own labels ("count per string",
// "runtime" noted "not within 10^7 s").
func TestBOQXLSXResultsRows(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	f := openXLSX(t, s)
	all, err := f.GetRows(SheetResults, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	cell := func(r []string, i int) string {
		if i < len(r) {
			return r[i]
		}
		return ""
	}
	at := 0 // the sheet row to search from: the rows come in the page's order
	find := func(label string) []string {
		for i := at; i < len(all); i++ {
			if cell(all[i], 0) == label {
				at = i + 1
				return all[i]
			}
		}
		t.Errorf("Results has no %q after row %d", label, at)
		return nil
	}
	n := 0
	for _, g := range figures.Candidate(s.c, s.r) {
		find(g.Title)
		for _, fr := range g.Rows {
			n++
			r := find(figures.ASCII(fr.Label))
			if r == nil {
				continue
			}
			if got, want := cell(r, 3), figures.ASCII(fr.Note); got != want {
				t.Errorf("%s: note %q, want %q", fr.Label, got, want)
			}
			if !fr.HasNum {
				if got, want := cell(r, 1)+"|"+cell(r, 2), figures.ASCII(fr.Value)+"|"+fr.Unit; got != want {
					t.Errorf("%s: value|unit %q, want %q", fr.Label, got, want)
				}
				continue
			}
			unit := fr.Base
			if unit == "" {
				unit = s.b.Currency // a price
			}
			// A cell keeps 15 significant figures, as Excel does.
			if got := parseNum(t, cell(r, 1), fr.Label); !closeTo(got, fr.Num, 1e-12) || cell(r, 2) != unit {
				t.Errorf("%s: %v %q, want %v %q", fr.Label, got, cell(r, 2), fr.Num, unit)
			}
		}
	}
	// The demo's bank has every group: heat, balancing and life too.
	if n < 35 {
		t.Errorf("only %d rows checked; the demo's bank has heat, balancing and life figures", n)
	}
}

// A logged profile longer than the 100 000 rows some tools stop at is
// written whole.
func TestBOQXLSXLongProfile(t *testing.T) {
	t.Parallel()
	const n = 120_000
	s := mustSize(t, upsDesign, func(d *sizing.Design) {
		steps := make([]sizing.Step, n)
		for i := range steps {
			a := 5.0 + float64(i%7)
			steps[i] = sizing.Step{CurrentA: &a, DurationS: 0.01}
		}
		d.Load.Steps = steps
	}, "")
	f := openXLSX(t, s)
	rows, err := f.Rows("Inputs")
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	steps, last := 0, []string(nil)
	inSteps := false
	for rows.Next() {
		r, err := rows.Columns()
		if err != nil {
			t.Fatal(err)
		}
		if len(r) > 0 && r[0] == "step" {
			inSteps = true
			continue
		}
		if inSteps && len(r) > 0 {
			steps++
			last = r
		}
	}
	if steps != n {
		t.Errorf("%d step rows, want all %d", steps, n)
	}
	// Step n is 5 + (n−1) mod 7 A = 5 + 119999 mod 7 = 5 + 5 = 10 A, and
	// starts at (n−1) × 10 ms = 1199.99 s (own arithmetic).
	if len(last) < 7 || last[0] != strconv.Itoa(n) || last[3] != "10" || last[6] != "1199.99" {
		t.Errorf("last step row %q, want step %d at 10 A starting at 1199.99 s", last, n)
	}
}

func TestBOQJSON(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	var buf bytes.Buffer
	if err := BOQJSON(&buf, s.b); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	if !strings.HasPrefix(out, "{\n  \"design\": ") || !strings.HasSuffix(out, "}\n") {
		t.Errorf("not indented by two spaces with a trailing newline:\n%.200s", out)
	}
	dec := json.NewDecoder(strings.NewReader(out))
	dec.DisallowUnknownFields()
	var b sizing.BOQ
	if err := dec.Decode(&b); err != nil {
		t.Fatal(err)
	}
	// The engine's figures (sizing.BillOfQuantities), 683.50 by hand.
	if !closeTo(b.Total, s.b.Total, 1e-15) || !closeTo(b.Total, 683.5, 1e-12) || !b.Complete || b.Currency != "EUR" || len(b.Lines) != len(s.b.Lines) {
		t.Errorf("decoded total %v complete %v currency %q, %d lines; want %v, true, EUR, %d", b.Total, b.Complete, b.Currency, len(b.Lines), s.b.Total, len(s.b.Lines))
	}
	if b.Series != 15 || b.Parallel != 5 || b.CellID != "demo-c400-2v8" {
		t.Errorf("bank %s %d s × %d p, want demo-c400-2v8 15 s × 5 p (capbank size --format text)", b.CellID, b.Series, b.Parallel)
	}
	// Descriptions keep → and × as they are, not \u escapes.
	if !strings.Contains(out, "→") || strings.Contains(out, `\u`) {
		t.Errorf("JSON escapes text it need not:\n%s", out)
	}
}

func TestWritersRefuseMissingInput(t *testing.T) {
	t.Parallel()
	var buf bytes.Buffer
	if err := BOQCSV(&buf, nil); err == nil {
		t.Error("BOQCSV(nil) succeeded")
	}
	if err := BOQJSON(&buf, nil); err == nil {
		t.Error("BOQJSON(nil) succeeded")
	}
	s := mustSize(t, upsDesign, nil, "")
	if err := BOQXLSX(&buf, s.d, s.r, nil); err == nil {
		t.Error("BOQXLSX without a BOQ succeeded")
	}
	other := *s.b
	other.CellID = "no-such-cell"
	if err := BOQXLSX(&buf, s.d, s.r, &other); err == nil || !strings.Contains(err.Error(), "no-such-cell") {
		t.Errorf("BOQXLSX with a BOQ of an unknown cell: %v, want an error naming it", err)
	}
	if buf.Len() != 0 {
		t.Errorf("a refused writer wrote %d bytes", buf.Len())
	}
}

// TestBOQXLSXFigureDigits checks that a figure's cell holds its value to
// the 15 significant digits a spreadsheet keeps (Excel specifications and
// limits: number precision 15 digits), without the stray digits of a
// float64 cut short (0.0048 kg × 10 cells is 0.047999999999999994 in
// float64, which was stored as 0.0479999999999999), while it shows
// sigFigs (4) significant digits.
func TestBOQXLSXFigureDigits(t *testing.T) {
	t.Parallel()
	// Cells of 3.4 g: n × 0.0034 kg is not exact in float64.
	s := mustSize(t, "../../testdata/logger-hold-up.json", func(d *sizing.Design) {
		for i := range d.Cells {
			d.Cells[i].MassKg = price(0.0034)
		}
	}, "")
	f := openXLSX(t, s)
	mass := s.b.CellMassKg
	if mass == nil {
		t.Fatal("the design's cell has no mass; the check needs one")
	}
	// The check can fail: the engine's mass has stray digits in float64.
	n := s.b.Series * s.b.Parallel
	want := strconv.FormatFloat(float64(n)*0.0034, 'g', 15, 64)
	if got := strconv.FormatFloat(*mass, 'g', -1, 64); len(got) <= len(want) {
		t.Fatalf("cells' mass %s has no stray digits; choose another figure", got)
	}
	ref := ""
	rows, err := f.GetRows(SheetBOQ, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range rows {
		if len(r) > 1 && r[0] == "Cells' mass" {
			ref = cellName(2, i+1)
		}
	}
	if ref == "" {
		t.Fatal("no row Cells' mass on the BOQ sheet")
	}
	raw, _ := f.GetCellValue(SheetBOQ, ref, excelize.Options{RawCellValue: true})
	// n cells × 3.4 g, to 15 digits (own arithmetic).
	if raw != want {
		t.Errorf("cells' mass cell of %d cells holds %q, want %s", n, raw, want)
	}
	if v := numberCell(t, f, SheetBOQ, ref); !closeTo(v, *mass, 1e-15) {
		t.Errorf("cells' mass %v, want %v within 1e-15", v, *mass)
	}

	// Every figure on the Results sheet: the cell keeps the value to 15
	// digits, the display rounds it to 4 significant digits.
	all, err := f.GetRows(SheetResults, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	checked, rounded := 0, 0
	for i, r := range all {
		if len(r) < 3 || r[0] == "" || r[0] == "cell" {
			continue
		}
		ref := cellName(2, i+1)
		if typ, _ := f.GetCellType(SheetResults, ref); typ != excelize.CellTypeUnset && typ != excelize.CellTypeNumber {
			continue
		}
		v, err := strconv.ParseFloat(r[1], 64)
		if err != nil || v == 0 {
			continue
		}
		if n := len(strings.TrimLeft(strings.ReplaceAll(strings.SplitN(strings.ToLower(r[1]), "e", 2)[0], ".", ""), "-0")); n > 15 {
			t.Errorf("%s = %s holds %d digits, more than a spreadsheet keeps", r[0], r[1], n)
		}
		shown, err := f.GetCellValue(SheetResults, ref)
		if err != nil {
			t.Fatal(err)
		}
		x, err := strconv.ParseFloat(shown, 64)
		if err != nil {
			t.Errorf("%s shows %q, not a number", r[0], shown)
			continue
		}
		// Rounded to 4 significant digits: within half a unit of the 4th
		// digit, and no decimals beyond them.
		if !closeTo(x, v, 5e-4) {
			t.Errorf("%s shows %q for %v", r[0], shown, v)
		}
		mant := strings.SplitN(strings.ToUpper(shown), "E", 2)[0]
		digits := strings.TrimLeft(strings.ReplaceAll(mant, ".", ""), "-0")
		// A figure of 10⁴ or more shows its whole units (no decimals).
		if strings.Contains(mant, ".") && len(digits) > sigFigs {
			t.Errorf("%s shows %q, more than %d significant digits", r[0], shown, sigFigs)
		}
		if shown != r[1] {
			rounded++
		}
		checked++
	}
	if checked < 20 || rounded == 0 {
		t.Errorf("checked %d figures, %d shown rounded: the Results sheet lost its figures", checked, rounded)
	}
}
