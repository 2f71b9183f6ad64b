package web

import (
	"capbank/web/form"
	"cmp"
	"context"
	"errors"
	"fmt"
	"math"
	"net/http"
	"net/url"
	"slices"
	"strings"

	"github.com/labstack/echo/v4"

	"capbank/components"
	"capbank/components/figures"
	"capbank/sizing"
	"capbank/web/fault"
	"capbank/web/store"
)

// Compare limits: fewer than two is no comparison, more than eight no
// longer fits a page side by side.
const (
	minCompare = 2
	maxCompare = 8
)

// getCompare is GET /compare: the cells (cell=ID, 2 to 8) side by side for
// the design a share token d carries (the example design without one);
// without cell parameters, the design's own cells.
func (s *Server) getCompare(c echo.Context) error {
	d, err := s.compareDesign(c)
	if err != nil {
		return err
	}
	token := c.QueryParam("d")
	p := components.CompareProps{
		Shell:  s.shell("Compare cells", "Candidate cells side by side for one design", "compare"),
		Design: cmp.Or(d.Name, "the unnamed design"), Token: token, MessageID: "msg-cell", DesignHref: "/",
	}
	if token != "" {
		p.DesignHref = "/?d=" + url.QueryEscape(token)
	}
	cells, status := s.compareCells(c.Request().Context(), d, c.QueryParams()["cell"], &p.Message)
	if p.Picks, err = s.comparePicks(c.Request().Context(), cells); err != nil {
		return err
	}
	if cells != nil {
		if status, err = s.sizeCompare(c, d, cells, &p); err != nil {
			return err
		}
	}
	return s.render(c, status, components.ComparePage(p))
}

// compareDesign is the design of a comparison: the one a share token d
// carries, else the example design.
func (s *Server) compareDesign(c echo.Context) (*sizing.Design, error) {
	if c.QueryParam("d") != "" {
		d, _, err := s.designFrom(c, fromQueryToken)
		return d, err
	}
	return exampleForm().Decode(s.lookup(c)).Design, nil
}

// compareCells chooses the cells to compare: the library cells ids names,
// or without ids the design's own typed cells (the first maxCompare). A
// choice that cannot be compared is nil cells, with why in msg and the
// status to answer with.
func (s *Server) compareCells(ctx context.Context, d *sizing.Design, ids []string, msg *string) ([]sizing.Cell, int) {
	var cells []sizing.Cell
	if len(ids) == 0 {
		for _, cell := range d.Cells {
			if !cell.IsReference() {
				cells = append(cells, cell)
			}
		}
		if len(cells) > maxCompare {
			cells = cells[:maxCompare]
			*msg = fmt.Sprintf("The design has %d cells; the first %d are compared. Pick the ones you want below.", len(d.Cells), maxCompare)
		}
	} else {
		var unknown []string
		seen := map[string]bool{}
		for _, id := range ids {
			if seen[id] {
				continue
			}
			seen[id] = true
			rec, err := s.libraryCell(ctx, id)
			if err != nil {
				unknown = append(unknown, id)
				continue
			}
			cells = append(cells, rec.Cell)
		}
		if len(unknown) > 0 {
			*msg = fmt.Sprintf("Not in the library: %s.", strings.Join(unknown, ", "))
			return nil, http.StatusUnprocessableEntity
		}
	}
	switch {
	case len(cells) < minCompare:
		*msg = fmt.Sprintf("Pick at least %d cells to compare (%d picked).", minCompare, len(cells))
		if len(ids) > 0 {
			return nil, http.StatusUnprocessableEntity
		}
		return nil, http.StatusOK
	case len(cells) > maxCompare:
		*msg = fmt.Sprintf("Pick at most %d cells to compare (%d picked): more do not fit side by side.", maxCompare, len(cells))
		return nil, http.StatusUnprocessableEntity
	}
	return cells, http.StatusOK
}

// comparePicks is the library as a pick list, the compared cells ticked.
func (s *Server) comparePicks(ctx context.Context, cells []sizing.Cell) ([]components.CellPickProps, error) {
	recs, err := s.libraryCells(ctx, store.CellFilter{})
	if err != nil {
		return nil, err
	}
	picks := make([]components.CellPickProps, 0, len(recs))
	for _, r := range recs {
		picked := slices.ContainsFunc(cells, func(c sizing.Cell) bool { return c.ID == r.Cell.ID })
		picks = append(picks, cellPick(r.Cell, picked, ""))
	}
	return picks, nil
}

// withoutLots is d with the lot analysis turned off, for a view that does
// not show it (the comparison, the saved designs' summaries): it would
// cost tens of milliseconds a design for nothing.
func withoutLots(d sizing.Design) *sizing.Design {
	st := sizing.Statistics{}
	if d.Statistics != nil {
		st = *d.Statistics
	}
	st.Candidates = "none"
	d.Statistics = &st
	return &d
}

// sizeCompare sizes d with cells under the compute deadline and fills the
// comparison; a design that does not size with them is a message (422),
// a deadline or a busy server the error itself.
func (s *Server) sizeCompare(c echo.Context, d *sizing.Design, cells []sizing.Cell, p *components.CompareProps) (int, error) {
	dd := withoutLots(*d)
	dd.Cells = cells
	rep, err := compute(s, c, func(ctx context.Context) (*sizing.Report, error) { return sizing.SizeContext(ctx, dd) })
	if fe := fault.As(err); (fe != nil && fe.Code == fault.Unavailable) || errors.Is(err, errClientGone) {
		return 0, err
	}
	if err != nil {
		p.Message = "The design could not be sized with these cells: " + form.OneLine(err)
		return http.StatusUnprocessableEntity, nil
	}
	p.Summary = designSummary(rep, len(dd.Load.StepList()))
	fillCompare(p, dd, rep)
	return http.StatusOK, nil
}

// fillCompare lays out the report's candidates side by side.
func fillCompare(p *components.CompareProps, d *sizing.Design, r *sizing.Report) {
	byID := map[string]*sizing.Candidate{}
	for i := range r.Candidates {
		byID[r.Candidates[i].CellID] = &r.Candidates[i]
	}
	cands := make([]*sizing.Candidate, len(d.Cells))
	for i, cell := range d.Cells {
		cands[i] = byID[cell.ID]
		col := components.CompareColumn{ID: cell.ID, Name: cell.Name, Href: libraryPath(cell.ID)}
		if cands[i] != nil {
			col.Feasible, col.Reason = cands[i].Feasible, cands[i].Reason
		}
		p.Columns = append(p.Columns, col)
	}
	feasible := func(i int) bool { return cands[i] != nil && cands[i].Feasible }

	// bankRow is a figure of the feasible banks; an infeasible one reads
	// "not feasible" in the first bank row and "—" in the others.
	bankRow := func(label, better string, val func(*sizing.Candidate) (float64, bool), text rowText) components.CompareFigureRow {
		vals := make([]*float64, len(cands))
		texts := make([]string, len(cands))
		for i, cd := range cands {
			texts[i] = "—"
			if !feasible(i) {
				continue
			}
			if v, ok := val(cd); ok {
				vals[i] = &v
			}
		}
		write := text(vals)
		for i, v := range vals {
			if v != nil {
				texts[i] = write(*v)
			}
		}
		return figureRow(label, better, vals, texts)
	}
	cellRow := func(label, better string, val func(sizing.Cell) *float64, text rowText, none string) components.CompareFigureRow {
		vals := make([]*float64, len(d.Cells))
		texts := make([]string, len(d.Cells))
		for i, cell := range d.Cells {
			texts[i] = none
			vals[i] = val(cell)
		}
		write := text(vals)
		for i, v := range vals {
			if v != nil {
				texts[i] = write(*v)
			}
		}
		return figureRow(label, better, vals, texts)
	}
	ptr := func(v *float64) (float64, bool) {
		if v == nil {
			return 0, false
		}
		return *v, true
	}
	// q writes a quantity row with one SI prefix for the whole row
	// (figures.Column), so the banks read side by side: 750 µΩ beside
	// 1.7 mΩ reads 0.75 mΩ.
	q := func(unit string, sig int) rowText {
		return func(vals []*float64) func(float64) string {
			var xs []float64
			for _, v := range vals {
				if v != nil {
					xs = append(xs, *v)
				}
			}
			scale, prefixed := figures.Column(xs, unit, sig)
			return func(v float64) string { return figures.Number(v/scale, sig) + "\u00a0" + prefixed }
		}
	}
	// money writes a price with the design's currency (figures.Price).
	money := each(func(v float64) string { return figures.Price(&v, r.Currency) })
	num := func(unit string) rowText {
		return each(func(v float64) string { return figures.Number(v, 3) + "\u00a0" + unit })
	}

	bankRows := []components.CompareFigureRow{
		func() components.CompareFigureRow {
			row := components.CompareFigureRow{Label: "Arrangement"}
			for i, cd := range cands {
				t := "not feasible"
				if feasible(i) {
					t = figures.BankText(*cd)
				} else if cd != nil && cd.Reason != "" {
					t = "not feasible: " + cd.Reason
				}
				row.Cells = append(row.Cells, components.CompareFigure{Text: t})
			}
			return row
		}(),
		bankRow("Cells", "fewer", func(c *sizing.Candidate) (float64, bool) { return float64(c.Cells), true }, each(func(v float64) string { return figures.Number(v, 6) })),
		bankRow("Mass", "lower", func(c *sizing.Candidate) (float64, bool) { return ptr(c.MassKg) }, each(func(v float64) string { return figures.SI(v, "kg", 3) })),
		bankRow("Volume", "lower", func(c *sizing.Candidate) (float64, bool) { return ptr(c.VolumeL) }, num("L")),
		bankRow("Price", "lower", func(c *sizing.Candidate) (float64, bool) { return ptr(c.TotalPrice) }, money),
		bankRow("Runtime at worst case", "longer", func(c *sizing.Candidate) (float64, bool) { return ptr(c.RuntimeS) }, each(func(v float64) string { return figures.Duration(v, 3) })),
		bankRow("Usable energy at worst case", "higher", func(c *sizing.Candidate) (float64, bool) { return c.UsableEnergyJ / 3600, true }, q("Wh", 4)),
		bankRow("Price per usable Wh", "lower", func(c *sizing.Candidate) (float64, bool) { return ptr(sizing.BankPricePerUsableWh(c)) }, money),
		bankRow("ESR loss over the pass", "lower", func(c *sizing.Candidate) (float64, bool) { return c.ESRLossJ, true }, q("J", 4)),
		bankRow("Cell temperature rise (peak)", "lower", func(c *sizing.Candidate) (float64, bool) {
			if c.Thermal == nil {
				return 0, false
			}
			return c.Thermal.PeakRiseK, true
		}, each(figures.Kelvin)),
		bankRow("Lowest terminal voltage", "higher", func(c *sizing.Candidate) (float64, bool) { return c.MinTerminalV, true }, q("V", 4)),
		lifeRow(cands, feasible),
	}
	flags := components.CompareFigureRow{Label: "Findings"}
	for _, cd := range cands {
		t := "—"
		if cd != nil {
			t = components.FlagCounts(cd.Flags)
		}
		flags.Cells = append(flags.Cells, components.CompareFigure{Text: t})
	}
	bankRows = append(bankRows, flags)

	merits := make(map[string]sizing.CellMerit, len(d.Cells))
	for _, cell := range d.Cells {
		merits[cell.ID] = sizing.Merit(cell)
	}
	m := func(f func(sizing.CellMerit) *float64) func(sizing.Cell) *float64 {
		return func(c sizing.Cell) *float64 { return f(merits[c.ID]) }
	}
	val := func(v float64) *float64 { return &v }
	cellRows := []components.CompareFigureRow{
		cellRow("Rated voltage", "", func(c sizing.Cell) *float64 { return val(c.RatedV) }, q("V", 3), "—"),
		cellRow("Capacitance", "", func(c sizing.Cell) *float64 { return val(c.CapacitanceF) }, q("F", 4), "—"),
		cellRow("ESR (DC)", "lower", func(c sizing.Cell) *float64 { return val(c.ESROhm) }, q("Ω", 3), "—"),
		cellRow("Energy per mass", "higher", m(func(x sizing.CellMerit) *float64 { return x.EnergyWhPerKg }), num("Wh/kg"), "no mass given"),
		cellRow("Energy per volume", "higher", m(func(x sizing.CellMerit) *float64 { return x.EnergyWhPerL }), num("Wh/L"), "no volume given"),
		cellRow("Matched-load power per mass V²/(4·ESR·m)", "higher", m(func(x sizing.CellMerit) *float64 { return x.MatchedPowerWPerKg }), num("W/kg"), "no mass given"),
		cellRow("Time constant ESR·C", "", m(func(x sizing.CellMerit) *float64 { return val(x.TimeConstantS) }), q("s", 3), "—"),
		cellRow("Price per stored Wh", "lower", m(func(x sizing.CellMerit) *float64 { return x.PricePerWh }), money, "no price given"),
	}
	p.Groups = []components.CompareGroup{
		{Title: "The bank for this design", Rows: bankRows},
		{Title: "The cell on its own (rated figures)", Rows: cellRows},
	}

	var pts []components.ScatterPoint
	for i, cd := range cands {
		if !feasible(i) {
			continue
		}
		x := sizing.BankMatchedPowerW(cd, d.Window.MaxV)
		y := cd.UsableEnergyJ / 3600
		if x > 0 && y > 0 && !math.IsInf(x, 0) {
			pts = append(pts, components.ScatterPoint{Label: cd.CellID, X: x, Y: y})
		}
	}
	p.Chart = components.LogLogChart("energy-power", "Usable energy against power capability, each feasible bank",
		"Log-log chart: usable energy at end of life (Wh) against the bank's matched-load power at the window top, max_v²/(4·ESR) at worst-case ESR (W).",
		"Matched-load power of the bank (log scale)", "Usable energy (log scale)", pts, "W", "Wh")
}

// rowText makes the writer of a row's figures from all of them (to give
// the row one unit); each is a writer that needs none of them.
type rowText func(vals []*float64) func(float64) string

func each(f func(float64) string) rowText {
	return func([]*float64) func(float64) string { return f }
}

// figureRow builds a row and marks its best value: the lowest or the
// highest of those given, by better ("lower", "fewer", "higher",
// "longer"; "" marks none). Ties are all marked; a row with one value
// marks none, since there is nothing to beat.
func figureRow(label, better string, vals []*float64, texts []string) components.CompareFigureRow {
	row := components.CompareFigureRow{Label: label, Better: better}
	best := math.NaN()
	n := 0
	for _, v := range vals {
		if v == nil {
			continue
		}
		n++
		switch {
		case math.IsNaN(best):
			best = *v
		case (better == "lower" || better == "fewer") && *v < best:
			best = *v
		case (better == "higher" || better == "longer") && *v > best:
			best = *v
		}
	}
	for i, t := range texts {
		cell := components.CompareFigure{Text: t}
		if better != "" && n > 1 && vals[i] != nil && *vals[i] == best {
			cell.Best = true
		}
		row.Cells = append(row.Cells, cell)
	}
	return row
}

// lifeRow is the expected life of each feasible bank. A life past the
// calendar ceiling reads "≥ 15 years" and is not a figure to rank by: where
// any bank reaches the ceiling, none is marked best.
func lifeRow(cands []*sizing.Candidate, feasible func(int) bool) components.CompareFigureRow {
	vals := make([]*float64, len(cands))
	texts := make([]string, len(cands))
	better := "longer"
	for i, cd := range cands {
		texts[i] = "—"
		if !feasible(i) || cd.Life == nil {
			continue
		}
		texts[i] = figures.LifeText(cd.Life)
		if cd.Life.AtLeast {
			better = ""
			continue
		}
		v := cd.Life.ExpectedYears
		vals[i] = &v
	}
	return figureRow("Expected life", better, vals, texts)
}
