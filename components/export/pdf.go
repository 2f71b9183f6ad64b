package export

import (
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"capbank/components/figures"
	"capbank/sizing"

	"codeberg.org/go-pdf/fpdf"
)

// PDFOptions are the choices of the PDF report.
type PDFOptions struct {
	// Paper is A4 (the default when empty) or Letter.
	Paper Paper
	// Date is the report's date, printed on it and stored as the PDF's
	// creation date; required, so that a report is reproducible.
	Date time.Time
}

// SafetyNote closes every report. It defers to local codes and licensed
// practice, as SAFETY.md does.
const SafetyNote = "capbank is a sizing aid. A supercapacitor bank stores energy that can burn, shock and start fires, and a bank that passes the checks in this report is not thereby safe. " +
	"The figures here do not replace the electrical and fire codes and standards that apply where the bank is built, installed and shipped, the cell maker's instructions, or the judgement of a licensed or otherwise qualified engineer: where they disagree with this report, they decide. " +
	"Treat the bank as live until it has been discharged through a bleeder and proven dead with a meter, and verify the design by measurement before relying on it. " +
	"capbank does not check arc-flash energy, enclosures, creepage and clearance, fuses, wiring, the charger or transport packaging: have those checked against the codes that apply."

// ReportPDF writes the design report of design d, sized in report r, as a
// PDF: the title and date, the design inputs, the bank of the bill of
// quantities b (normally the recommended one) with its figures and units,
// the candidates, charts of the worst-case pass (terminal and capacitor
// voltage against the window, bank current, and cell temperature when the
// cell gives a thermal resistance), every flag with its caution, the bill
// of quantities with its total, and the safety note.
//
// b may be nil when no candidate is feasible: the report then says so and
// has no bank, charts or bill of quantities. When b is for a candidate
// other than the recommended one, the charts come from sizing that cell
// alone (the report's curve is the recommended bank's). Text is set in the
// embedded UTF-8 font DejaVu Sans Condensed (fonts.go) through pdfText, so
// Ω, → and any name a user typed print as they are.
func ReportPDF(w io.Writer, d *sizing.Design, r *sizing.Report, b *sizing.BOQ, opt PDFOptions) error {
	if d == nil || r == nil {
		return errors.New("export: the report needs the design and its sizing report")
	}
	if opt.Date.IsZero() {
		return errors.New("export: the report needs its date (PDFOptions.Date)")
	}
	size := "A4"
	switch opt.Paper {
	case "", A4:
	case Letter:
		size = "Letter"
	default:
		return fmt.Errorf("export: paper must be a4 or letter (got %q)", opt.Paper)
	}
	var c *sizing.Candidate
	if b != nil {
		if c = candidateByID(r, b.CellID); c == nil {
			return fmt.Errorf("export: cell %q of the bill of quantities is not a candidate of the report", b.CellID)
		}
	}
	var curve *sizing.Curve
	var note string
	if c != nil {
		curve, note = curveFor(d, r, c)
	}
	layout := func(boqOnNewPage bool) *pdf {
		p := newPDF(size, d, r, opt.Date)
		p.titleBlock(c, b)
		p.inputs(d, r)
		if c != nil {
			p.bankFigures(d, r, c, b)
		}
		p.candidates(r)
		if c != nil {
			p.charts(d, r, c, curve, note)
			p.flags(c)
			if boqOnNewPage && p.f.GetY() > marginMM+headingMM {
				p.f.AddPage()
			}
			p.boq(b)
		}
		p.safety()
		return p
	}
	// A report whose last page would hold little more than the end of the
	// bill of quantities and the safety note is laid out again with the
	// bill of quantities starting a page, so that the last page carries it
	// whole with the note.
	p := layout(false)
	if c != nil && p.f.Error() == nil && p.lastPageFill() < minLastPageFill {
		if q := layout(true); q.f.Error() == nil && q.f.PageNo() == p.f.PageNo() && q.lastPageFill() > p.lastPageFill() {
			p = q
		}
	}
	if err := p.f.Error(); err != nil {
		return fmt.Errorf("cannot write the PDF report: %w", err)
	}
	if err := p.f.Output(w); err != nil {
		return fmt.Errorf("cannot write the PDF report: %w", err)
	}
	return nil
}

// minLastPageFill is the least share of the last page's text area a report
// should fill: below it the last page holds little more than the closing
// safety note (about a fifth of a page) and the tail of what came before.
const minLastPageFill = 0.35

// lastPageFill is the share of the current (last) page's text area that is
// used, from the top margin down to where the text ends.
func (p *pdf) lastPageFill() float64 {
	return (p.f.GetY() - marginMM) / (p.bottom() - marginMM)
}

// curveFor returns the worst-case curve of candidate c: the report's when
// c is the recommended bank, else the one from sizing the design with c's
// cell alone (each cell is sized on its own, so its bank is the same).
// When there is no curve, note says why.
func curveFor(d *sizing.Design, r *sizing.Report, c *sizing.Candidate) (*sizing.Curve, string) {
	if r.Recommended != nil && *r.Recommended == c.CellID {
		if r.Curve == nil {
			return nil, "The report has no curve for this bank."
		}
		return r.Curve, ""
	}
	cell := cellByID(d, c.CellID)
	if cell == nil {
		return nil, "The design has no cell " + c.CellID + "."
	}
	one := *d
	one.Cells = []sizing.Cell{*cell}
	r1, err := sizing.Size(&one)
	if err != nil || r1.Curve == nil || len(r1.Candidates) != 1 {
		return nil, "The curve of this bank could not be traced."
	}
	k := r1.Candidates[0]
	if k.Series != c.Series || k.Parallel != c.Parallel || math.Abs(k.MinTerminalV-c.MinTerminalV) > 1e-9*math.Max(1, math.Abs(c.MinTerminalV)) {
		return nil, "The curve of this bank could not be traced consistently with the report."
	}
	return r1.Curve, ""
}

// Page geometry in mm and type sizes in pt.
const (
	marginMM   = 15.0
	bottomMM   = 18.0
	bodyPt     = 9.0
	smallPt    = 8.0
	lineMM     = 4.3
	smallLine  = 3.8
	sectionGap = 4.0
	// keepWholeMM is the tallest table moved whole to a new page rather
	// than split.
	keepWholeMM = 90.0
	// headingMM is the height of a section heading with its gaps.
	headingMM = sectionGap + 7 + 1.5
)

// pdf is the report being laid out.
type pdf struct {
	f          *fpdf.Fpdf
	pageW      float64
	pageH      float64
	body       float64 // the text width between the margins
	currency   string
	designName string
	date       string
	report     *sizing.Report
}

// colour is an RGB colour.
type colour struct{ r, g, b int }

var (
	black     = colour{0, 0, 0}
	grey      = colour{110, 110, 110}
	lightGrey = colour{235, 235, 235}
	gridGrey  = colour{215, 215, 215}
	blue      = colour{31, 90, 170}
	orange    = colour{214, 110, 0}
	red       = colour{190, 30, 30}
	green     = colour{30, 130, 60}
	purple    = colour{120, 60, 150}
)

func newPDF(size string, d *sizing.Design, r *sizing.Report, date time.Time) *pdf {
	f := fpdf.New("P", "mm", size, "")
	addFonts(f)
	pw, ph := f.GetPageSize()
	p := &pdf{f: f, pageW: pw, pageH: ph, body: pw - 2*marginMM, designName: d.Name, date: date.Format("2006-01-02"), report: r}
	if d.BOQ != nil {
		p.currency = d.BOQ.Currency
	}
	if p.designName == "" {
		p.designName = "(unnamed design)"
	}
	f.SetMargins(marginMM, marginMM, marginMM)
	f.SetAutoPageBreak(true, bottomMM)
	f.SetCellMargin(1)
	f.SetCreationDate(date)
	f.SetModificationDate(date)
	f.SetCatalogSort(true)
	f.SetTitle("capbank design report: "+p.designName, true)
	f.SetCreator("capbank", true)
	f.SetProducer("capbank", true)
	f.AliasNbPages("{nb}")
	f.SetFooterFunc(func() {
		f.SetY(-12)
		p.font("", 7.5)
		p.color(grey)
		right := fmt.Sprintf("page %d of {nb}", f.PageNo())
		rw := f.GetStringWidth(right) + 4
		left := p.fit("capbank design report: "+p.designName+" ("+p.date+")", p.body-rw-4)
		f.CellFormat(p.body-rw, 4, left, "T", 0, "L", false, 0, "")
		f.CellFormat(rw, 4, right, "T", 0, "R", false, 0, "")
		p.color(black)
	})
	f.AddPage()
	return p
}

func (p *pdf) font(style string, pt float64) { p.f.SetFont(fontFamily, style, pt) }

// lines splits s, as pdfText writes it, into the lines that fit width mm
// in the current font.
func (p *pdf) lines(s string, width float64) []string {
	return p.f.SplitText(pdfText(s), width)
}

func (p *pdf) color(c colour) { p.f.SetTextColor(c.r, c.g, c.b) }

// fit returns s as PDF text cut with "..." to fit width mm in the current
// font.
func (p *pdf) fit(s string, width float64) string {
	t := []rune(pdfText(s))
	if p.f.GetStringWidth(string(t)) <= width {
		return string(t)
	}
	for len(t) > 0 && p.f.GetStringWidth(string(t)+"…") > width {
		t = t[:len(t)-1]
	}
	return string(t) + "…"
}

// bottom is the lowest y of the text area.
func (p *pdf) bottom() float64 { return p.pageH - bottomMM }

// room starts a new page unless h mm are left on this one.
func (p *pdf) room(h float64) {
	if p.f.GetY()+h > p.bottom() {
		p.f.AddPage()
	}
}

// heading starts a section: a rule and a bold title, on a new page when
// fewer than keep mm would be left under it.
func (p *pdf) heading(title string, keep float64) {
	p.f.Ln(sectionGap)
	p.room(10 + keep)
	p.font("B", 12)
	p.color(black)
	p.f.CellFormat(p.body, 7, pdfText(title), "B", 1, "L", false, 0, "")
	p.f.Ln(1.5)
}

// para writes a paragraph that wraps across the body width.
func (p *pdf) para(s string, style string, pt, line float64) {
	p.font(style, pt)
	p.f.SetX(marginMM)
	p.f.MultiCell(p.body, line, pdfText(s), "", "L", false)
}

// titleBlock writes the title, the date and the headline box.
func (p *pdf) titleBlock(c *sizing.Candidate, b *sizing.BOQ) {
	f := p.f
	p.font("B", 18)
	f.CellFormat(p.body, 9, "capbank design report", "", 1, "L", false, 0, "")
	p.font("B", 13)
	f.MultiCell(p.body, 6, pdfText(p.designName), "", "L", false)
	p.font("", bodyPt)
	p.color(grey)
	f.MultiCell(p.body, lineMM, pdfText("Date: "+p.date+". A supercapacitor (EDLC) bank sized by capbank at worst case: end of life with each cell's minus capacitance tolerance, and cold when the design gives a cold temperature."), "", "L", false)
	p.color(black)
	f.Ln(2)

	var lines []string
	var head string
	if c == nil {
		head = "No bank: no candidate cell carries the load at worst case."
		lines = []string{"The candidates table below gives each cell's reason. There is no bill of quantities."}
	} else {
		label := c.CellID
		if c.CellName != "" {
			label += " (" + c.CellName + ")"
		}
		head = fmt.Sprintf("Recommended bank: %s of %s", figures.Arrangement(c.Series, c.Parallel, c.Cells), label)
		if b.CellID != p.recommendedID() {
			head = fmt.Sprintf("Bank in this report: %s of %s", figures.Arrangement(c.Series, c.Parallel, c.Cells), label)
			lines = append(lines, "Chosen by the user; capbank recommends "+p.recommendedOr("no cell")+" (see the candidates).")
		}
		runtime := "not within 10^7 s"
		if c.RuntimeS != nil {
			runtime = figures.Estimated(figures.Duration(*c.RuntimeS, sigFigs), c.RuntimeEstimated)
		}
		lines = append(lines, fmt.Sprintf("Worst-case runtime %s; lowest terminal voltage %s against the %s cut-off; usable energy %s; stored %s at %s.",
			runtime, quantity(c.MinTerminalV, "V"), quantity(p.minV(), "V"), quantity(c.UsableEnergyJ, "J"),
			quantity(c.StoredEnergyJ, "J"), quantity(c.Hazards.MaxV, "V")))
		counts := map[sizing.Severity]int{}
		for _, fl := range c.Flags {
			counts[fl.Severity]++
		}
		total := money(b.Total, b.Currency)
		if !b.Complete {
			total += " (incomplete: some lines have no price)"
		}
		lines = append(lines, fmt.Sprintf("Flags: %d danger, %d warning, %d info; read them before building. Bill of quantities total %s.",
			counts[sizing.Danger], counts[sizing.Warning], counts[sizing.Info], total))
	}
	// The box: measure, draw the fill, then the text over it.
	p.font("B", 11)
	headLines := p.lines(head, p.body-4)
	p.font("", bodyPt)
	n := 0
	for _, l := range lines {
		n += len(p.lines(l, p.body-4))
	}
	h := float64(len(headLines))*5.5 + float64(n)*lineMM + 4
	y := f.GetY()
	f.SetFillColor(lightGrey.r, lightGrey.g, lightGrey.b)
	f.SetDrawColor(160, 160, 160)
	f.Rect(marginMM, y, p.body, h, "FD")
	f.SetXY(marginMM+2, y+2)
	p.font("B", 11)
	f.MultiCell(p.body-4, 5.5, pdfText(head), "", "L", false)
	p.font("", bodyPt)
	for _, l := range lines {
		f.SetX(marginMM + 2)
		f.MultiCell(p.body-4, lineMM, pdfText(l), "", "L", false)
	}
	f.SetY(y + h)
	f.SetDrawColor(0, 0, 0)
}

func (p *pdf) recommendedID() string { return p.recommendedOr("") }

func (p *pdf) recommendedOr(none string) string {
	if p.report.Recommended == nil {
		return none
	}
	return *p.report.Recommended
}

func (p *pdf) minV() float64 { return p.report.MinV }

// column of a table: its title, its share of the body width and its
// alignment ("L" or "R").
type column struct {
	title string
	share float64
	align string
}

// table lays out rows under a header that repeats on each new page. Cells
// wrap; a row never splits across pages. bold marks rows set in bold (a
// total).
type table struct {
	cols []column
	rows [][]string
	bold map[int]bool
	pt   float64
	// keepLast rows stay together on one page (a total with the line
	// above it).
	keepLast int
	// heading, when given, is the section heading drawn above the table
	// and kept with it.
	heading string
}

func (p *pdf) table(t table) {
	f := p.f
	pt, line := t.pt, smallLine
	if pt == 0 {
		pt = smallPt
	}
	if pt > smallPt {
		line = lineMM
	}
	var sum float64
	for _, c := range t.cols {
		sum += c.share
	}
	widths := make([]float64, len(t.cols))
	for i, c := range t.cols {
		widths[i] = p.body * c.share / sum
	}
	// measure returns the wrapped lines of a row in the style given.
	measure := func(row []string, style string) ([][]string, float64) {
		p.font(style, pt)
		out := make([][]string, len(row))
		most := 1
		for i, cell := range row {
			// A newline in a cell starts a line; pdfText makes any other
			// control character a space.
			for _, part := range strings.Split(cell, "\n") {
				out[i] = append(out[i], p.lines(part, widths[i])...)
			}
			most = max(most, len(out[i]))
		}
		return out, float64(most)*line + 1.2
	}
	draw := func(cells [][]string, h float64, style string, fill bool) {
		y := f.GetY()
		x := marginMM
		if fill {
			f.SetFillColor(lightGrey.r, lightGrey.g, lightGrey.b)
			f.Rect(marginMM, y, p.body, h, "F")
		}
		p.font(style, pt)
		for i, lines := range cells {
			f.SetXY(x, y+0.6)
			f.MultiCell(widths[i], line, strings.Join(lines, "\n"), "", t.cols[i].align, false)
			x += widths[i]
		}
		f.SetDrawColor(190, 190, 190)
		f.Line(marginMM, y+h, marginMM+p.body, y+h)
		f.SetDrawColor(0, 0, 0)
		f.SetXY(marginMM, y+h)
	}
	head := make([]string, len(t.cols))
	for i, c := range t.cols {
		head[i] = c.title
	}
	styleOf := func(i int) string {
		if t.bold[i] {
			return "B"
		}
		return ""
	}
	headCells, headH := measure(head, "B")
	header := func() { draw(headCells, headH, "B", true) }
	// A short table moves to the next page whole rather than split.
	whole := headH
	for i, row := range t.rows {
		_, h := measure(row, styleOf(i))
		whole += h
	}
	if t.heading != "" {
		whole += headingMM
	}
	if whole <= keepWholeMM {
		p.room(whole)
	}
	if t.heading != "" {
		p.heading(t.heading, headH+2*line)
	}
	p.room(headH + 2*line)
	header()
	for i, row := range t.rows {
		style := styleOf(i)
		cells, h := measure(row, style)
		if t.keepLast > 1 && i == len(t.rows)-t.keepLast {
			together := h
			for j := i + 1; j < len(t.rows); j++ {
				_, hj := measure(t.rows[j], styleOf(j))
				together += hj
			}
			if f.GetY()+together > p.bottom() {
				f.AddPage()
				header()
			}
		}
		if f.GetY()+h > p.bottom() {
			f.AddPage()
			header()
		}
		draw(cells, h, style, false)
	}
}

// inputs writes the design's inputs: the window and the worst case, the
// options, the load steps and the candidate cells' datasheet figures.
func (p *pdf) inputs(d *sizing.Design, r *sizing.Report) {
	p.heading("Design inputs", 30)
	ceiling := "each cell's rated voltage"
	if d.CellMaxV != nil {
		ceiling = quantity(*d.CellMaxV, "V") + " (cell_max_v; a cell's rating applies when lower)"
	}
	worst := fmt.Sprintf("end of life: capacitance × %s, ESR × %s", figures.Number(r.EOLCapacitanceFactor, sigFigs), figures.Number(r.EOLESRFactor, sigFigs))
	if d.EOL == nil || d.EOL.ApplyTolerance == nil || *d.EOL.ApplyTolerance {
		worst += "; each cell's minus capacitance tolerance on top"
	} else {
		worst += "; capacitance tolerance left out (eol.apply_tolerance false)"
	}
	if r.ColdC != nil {
		worst += fmt.Sprintf("; cold %s °C (ESR and capacitance by each cell's cold factors)", figures.Number(*r.ColdC, sigFigs))
	}
	ambient := quantity(defaultAmbientC, "°C") + " (default)"
	if d.AmbientC != nil {
		ambient = quantity(*d.AmbientC, "°C")
	}
	eff := "1 (power_w is at the bank terminals)"
	if d.Load.Efficiency != nil {
		eff = figures.Number(*d.Load.Efficiency, sigFigs) + " (converter, both ways)"
	}
	if d.Converter != nil && len(d.Converter.EfficiencyCurve) > 0 {
		eff = "by the input voltage (converter.efficiency_curve, below)"
	}
	pass := fmt.Sprintf("%d steps, one pass %s", len(d.Load.StepList()), figures.Duration(r.ProfileDurationS, sigFigs))
	if r.Repeat > 1 {
		pass += fmt.Sprintf(", run %d × back to back: sizing pass %s", r.Repeat, figures.Duration(r.PassDurationS, sigFigs))
	}
	if r.PeriodS != nil {
		pass += "; one event every " + figures.Duration(*r.PeriodS, sigFigs) + " (RMS current and heat taken over it)"
	} else {
		pass += "; no period given: RMS current and heat as if back to back"
	}
	rows := [][]string{
		{"Voltage window", fmt.Sprintf("%s at the top (fully charged) to %s, the cut-off, at the bank terminals", quantity(d.Window.MaxV, "V"), quantity(d.Window.MinV, "V"))},
		{"Per-cell ceiling", ceiling},
		{"Worst case", worst},
		{"Ambient", ambient},
		{"Load", pass + "; converter efficiency " + eff},
	}
	if d.LifeYears != nil {
		rows = append(rows, []string{"Service life asked", quantity(*d.LifeYears, "years")})
	}
	if d.StandbyH != nil {
		rows = append(rows, []string{"Standby hold asked", quantity(*d.StandbyH, "h") + " above the cut-off with no charger"})
	}
	rows = append(rows, []string{"Balancing", balancingInput(d.Balancing)})
	for _, in := range systemInputs(d) {
		rows = append(rows, []string{strings.ToUpper(in.label[:1]) + in.label[1:], in.shown() + " (" + in.key + ")"})
	}
	rows = append(rows, []string{"Ranking", "feasible candidates ranked by " + r.RankBy})
	p.table(table{cols: []column{{"input", 1, "L"}, {"value", 3.2, "L"}}, rows: rows, pt: bodyPt})

	// Load steps: all of a short profile, the first ones of a long one.
	const shown = 40
	p.f.Ln(3)
	p.room(20)
	p.para("Load steps (positive power or current flows out of the bank, a negative one into it):", "B", bodyPt, lineMM)
	var steps [][]string
	var start runningSum
	for i, s := range d.Load.StepList()[:min(shown, len(d.Load.StepList()))] {
		kind, v, unit, has := stepKind(s)
		value := none
		if has {
			value = quantity(v, unit)
		}
		steps = append(steps, []string{strconv.Itoa(i + 1), kind, value, figures.Number(s.DurationS, 6), figures.Number(start.value(), 6)})
		start.add(s.DurationS)
	}
	p.table(table{cols: []column{{"step", 0.6, "R"}, {"kind", 1.2, "L"}, {"value", 1.4, "R"}, {"duration (s)", 1.2, "R"}, {"starts at (s)", 1.2, "R"}, {"", 2.4, "L"}}, rows: padRows(steps, 6)})
	if n := len(d.Load.StepList()); n > shown {
		p.para(fmt.Sprintf("... and %d more steps (%d in all); the design file and the XLSX Inputs sheet list every step.", n-shown, n), "I", smallPt, smallLine)
	}

	// Candidate cells as given.
	p.f.Ln(3)
	p.room(25)
	p.para("Candidate cells, electrical (datasheet figures as given; blank: not given):", "B", bodyPt, lineMM)
	var elec, other [][]string
	for _, c := range d.Cells {
		tol := ""
		if len(c.CapacitanceTolerancePct) == 2 {
			tol = fmt.Sprintf("%s / +%s", figures.Number(c.CapacitanceTolerancePct[0], 3), figures.Number(c.CapacitanceTolerancePct[1], 3))
		}
		temps := ""
		if c.MinTempC != nil || c.MaxTempC != nil {
			temps = optFig(c.MinTempC) + " to " + optFig(c.MaxTempC)
		}
		cold := ""
		if c.ColdESRFactor != nil {
			cold = "×" + figures.Number(*c.ColdESRFactor, 3)
			if c.ColdESRTempC != nil {
				cold += " at " + figures.Number(*c.ColdESRTempC, 3) + " °C"
			}
		}
		id := c.ID
		if c.Name != "" {
			id += "\n" + c.Name
		}
		life := ""
		if c.RatedLifeH != nil {
			life = figures.Number(*c.RatedLifeH, 4) + " h"
			if c.RatedLifeTempC != nil {
				life += " at " + figures.Number(*c.RatedLifeTempC, 3) + " °C"
			}
		}
		price := ""
		if c.UnitPrice != nil {
			price = money(*c.UnitPrice, "")
		}
		heat := ""
		if c.SpecificHeatJPerKgK != nil {
			heat = figures.Number(*c.SpecificHeatJPerKgK, 4)
		}
		elec = append(elec, []string{
			id, figures.Number(c.RatedV, 4), optFig(c.SurgeV), figures.Number(c.CapacitanceF, 6), tol,
			figures.Number(c.ESROhm*1e3, 4), cold, optScaled(c.LeakageA, 1e3), optFig(c.MaxCurrentA), optFig(c.PeakCurrentA),
		})
		other = append(other, []string{
			c.ID, optFig(c.ThermalResistanceKPerW), temps, optFig(c.MassKg), optFig(c.VolumeL), heat, life, c.Electrolyte, price,
		})
	}
	p.table(table{cols: []column{
		{"cell", 3.4, "L"}, {"rated (V)", 1.0, "R"}, {"surge (V)", 1.0, "R"}, {"C (F)", 1.0, "R"}, {"tolerance (%)", 1.5, "R"},
		{"ESR (mΩ)", 1.0, "R"}, {"cold ESR", 1.7, "R"}, {"leakage (mA)", 1.2, "R"}, {"max I (A)", 1.0, "R"}, {"peak I (A)", 1.0, "R"},
	}, rows: elec, pt: 7.5})
	p.f.Ln(3)
	p.room(20)
	p.para("Candidate cells, thermal, life and purchasing:", "B", bodyPt, lineMM)
	priceHead := "unit price"
	if p.currency != "" {
		priceHead += " (" + p.currency + ")"
	}
	p.table(table{cols: []column{
		{"cell", 2.6, "L"}, {"R_th (K/W)", 1.1, "R"}, {"range (°C)", 1.3, "R"}, {"mass (kg)", 1.0, "R"}, {"volume (L)", 1.0, "R"},
		{"c_p (J/(kg·K))", 1.3, "R"}, {"rated life", 1.6, "R"}, {"electrolyte", 1.3, "L"}, {priceHead, 1.2, "R"},
	}, rows: other, pt: 7.5})
}

// padRows widens each row to n cells.
func padRows(rows [][]string, n int) [][]string {
	for i := range rows {
		for len(rows[i]) < n {
			rows[i] = append(rows[i], "")
		}
	}
	return rows
}

func optFig(p *float64) string {
	if p == nil {
		return ""
	}
	return figures.Number(*p, sigFigs)
}

func optScaled(p *float64, k float64) string {
	if p == nil {
		return ""
	}
	return figures.Number(*p*k, sigFigs)
}

// balancingInput says the design's balancing choice in words.
func balancingInput(b *sizing.Balancing) string {
	if b == nil {
		return fmt.Sprintf("passive, a resistor across each cell (defaults: %g × the leakage spread, %s)", sizing.DefaultBalancingMultiple, sizing.DefaultBalancingSeries)
	}
	switch b.Kind {
	case "none":
		return "none"
	case "active":
		s := "active, a circuit per cell"
		if b.QuiescentA != nil {
			s += " drawing " + quantity(*b.QuiescentA, "A")
		}
		return s
	}
	mult, series := sizing.DefaultBalancingMultiple, sizing.DefaultBalancingSeries
	if b.CurrentMultiple != nil {
		mult = *b.CurrentMultiple
	}
	if b.Series != "" {
		series = b.Series
	}
	s := fmt.Sprintf("passive, a resistor across each cell: %s × the leakage spread, rounded down to %s", figures.Number(mult, 4), series)
	if b.LeakageSpreadA != nil {
		s += ", leakage spread " + quantity(*b.LeakageSpreadA, "A")
	}
	return s
}

// bankFigures writes the figures of the bank with their units.
func (p *pdf) bankFigures(d *sizing.Design, r *sizing.Report, c *sizing.Candidate, b *sizing.BOQ) {
	title := "Recommended bank and its figures"
	if b.CellID != p.recommendedID() {
		title = "Bank " + c.CellID + " and its figures"
	}
	p.heading(title, 40)
	p.para("Worst case is end of life with the cell's minus capacitance tolerance (and cold when the design gives a cold temperature), as its row says; a note says where a figure is at beginning of life. Bank figures are at the bank terminals.", "", smallPt, smallLine)
	p.f.Ln(1)
	// Each group's title is a bold row of its own, so that it reads on one
	// line above its figures.
	var rows [][]string
	bold := map[int]bool{}
	for _, g := range figures.Candidate(c, r) {
		bold[len(rows)] = true
		rows = append(rows, []string{g.Title, "", ""})
		for _, row := range g.Rows {
			rows = append(rows, []string{row.Label, rowValue(row, b.Currency), row.Note})
		}
	}
	p.table(table{cols: []column{{"figure", 3.8, "L"}, {"value", 2.1, "L"}, {"note", 4.1, "L"}}, rows: rows, bold: bold, pt: smallPt})
	var more []string
	if rating := p.cellRatings(d, c.CellID); rating != "" {
		more = append(more, "The cell's current ratings, against the per-cell currents above: "+rating+".")
	}
	if c.Thermal == nil {
		more = append(more, "ESR heating not checked: the cell gives no thermal resistance.")
	}
	if c.Life == nil {
		more = append(more, "Life not checked: the cell gives no rated life.")
	}
	more = append(more, "The price, mass and volume are the cells'; the bill of quantities adds the other parts.")
	p.f.Ln(1)
	p.para(strings.Join(more, " "), "", smallPt, smallLine)
}

// rowValue is a row's value with its unit; a price (a number with no
// unit, figures.Row) takes the design's currency after it.
func rowValue(row figures.Row, currency string) string {
	if row.HasNum && row.Base == "" && currency != "" {
		return row.Text() + " " + currency
	}
	return row.Text()
}

// cellRatings gives the cell's current ratings for comparison.
func (p *pdf) cellRatings(d *sizing.Design, id string) string {
	cell := cellByID(d, id)
	if cell == nil || (cell.MaxCurrentA == nil && cell.PeakCurrentA == nil) {
		return ""
	}
	return "peak " + optQuantity(cell.PeakCurrentA, "A") + ", continuous " + optQuantity(cell.MaxCurrentA, "A")
}

// candidates writes every candidate in rank order.
func (p *pdf) candidates(r *sizing.Report) {
	var rows [][]string
	for _, c := range r.Candidates {
		feasible := "no"
		if c.Feasible {
			feasible = "yes"
		}
		runtime := none
		if c.RuntimeS != nil {
			runtime = figures.Estimated(figures.Number(*c.RuntimeS, sigFigs), c.RuntimeEstimated)
		}
		price := none
		if c.TotalPrice != nil {
			price = money(*c.TotalPrice, "")
		}
		mass := none
		if c.MassKg != nil {
			mass = figures.Number(*c.MassKg, sigFigs)
		}
		id := c.CellID
		if r.Recommended != nil && *r.Recommended == c.CellID {
			id += " (recommended)"
		}
		bank := none
		if c.Series > 0 {
			bank = figures.Arrangement(c.Series, c.Parallel, 0)
		}
		rows = append(rows, []string{
			id, feasible, bank, strconv.Itoa(c.Cells), runtime, figures.Number(c.MinTerminalV, sigFigs),
			figures.Number(c.UsableEnergyJ/1e3, sigFigs), figures.Number(c.PeakCurrentA, sigFigs), price, mass,
			strings.TrimSpace(limitOrReason(c)),
		})
	}
	priceHead := "cells' price"
	if p.currency != "" {
		priceHead += " (" + p.currency + ")"
	}
	p.table(table{cols: []column{
		{"cell", 2.4, "L"}, {"feasible", 1.1, "L"}, {"bank", 1.6, "L"}, {"cells", 0.7, "R"}, {"runtime (s)", 1.1, "R"},
		{"lowest terminal (V)", 1.2, "R"}, {"usable energy (kJ)", 1.1, "R"}, {"peak current (A)", 1.0, "R"}, {priceHead, 1.2, "R"},
		{"mass (kg)", 1.0, "R"}, {"string count set by / reason", 3.0, "L"},
	}, rows: rows, pt: 7.5, heading: "Candidates (rank order: feasible first, best first)"})
}

func limitOrReason(c sizing.Candidate) string {
	if !c.Feasible {
		return c.Reason
	}
	return limitText(c.Limit)
}

// flags writes every flag of the candidate, most severe first, with its
// message and caution.
func (p *pdf) flags(c *sizing.Candidate) {
	f := p.f
	p.heading(fmt.Sprintf("Flags for %s (%d), most severe first", c.CellID, len(c.Flags)), 25)
	if len(c.Flags) == 0 {
		p.para("No flags.", "", bodyPt, lineMM)
		return
	}
	textW := p.body - 24
	for _, fl := range figures.SortedFlags(c.Flags) {
		// Keep a flag together: measure its height first.
		p.font("", smallPt)
		h := float64(len(p.lines(fl.Message, textW)))*smallLine + lineMM + 2
		if fl.Caution != "" {
			p.font("I", smallPt)
			h += float64(len(p.lines("Caution: "+fl.Caution, textW))) * smallLine
		}
		p.room(h)
		y := f.GetY()
		col := map[sizing.Severity]colour{sizing.Danger: red, sizing.Warning: orange, sizing.Info: blue}[fl.Severity]
		f.SetFillColor(col.r, col.g, col.b)
		f.SetTextColor(255, 255, 255)
		p.font("B", 7.5)
		f.SetXY(marginMM, y+0.3)
		f.CellFormat(20, lineMM-0.6, strings.ToUpper(string(fl.Severity)), "", 0, "C", true, 0, "")
		p.color(black)
		p.font("B", bodyPt)
		f.SetXY(marginMM+24, y)
		f.CellFormat(textW, lineMM, pdfText(fl.Code), "", 1, "L", false, 0, "")
		p.font("", smallPt)
		f.SetX(marginMM + 24)
		f.MultiCell(textW, smallLine, pdfText(fl.Message), "", "L", false)
		if fl.Caution != "" {
			p.font("I", smallPt)
			f.SetX(marginMM + 24)
			f.MultiCell(textW, smallLine, pdfText("Caution: "+fl.Caution), "", "L", false)
		}
		f.Ln(2)
	}
}

// boq writes the bill of quantities with its total.
func (p *pdf) boq(b *sizing.BOQ) {
	in := ""
	if b.Currency != "" {
		in = " (" + b.Currency + ")"
	}
	var rows [][]string
	for _, l := range b.Lines {
		up, ext := "not priced", ""
		if l.UnitPrice != nil {
			up = money(*l.UnitPrice, "")
		}
		if l.ExtendedPrice != nil {
			ext = money(*l.ExtendedPrice, "")
		}
		rows = append(rows, []string{l.Item, l.Description, figures.Number(l.Quantity, 9), l.Unit, up, ext})
	}
	total := "Total" + in
	rows = append(rows, []string{total, "sum of the priced lines", "", "", "", money(b.Total, "")})
	p.table(table{cols: []column{
		{"item", 1.9, "L"}, {"description", 5.2, "L"}, {"quantity", 1.0, "R"}, {"unit", 0.6, "L"},
		{"unit price" + in, 1.3, "R"}, {"extended" + in, 1.4, "R"},
	}, rows: rows, bold: map[int]bool{len(rows) - 1: true}, pt: smallPt, keepLast: 2, heading: "Bill of quantities"})
	p.f.Ln(1.5)
	note := "The total holds every line."
	if !b.Complete {
		note = "The total is incomplete: " + strings.TrimPrefix(completeness(b), "no: ") + "."
	}
	note += fmt.Sprintf(" Bank: %s of %s.", figures.Arrangement(b.Series, b.Parallel, 0), b.CellID)
	if b.CellMassKg != nil {
		note += " Cells' mass " + quantity(*b.CellMassKg, "kg") + "."
	}
	if b.CellVolumeL != nil {
		note += " Cells' volume " + quantity(*b.CellVolumeL, "L") + "."
	}
	bl := b.Bleeder
	note += fmt.Sprintf(" Service bleeder %s, %s rating (peak %s at the window top): the bank falls to %s in %s at the top of the capacitance tolerance, the slowest case",
		quantity(bl.ResistorOhm, "Ω"), figures.Number(bl.PowerW, 3)+" W", quantity(bl.PeakW, "W"), quantity(bl.TargetV, "V"), figures.Duration(bl.TimeS, sigFigs))
	if bl.TargetV > 2 {
		note += ", and to 2 V in " + figures.Duration(bl.TimeTo2VS, sigFigs)
	}
	note += "; prove it dead with a meter before work."
	p.para(note, "", smallPt, smallLine)
}

// safety writes the closing safety note in a box.
func (p *pdf) safety() {
	f := p.f
	p.f.Ln(sectionGap)
	p.font("", bodyPt)
	lines := p.lines(SafetyNote, p.body-4)
	h := float64(len(lines))*lineMM + 13
	p.room(h)
	y := f.GetY()
	f.SetDrawColor(red.r, red.g, red.b)
	f.SetLineWidth(0.5)
	f.Rect(marginMM, y, p.body, h, "D")
	f.SetLineWidth(0.2)
	f.SetDrawColor(0, 0, 0)
	f.SetXY(marginMM+2, y+2)
	p.font("B", 11)
	f.CellFormat(p.body-4, 6, "Safety: local codes and licensed practice decide", "", 1, "L", false, 0, "")
	p.font("", bodyPt)
	f.SetX(marginMM + 2)
	f.MultiCell(p.body-4, lineMM, pdfText(SafetyNote), "", "L", false)
	f.SetY(y + h)
}
