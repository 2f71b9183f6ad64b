package export

import (
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"capbank/components/figures"
	"capbank/sizing"

	"github.com/xuri/excelize/v2"
)

// Sheet names of the XLSX workbook.
const (
	SheetBOQ     = "BOQ"
	SheetInputs  = "Inputs"
	SheetResults = "Results"
)

// maxSheetRows is the most rows a worksheet holds (ECMA-376; Excel's
// 1 048 576 row limit).
const maxSheetRows = 1 << 20

// defaultAmbientC, in °C, is the ambient temperature sizing applies when
// the design gives none (Design.AmbientC).
const defaultAmbientC = 25.0

// BOQXLSX writes the workbook of the bill of quantities b of design d,
// sized in report r:
//
//   - sheet "BOQ": one row per line with the quantity, unit price and
//     extended price as number cells (the extended price a live formula,
//     quantity × unit price), a total that is a live SUM of the extended
//     prices, whether it is complete, and the bank, mass, volume and
//     bleeder below;
//   - sheet "Inputs": the design's window, worst-case factors,
//     temperatures, options, every candidate cell's datasheet figures, and
//     every load step (a profile too long for one sheet is cut at the
//     sheet's row limit, with a note);
//   - sheet "Results": the candidate's figures, the design page's rows
//     (figures.Candidate) with a number cell for each number in its unit
//     without prefix, its flags with severity, message and caution, and
//     every candidate in brief.
//
// Formulas carry their value as computed by capbank too, and the workbook
// asks to be recalculated on opening. Text cells are set as strings and go
// through Neutralise.
func BOQXLSX(w io.Writer, d *sizing.Design, r *sizing.Report, b *sizing.BOQ) error {
	if d == nil || r == nil || b == nil {
		return errors.New("export: the workbook needs the design, its report and its bill of quantities")
	}
	c := candidateByID(r, b.CellID)
	if c == nil {
		return fmt.Errorf("export: cell %q of the bill of quantities is not a candidate of the report", b.CellID)
	}
	f := excelize.NewFile()
	defer f.Close()
	x := &workbook{f: f, currency: b.Currency}
	if err := x.styles(); err != nil {
		return x.fail(err)
	}
	if err := f.SetSheetName("Sheet1", SheetBOQ); err != nil {
		return x.fail(err)
	}
	if err := x.boqSheet(b, c); err != nil {
		return x.fail(err)
	}
	if _, err := f.NewSheet(SheetInputs); err != nil {
		return x.fail(err)
	}
	if err := x.inputsSheet(d, r); err != nil {
		return x.fail(err)
	}
	if _, err := f.NewSheet(SheetResults); err != nil {
		return x.fail(err)
	}
	x.resultsSheet(r, c, b)
	if x.err != nil {
		return x.fail(x.err)
	}
	f.SetActiveSheet(0)
	full := true
	if err := f.SetCalcProps(&excelize.CalcPropsOptions{FullCalcOnLoad: &full}); err != nil {
		return x.fail(err)
	}
	if err := f.SetDocProps(&excelize.DocProperties{
		Title:   "Bill of quantities: " + b.Design,
		Creator: "capbank",
	}); err != nil {
		return x.fail(err)
	}
	if err := f.Write(w); err != nil {
		return x.fail(err)
	}
	return nil
}

// workbook holds the file being written, its styles and the first error:
// the sheet writers call many setters and check once.
type workbook struct {
	f        *excelize.File
	currency string
	err      error

	header, bold, wrap, money, moneyBold, number, title, left, top int
	// figureStyles are the display formats of figures by their decimals
	// (sciDecimals for the scientific one), with left alignment when the
	// key's left is set.
	figureStyles map[figureFormat]int
}

// figureFormat is one display format of a figure: decimals after the
// point, or scientific; left-aligned or not.
type figureFormat struct {
	decimals int
	left     bool
}

// sciDecimals marks the scientific display format, for figures too large
// or too small for a fixed one to show their significant digits.
const sciDecimals = -1

// excelDigits is the precision of a number in a spreadsheet cell: Excel
// keeps 15 significant digits ("Excel specifications and limits", number
// precision). excelize writes a float64 by cutting its shortest decimal
// after 15 digits rather than rounding it, so 0.0034·10 =
// 0.033999999999999996 would be stored as 0.0339999999999999; excelValue
// rounds it to 15 digits first, so the cell holds 0.034.
const excelDigits = 15

// excelValue is v rounded to the 15 significant digits a spreadsheet
// keeps.
func excelValue(v float64) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', excelDigits, 64), 64)
	if err != nil {
		return v
	}
	return r
}

// displayDecimals is the number of decimals that shows v to sigFigs
// significant digits with trailing zeros dropped (as figures.Number
// writes it), or sciDecimals when v is below 10⁻⁴ or from 10¹⁵ on in
// magnitude, where a fixed format would show it as 0 or with more digits
// than it has. A figure of 10⁴ or more shows its whole units.
func displayDecimals(v float64) int {
	a := math.Abs(v)
	switch {
	case a == 0 || math.IsNaN(a) || math.IsInf(a, 0):
		return 0
	case a < 1e-4 || a >= 1e15:
		return sciDecimals
	}
	d := max(0, sigFigs-1-int(math.Floor(math.Log10(a))))
	t := strconv.FormatFloat(v, 'f', d, 64)
	if strings.Contains(t, ".") {
		t = strings.TrimRight(strings.TrimRight(t, "0"), ".")
	}
	if i := strings.IndexByte(t, '.'); i >= 0 {
		return len(t) - i - 1
	}
	return 0
}

// figureStyle is the style that displays v to sigFigs significant digits
// while the cell keeps the full value: "0", "0.00", "0.000E+00".
func (x *workbook) figureStyle(v float64, left bool) int {
	k := figureFormat{displayDecimals(v), left}
	if id, ok := x.figureStyles[k]; ok {
		return id
	}
	var nf string
	switch {
	case k.decimals == sciDecimals:
		nf = "0." + strings.Repeat("0", sigFigs-1) + "E+00"
	case k.decimals == 0:
		nf = "0"
	default:
		nf = "0." + strings.Repeat("0", k.decimals)
	}
	st := &excelize.Style{CustomNumFmt: &nf, Alignment: &excelize.Alignment{Vertical: "top"}}
	if left {
		st.Alignment.Horizontal = "left"
	}
	id, err := x.f.NewStyle(st)
	if err != nil {
		x.check(err)
		return 0
	}
	if x.figureStyles == nil {
		x.figureStyles = map[figureFormat]int{}
	}
	x.figureStyles[k] = id
	return id
}

func (x *workbook) fail(err error) error {
	return fmt.Errorf("cannot write the workbook: %w", err)
}

func (x *workbook) check(err error) {
	if x.err == nil && err != nil {
		x.err = err
	}
}

// currencyFormat is the number format of a price: two to four decimals and
// the currency as literal text, each character escaped with a backslash so
// that no character of a user's currency label is read as a format code.
func currencyFormat(currency string) string {
	const digits = "#,##0.00##"
	if currency == "" {
		return digits
	}
	var b strings.Builder
	b.WriteString(digits)
	b.WriteString(`\ `)
	for _, r := range currency {
		b.WriteByte('\\')
		b.WriteRune(r)
	}
	return b.String()
}

func (x *workbook) styles() error {
	var err error
	newStyle := func(s *excelize.Style) int {
		if err != nil {
			return 0
		}
		var id int
		id, err = x.f.NewStyle(s)
		return id
	}
	cf := currencyFormat(x.currency)
	grey := excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"D9D9D9"}}
	x.header = newStyle(&excelize.Style{
		Font:      &excelize.Font{Bold: true},
		Fill:      grey,
		Border:    []excelize.Border{{Type: "bottom", Color: "000000", Style: 1}},
		Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"},
	})
	x.bold = newStyle(&excelize.Style{Font: &excelize.Font{Bold: true}})
	x.title = newStyle(&excelize.Style{Font: &excelize.Font{Bold: true, Size: 13}})
	x.wrap = newStyle(&excelize.Style{Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}})
	x.left = newStyle(&excelize.Style{Alignment: &excelize.Alignment{Horizontal: "left", Vertical: "top", WrapText: true}})
	x.top = newStyle(&excelize.Style{Alignment: &excelize.Alignment{Vertical: "top"}})
	x.number = newStyle(&excelize.Style{Alignment: &excelize.Alignment{Horizontal: "left", Vertical: "top"}})
	x.money = newStyle(&excelize.Style{CustomNumFmt: &cf, Alignment: &excelize.Alignment{Vertical: "top"}})
	x.moneyBold = newStyle(&excelize.Style{CustomNumFmt: &cf, Font: &excelize.Font{Bold: true},
		Border: []excelize.Border{{Type: "top", Color: "000000", Style: 1}}})
	return err
}

// cellName is the A1 name of column col (1-based) and row.
func cellName(col, row int) string {
	n, _ := excelize.CoordinatesToCellName(col, row)
	return n
}

// str sets a text cell, neutralised.
func (x *workbook) str(sheet string, col, row int, s string, style int) {
	ref := cellName(col, row)
	x.check(x.f.SetCellStr(sheet, ref, Neutralise(s)))
	if style != 0 {
		x.check(x.f.SetCellStyle(sheet, ref, ref, style))
	}
}

// num sets a number cell, its value rounded to the 15 digits a
// spreadsheet keeps (excelValue).
func (x *workbook) num(sheet string, col, row int, v float64, style int) {
	ref := cellName(col, row)
	x.check(x.f.SetCellFloat(sheet, ref, excelValue(v), -1, 64))
	if style != 0 {
		x.check(x.f.SetCellStyle(sheet, ref, ref, style))
	}
}

// BOQ sheet columns.
const (
	colItem = 1 + iota
	colDescription
	colQuantity
	colUnit
	colUnitPrice
	colExtended
)

// BOQFirstLineRow is the sheet row of the BOQ's first line (row 1 is the
// header); the total is on row BOQFirstLineRow + len(b.Lines).
const BOQFirstLineRow = 2

// boqSheet streams the BOQ sheet. Streaming is also how a formula keeps a
// numeric cached value: excelize's SetCellFormula marks the cached value
// as text (t="str"), while a streamed cell with a formula and a float64
// value is written as a number.
func (x *workbook) boqSheet(b *sizing.BOQ, c *sizing.Candidate) error {
	sw, err := x.f.NewStreamWriter(SheetBOQ)
	if err != nil {
		return err
	}
	for i, width := range []float64{30, 70, 11, 8, 17, 19} {
		if err := sw.SetColWidth(i+1, i+1, width); err != nil {
			return err
		}
	}
	if err := sw.SetPanes(&excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"}); err != nil {
		return err
	}
	t := &sheetRows{sw: sw}
	styled := func(v any, style int) excelize.Cell { return excelize.Cell{StyleID: style, Value: v} }
	in := ""
	if b.Currency != "" {
		in = " (" + b.Currency + ")"
	}
	var head []any
	for _, h := range []string{"Item", "Description", "Quantity", "Unit", "Unit price" + in, "Extended price" + in} {
		head = append(head, styled(h, x.header))
	}
	t.add(head...)
	for _, l := range b.Lines {
		row := t.row + 1
		qty, price := cellName(colQuantity, row), cellName(colUnitPrice, row)
		ext := excelize.Cell{StyleID: x.money, Formula: fmt.Sprintf(`IF(ISNUMBER(%s),%s*%s,"")`, price, qty, price)}
		var up any
		if l.UnitPrice != nil {
			up = styled(*l.UnitPrice, x.money)
			ext.Value = *l.ExtendedPrice
		}
		t.add(styled(l.Item, x.wrap), styled(l.Description, x.wrap), styled(l.Quantity, x.top), styled(l.Unit, x.top), up, ext)
	}
	last := t.row
	sum := fmt.Sprintf("SUM(%s:%s)", cellName(colExtended, BOQFirstLineRow), cellName(colExtended, last))
	t.add(styled("Total", x.bold), styled("sum of the priced lines' extended prices", x.bold), nil, nil, nil,
		excelize.Cell{StyleID: x.moneyBold, Formula: sum, Value: b.Total})
	t.add(styled("Total complete", x.bold), styled(completeness(b), x.wrap))
	t.blank()

	t.add(styled("Bank", x.title))
	kv := func(label string, value any, unit string) {
		style := x.left
		switch v := value.(type) {
		case *float64:
			if v == nil {
				value = "not given for the cell"
			} else {
				value, style = *v, x.figureStyle(*v, true)
			}
		case float64:
			style = x.figureStyle(v, true)
		}
		t.add(label, styled(value, style), unit)
	}
	kv("Design", b.Design, "")
	name := c.CellID
	if c.CellName != "" {
		name += " (" + c.CellName + ")"
	}
	kv("Cell", name, "")
	kv("Cells in series per string", b.Series, "")
	kv("Strings in parallel", b.Parallel, "")
	kv("Cells", b.Series*b.Parallel, "pc")
	kv("Cells' mass", b.CellMassKg, "kg")
	kv("Cells' volume", b.CellVolumeL, "L")
	kv("Currency", b.Currency, "")
	t.blank()
	t.add(styled("Service bleeder", x.title))
	bl := b.Bleeder
	kv("Bleeder resistance", bl.ResistorOhm, "Ω")
	kv("Bleeder power rating", bl.PowerW, "W")
	kv("Peak dissipation (max_v²/R)", bl.PeakW, "W")
	kv("Service voltage", bl.TargetV, "V")
	kv("Time to the service voltage", bl.TimeS, "s")
	kv("Time to 2 V", bl.TimeTo2VS, "s")
	if t.err != nil {
		return t.err
	}
	return sw.Flush()
}

// sheetRows writes rows in order to a streamed sheet, with the first error
// kept.
type sheetRows struct {
	sw  *excelize.StreamWriter
	row int
	err error
}

func (t *sheetRows) add(values ...any) {
	if t.err != nil {
		return
	}
	t.row++
	for i, v := range values {
		if s, ok := v.(string); ok {
			values[i] = Neutralise(s)
		}
		if c, ok := v.(excelize.Cell); ok {
			if s, ok := c.Value.(string); ok {
				c.Value = Neutralise(s)
				values[i] = c
			}
		}
		if p, ok := v.(*float64); ok {
			if p == nil {
				values[i] = nil
			} else {
				values[i] = excelValue(*p)
			}
		}
		if f, ok := v.(float64); ok {
			values[i] = excelValue(f)
		}
		if c, ok := values[i].(excelize.Cell); ok {
			if f, ok := c.Value.(float64); ok {
				c.Value = excelValue(f)
				values[i] = c
			}
		}
	}
	t.err = t.sw.SetRow(cellName(1, t.row), values)
}

func (t *sheetRows) blank() { t.row++ }

// inputsSheet streams the design's inputs: a streamed sheet holds a long
// logged profile without keeping every cell in memory.
func (x *workbook) inputsSheet(d *sizing.Design, r *sizing.Report) error {
	sw, err := x.f.NewStreamWriter(SheetInputs)
	if err != nil {
		return err
	}
	widths := []float64{34, 30, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14, 14}
	for i, wd := range widths {
		if err := sw.SetColWidth(i+1, i+1, wd); err != nil {
			return err
		}
	}
	t := &sheetRows{sw: sw}
	h := func(s string) excelize.Cell { return excelize.Cell{StyleID: x.header, Value: s} }
	bold := func(s string) excelize.Cell { return excelize.Cell{StyleID: x.title, Value: s} }
	left := func(v any) excelize.Cell { return excelize.Cell{StyleID: x.left, Value: v} }

	t.add(bold("Design inputs"))
	t.add(h("input"), h("value"), h("unit"), h("note"))
	t.add("name", d.Name)
	t.add("window.max_v (window top)", left(d.Window.MaxV), "V")
	t.add("window.min_v (cut-off)", left(d.Window.MinV), "V")
	if d.CellMaxV != nil {
		t.add("cell_max_v (per-cell ceiling)", left(*d.CellMaxV), "V")
	} else {
		t.add("cell_max_v (per-cell ceiling)", "not given", "", "each cell's rated_v applies")
	}
	t.add("eol.capacitance_factor (as applied)", left(r.EOLCapacitanceFactor), "")
	t.add("eol.esr_factor (as applied)", left(r.EOLESRFactor), "")
	if d.AmbientC != nil {
		t.add("ambient_c", left(*d.AmbientC), "°C")
	} else {
		t.add("ambient_c", left(defaultAmbientC), "°C", "not given: the default")
	}
	if d.ColdC != nil {
		t.add("cold_c", left(*d.ColdC), "°C")
	} else {
		t.add("cold_c", "not given", "", "no cold worst case")
	}
	if d.Converter != nil && len(d.Converter.EfficiencyCurve) > 0 {
		t.add("load.efficiency", "by the input voltage", "", "converter.efficiency_curve, below")
	} else if d.Load.Efficiency != nil {
		t.add("load.efficiency", left(*d.Load.Efficiency), "")
	} else {
		t.add("load.efficiency", left(1.0), "", "not given: power_w is at the bank terminals")
	}
	t.add("load.repeat (as applied)", left(r.Repeat), "")
	t.add("one pass of the steps", left(r.ProfileDurationS), "s")
	t.add("sizing pass (steps × repeat)", left(r.PassDurationS), "s")
	t.add("rank_by (as applied)", r.RankBy)
	if d.LifeYears != nil {
		t.add("life_years", left(*d.LifeYears), "years")
	}
	if d.StandbyH != nil {
		t.add("standby_h", left(*d.StandbyH), "h")
	}
	for _, in := range systemInputs(d) {
		if in.value != nil {
			t.add(in.key+" ("+in.label+")", left(*in.value), in.unit)
		} else {
			t.add(in.key+" ("+in.label+")", in.text)
		}
	}
	bal := sizing.Balancing{}
	if d.Balancing != nil {
		bal = *d.Balancing
	}
	kind := bal.Kind
	if kind == "" {
		kind = "passive"
	}
	t.add("balancing.kind", kind)
	if bal.CurrentMultiple != nil {
		t.add("balancing.current_multiple", left(*bal.CurrentMultiple), "")
	}
	if bal.LeakageSpreadA != nil {
		t.add("balancing.leakage_spread_a", left(*bal.LeakageSpreadA), "A")
	}
	if bal.Series != "" {
		t.add("balancing.series", bal.Series)
	}
	if bal.QuiescentA != nil {
		t.add("balancing.quiescent_a", left(*bal.QuiescentA), "A")
	}
	if d.Life != nil && d.Life.TempStepK != nil {
		t.add("life.temp_step_k", left(*d.Life.TempStepK), "K")
	}
	if d.Life != nil && d.Life.VoltageStepV != nil {
		t.add("life.voltage_step_v", left(*d.Life.VoltageStepV), "V")
	}
	cur := ""
	if d.BOQ != nil {
		cur = d.BOQ.Currency
	}
	priceUnit := "unit_price"
	if cur != "" {
		priceUnit += " (" + cur + ")"
	}

	t.blank()
	t.add(bold("Candidate cells (datasheet figures)"))
	t.add(h("id"), h("name"), h("rated_v (V)"), h("surge_v (V)"), h("capacitance_f (F)"),
		h("capacitance tolerance minus (%)"), h("capacitance tolerance plus (%)"), h("esr_ohm (Ω)"),
		h("cold_esr_factor"), h("cold_esr_temp_c (°C)"), h("leakage_a (A)"), h("max_current_a (A)"),
		h("peak_current_a (A)"), h("thermal_resistance_k_per_w (K/W)"), h("min_temp_c (°C)"), h("max_temp_c (°C)"),
		h("mass_kg (kg)"), h("volume_l (L)"), h(priceUnit), h("rated_life_h (h)"), h("rated_life_temp_c (°C)"),
		h("specific_heat_j_per_kg_k (J/(kg·K))"), h("electrolyte"))
	for _, c := range d.Cells {
		var minus, plus *float64
		if len(c.CapacitanceTolerancePct) == 2 {
			minus, plus = &c.CapacitanceTolerancePct[0], &c.CapacitanceTolerancePct[1]
		}
		t.add(c.ID, c.Name, c.RatedV, c.SurgeV, c.CapacitanceF, minus, plus, c.ESROhm,
			c.ColdESRFactor, c.ColdESRTempC, c.LeakageA, c.MaxCurrentA, c.PeakCurrentA,
			c.ThermalResistanceKPerW, c.MinTempC, c.MaxTempC, c.MassKg, c.VolumeL, c.UnitPrice,
			c.RatedLifeH, c.RatedLifeTempC, c.SpecificHeatJPerKgK, c.Electrolyte)
	}

	t.blank()
	n := len(d.Load.StepList())
	t.add(bold(fmt.Sprintf("Load steps (%d, one pass; run %d × in the sizing pass)", n, r.Repeat)))
	// Room left for the steps: the heading row, the note and the header.
	room := maxSheetRows - t.row - 2
	if n > room {
		t.add(fmt.Sprintf("The profile has %d steps; the sheet holds %d of them, the first ones. The design file has them all.", n, room))
		n = room
	} else {
		t.add("A negative power_w or current_a is energy flowing into the bank.")
	}
	t.add(h("step"), h("kind"), h("power_w (W)"), h("current_a (A)"), h("resistance_ohm (Ω)"), h("duration_s (s)"), h("start (s)"))
	var start runningSum
	for i, st := range d.Load.StepList()[:n] {
		kind, _, _, _ := stepKind(st)
		t.add(i+1, kind, st.PowerW, st.CurrentA, st.ResistanceOhm, st.DurationS, start.value())
		start.add(st.DurationS)
	}
	if t.err != nil {
		return t.err
	}
	return sw.Flush()
}

func (x *workbook) resultsSheet(r *sizing.Report, c *sizing.Candidate, b *sizing.BOQ) {
	const s = SheetResults
	for i, width := range []float64{44, 18, 10, 60, 60} {
		col, _ := excelize.ColumnNumberToName(i + 1)
		x.check(x.f.SetColWidth(s, col, col, width))
	}
	row := 1
	title := "Results for " + c.CellID
	if r.Recommended != nil && *r.Recommended == c.CellID {
		title += " (the recommended cell)"
	} else if r.Recommended != nil {
		title += " (chosen; capbank recommends " + *r.Recommended + ")"
	}
	x.str(s, 1, row, title, x.title)
	row++
	x.str(s, 1, row, "Worst case is end of life, and cold when the design gives cold_c; figures not marked so are at beginning of life. Bank figures are at the bank terminals.", 0)
	row += 2
	for i, h := range []string{"figure", "value", "unit", "note"} {
		x.str(s, i+1, row, h, x.header)
	}
	row++
	put := func(label string, v any, unit, note string) {
		x.str(s, 1, row, label, 0)
		// A figure shows sigFigs digits (figureStyle) and keeps its
		// value.
		switch v := v.(type) {
		case float64:
			x.num(s, 2, row, v, x.figureStyle(v, true))
		case int:
			x.num(s, 2, row, float64(v), x.number)
		case *float64:
			if v == nil {
				x.str(s, 2, row, none, 0)
			} else {
				x.num(s, 2, row, *v, x.figureStyle(*v, true))
			}
		case bool:
			x.check(x.f.SetCellBool(s, cellName(2, row), v))
		case string:
			x.str(s, 2, row, v, x.left)
		}
		if unit != "" {
			x.str(s, 3, row, unit, 0)
		}
		if note != "" {
			x.str(s, 4, row, note, 0)
		}
		row++
	}
	section := func(name string) {
		row++
		x.str(s, 1, row, name, x.bold)
		row++
	}
	put("cell", c.CellID, "", c.CellName)
	put("feasible", c.Feasible, "", c.Reason)
	put("series (cells per string)", c.Series, "", "")
	put("parallel (strings)", c.Parallel, "", "")
	put("cells", c.Cells, "", "")

	// The figures are the page's rows (figures.Candidate), a number cell
	// holding the unrounded figure in its unit without prefix.
	for _, g := range figures.Candidate(c, r) {
		section(g.Title)
		for _, fr := range g.Rows {
			label, note := figures.ASCII(fr.Label), figures.ASCII(fr.Note)
			switch {
			case fr.HasNum && fr.Base == "": // a price, in the design's currency
				put(label, fr.Num, b.Currency, note)
			case fr.HasNum:
				put(label, fr.Num, fr.Base, note)
			default:
				put(label, figures.ASCII(fr.Value), fr.Unit, note)
			}
		}
	}
	if c.Thermal == nil || c.Life == nil {
		section("Not checked")
	}
	if c.Thermal == nil {
		put("ESR heating", "not checked", "", "the cell gives no thermal resistance")
	}
	if c.Life == nil {
		put("Expected life", "not checked", "", "the cell gives no rated life")
	}
	section("Bill of quantities")
	put("Bill of quantities total", b.Total, b.Currency, completeness(b))

	row++
	x.str(s, 1, row, fmt.Sprintf("Flags (%d), most severe first", len(c.Flags)), x.bold)
	row++
	for i, h := range []string{"code", "severity", "", "message", "caution"} {
		if h != "" {
			x.str(s, i+1, row, h, x.header)
		}
	}
	row++
	for _, fl := range figures.SortedFlags(c.Flags) {
		x.str(s, 1, row, fl.Code, 0)
		x.str(s, 2, row, string(fl.Severity), 0)
		x.str(s, 4, row, fl.Message, x.wrap)
		x.str(s, 5, row, fl.Caution, x.wrap)
		row++
	}

	row++
	x.str(s, 1, row, "All candidates (rank order)", x.bold)
	row++
	// The brief table is below the flags so that column widths above fit.
	heads := []string{"cell", "feasible", "series", "parallel", "cells", "runtime (s)", "lowest terminal (V)", "usable energy (J)", "peak current (A)", "total price", "mass (kg)", "reason"}
	for i, h := range heads {
		x.str(s, i+1, row, h, x.header)
	}
	row++
	for _, k := range r.Candidates {
		x.str(s, 1, row, k.CellID, 0)
		x.check(x.f.SetCellBool(s, cellName(2, row), k.Feasible))
		x.num(s, 3, row, float64(k.Series), 0)
		x.num(s, 4, row, float64(k.Parallel), 0)
		x.num(s, 5, row, float64(k.Cells), 0)
		fig := func(col int, v float64) { x.num(s, col, row, v, x.figureStyle(v, false)) }
		if k.RuntimeS != nil {
			fig(6, *k.RuntimeS)
		}
		fig(7, k.MinTerminalV)
		fig(8, k.UsableEnergyJ)
		fig(9, k.PeakCurrentA)
		if k.TotalPrice != nil {
			x.num(s, 10, row, *k.TotalPrice, x.money)
		}
		if k.MassKg != nil {
			fig(11, *k.MassKg)
		}
		x.str(s, 12, row, k.Reason, 0)
		row++
	}
}

// limitText says in words what set a candidate's string count.
func limitText(limit string) string {
	switch limit {
	case "voltage":
		return "terminal voltage reaching min_v"
	case "power":
		return "the maximum-power point"
	case "peak_current":
		return "the cell's peak current"
	case "rms_current":
		return "the cell's RMS current"
	case "":
		return "one string is enough"
	}
	return limit
}
