package main

import (
	"bytes"
	"fmt"
	"io"
	"strconv"
	"strings"
	"text/tabwriter"
	"unicode/utf8"

	"capbank/components/figures"
	"capbank/sizing"
)

// sigFigs is the number of significant figures the text report shows.
const sigFigs = 4

// none stands for a figure the report does not have (a nil runtime, price
// or mass).
const none = figures.None

// writeText writes the report for a terminal: a headline with the
// recommended bank, the assumptions applied, one table row per candidate,
// the flags of the recommended candidate, most severe first, each with its
// caution, and last a table of every candidate's heat, balancing and life
// figures.
func writeText(w io.Writer, r *sizing.Report) {
	name := r.Design
	if name == "" {
		name = "(unnamed design)"
	}
	fmt.Fprintf(w, "Design: %s\n", name)
	rec := recommended(r)
	if rec != nil {
		label := rec.CellID
		if rec.CellName != "" {
			label += " (" + rec.CellName + ")"
		}
		fmt.Fprintf(w, "Recommended: %s, %s\n", label, figures.ASCII(figures.BankText(*rec)))
	} else {
		fmt.Fprintln(w, "Recommended: none; no candidate carries the load at worst case (see the reasons below)")
	}
	fmt.Fprintln(w, assumptions(r))
	fmt.Fprintln(w)
	writeTable(w, candidateTable(r.Candidates, r.Currency))
	defer func() {
		fmt.Fprintln(w)
		fmt.Fprintln(w, "Heat, balancing and life (hottest cell at worst case; balancing per string):")
		writeTable(w, safetyTable(r.Candidates))
	}()
	if rec == nil {
		return
	}
	fmt.Fprintln(w)
	if len(rec.Flags) == 0 {
		fmt.Fprintf(w, "Flags for %s: none\n", rec.CellID)
		return
	}
	fmt.Fprintf(w, "Flags for %s:\n", rec.CellID)
	flags := table{right: []bool{false, false, false}}
	for _, f := range figures.SortedFlags(rec.Flags) {
		flags.rows = append(flags.rows, []string{"  " + string(f.Severity), f.Code, f.Message})
		if f.Caution != "" {
			flags.rows = append(flags.rows, []string{"", "", "Caution: " + f.Caution})
		}
	}
	writeTable(w, flags)
}

func recommended(r *sizing.Report) *sizing.Candidate {
	if r.Recommended == nil {
		return nil
	}
	for i := range r.Candidates {
		if r.Candidates[i].CellID == *r.Recommended {
			return &r.Candidates[i]
		}
	}
	return nil
}

// assumptions is the one line that says what the figures were worked out
// for: the window, the worst case and the sizing pass.
func assumptions(r *sizing.Report) string {
	var b strings.Builder
	fmt.Fprintf(&b, "Window %s → %s; worst case: capacitance × %s, ESR × %s",
		quantity(r.MaxV, "V"), quantity(r.MinV, "V"),
		number(r.EOLCapacitanceFactor, sigFigs), number(r.EOLESRFactor, sigFigs))
	if r.ColdC != nil {
		fmt.Fprintf(&b, ", cold %s °C", number(*r.ColdC, sigFigs))
	}
	fmt.Fprintf(&b, "; sizing pass %s s", number(r.PassDurationS, sigFigs))
	if r.Repeat > 1 {
		fmt.Fprintf(&b, " (%d × %s s)", r.Repeat, number(r.ProfileDurationS, sigFigs))
	}
	if r.PeriodS != nil {
		fmt.Fprintf(&b, ", one event every %s s", number(*r.PeriodS, sigFigs))
	}
	if r.RankBy != "" {
		fmt.Fprintf(&b, "; ranked by %s", r.RankBy)
	}
	// Each cell's worst case applies its own tolerance and cold factors:
	// the recommended one's in words.
	for _, c := range r.Candidates {
		if r.Recommended != nil && c.CellID == *r.Recommended && c.WorstCase != "" {
			fmt.Fprintf(&b, "\nWorst case of %s: %s", c.CellID, c.WorstCase)
		}
	}
	for _, c := range r.Candidates {
		if st := c.Statistics; st != nil {
			b.WriteString("\n" + lotLine(c.CellID, st))
		}
	}
	if c := recommended(r); c != nil {
		if l := chargeLine(c); l != "" {
			b.WriteString("\n" + l)
		}
	}
	return b.String()
}

// chargeLine is the recommended bank's charging and connection in a line:
// the recharge and first charge with a charger, the inrush and the
// precharge resistor; empty for a design that gives no charger,
// inrush limit or wiring.
func chargeLine(c *sizing.Candidate) string {
	if c.RechargeS == nil && c.FirstChargeS == nil && c.Precharge == nil && c.WiringLossJ == 0 {
		return ""
	}
	s := fmt.Sprintf("Charging and connection of %s: ", c.CellID)
	if c.RechargeS != nil {
		s += fmt.Sprintf("recharge %s s, ", number(*c.RechargeS, sigFigs))
	}
	if c.FirstChargeS != nil {
		s += fmt.Sprintf("first charge from empty %s s, ", number(*c.FirstChargeS, sigFigs))
	}
	s += "inrush " + quantity(c.InrushCurrentA, "A")
	if pc := c.Precharge; pc != nil && pc.ResistanceOhm > 0 {
		s += fmt.Sprintf("; precharge resistor %s (E24), peak %s, pulse energy %s, 99 %% in %s s",
			quantity(pc.ResistanceOhm, "Ω"), quantity(pc.PeakPowerW, "W"), quantity(pc.EnergyJ, "J"), number(pc.TimeTo99S, sigFigs))
	}
	if c.WiringLossJ > 0 {
		s += fmt.Sprintf("; wiring loss over the pass %s", quantity(c.WiringLossJ, "J"))
	}
	return s
}

// lotLine is one candidate's lot analysis in a line: yield, strings for
// the target, runtime and the cell voltages one bank in a thousand reaches.
func lotLine(id string, st *sizing.LotStatistics) string {
	s := fmt.Sprintf("Banks of %s built from a lot (%s banks, seed %d): yield %s (target %s", id, figures.Count(st.Samples), st.Seed,
		figures.ASCII(figures.YieldText(st.Yield)), figures.ASCII(figures.YieldText(st.TargetYield)))
	if p := st.ParallelForTarget; p != nil {
		s += fmt.Sprintf(", reached with %d strings)", *p)
	} else {
		s += ", not searched or not within twice the strings)"
	}
	if p := st.RuntimeS.P01; p != nil {
		s += fmt.Sprintf("; runtime 1st percentile %s s", number(*p, sigFigs))
	}
	s += fmt.Sprintf("; highest cell on a first charge, 99.9th percentile %s V", number(st.FirstChargeMaxCellV.P999, 4))
	if v := st.StandbyMaxCellV; v != nil {
		s += fmt.Sprintf("; after a long hold %s V", number(*v, 4))
	}
	return s + fmt.Sprintf("; lowest cell in the pass, 0.1th percentile %s V", number(st.DischargeMinCellV.P001, 4))
}

// table is rows of cells, the first row the header; right marks the
// columns (numbers) aligned to the right.
type table struct {
	rows  [][]string
	right []bool
}

func candidateTable(cs []sizing.Candidate, currency string) table {
	priceHead := "price"
	if currency != "" {
		priceHead += " (" + currency + ")"
	}
	energy := make([]float64, len(cs))
	peak := make([]float64, len(cs))
	rms := make([]float64, len(cs))
	for i, c := range cs {
		energy[i], peak[i], rms[i] = c.UsableEnergyJ, c.PeakCurrentA, c.RMSCurrentA
	}
	eScale, eUnit := figures.Column(energy, "J", sigFigs)
	pScale, pUnit := figures.Column(peak, "A", sigFigs)
	rScale, rUnit := figures.Column(rms, "A", sigFigs)

	t := table{
		right: []bool{false, false, true, true, true, true, true, true, true, true, true, true, false},
		rows: [][]string{{
			"cell", "feasible", "in series", "strings", "cells", "runtime (s)", "lowest terminal (V)",
			"usable energy (" + eUnit + ")", "peak current (" + pUnit + ")", "RMS current (" + rUnit + ")",
			priceHead, "mass (kg)", "reason",
		}},
	}
	for _, c := range cs {
		feasible := "no"
		if c.Feasible {
			feasible = "yes"
		}
		runtime := none
		if c.RuntimeS != nil {
			runtime = figures.Estimated(number(*c.RuntimeS, sigFigs), c.RuntimeEstimated)
		}
		price := figures.ASCII(figures.Opt(c.TotalPrice, figures.Money))
		mass := none
		if c.MassKg != nil {
			mass = number(*c.MassKg, sigFigs)
		}
		t.rows = append(t.rows, []string{
			c.CellID, feasible, strconv.Itoa(c.Series), strconv.Itoa(c.Parallel), strconv.Itoa(c.Cells),
			runtime, number(c.MinTerminalV, sigFigs),
			number(c.UsableEnergyJ/eScale, sigFigs),
			number(c.PeakCurrentA/pScale, sigFigs),
			number(c.RMSCurrentA/rScale, sigFigs),
			price, mass, c.Reason,
		})
	}
	return t
}

// safetyTable is one row per candidate with its thermal, spread,
// balancing and life figures; the two columns in W take one SI prefix
// each, as the candidate table's columns do.
func safetyTable(cs []sizing.Candidate) table {
	var losses, standings []float64
	for _, c := range cs {
		if c.Thermal != nil {
			losses = append(losses, c.Thermal.CellLossW)
		}
		if b := c.Balancing; b != nil && b.Count > 0 {
			standings = append(standings, b.BankLossW)
		}
	}
	lScale, lUnit := figures.Column(losses, "W", sigFigs)
	sScale, sUnit := figures.Column(standings, "W", sigFigs)
	t := table{
		right: []bool{false, true, true, true, true, false, true, true, true, true},
		rows: [][]string{{
			"cell", "hot spot (°C)", "peak rise (K)", "ESR loss/cell (" + lUnit + ")", "cell before balancing (V)",
			"balancing", "standing loss/bank (" + sUnit + ")", "shelf hold (h)", "cell after long hold (V)", "expected life (years)",
		}},
	}
	opt := func(p *float64) string {
		if p == nil {
			return none
		}
		return number(*p, sigFigs)
	}
	for _, c := range cs {
		hot, rise, loss := none, none, none
		if th := c.Thermal; th != nil {
			hot = number(th.HotSpotC, 3)
			r := th.PeakRiseK
			if th.DutyPeakRiseK != nil {
				r = max(r, *th.DutyPeakRiseK)
			}
			rise = number(r, 3)
			loss = number(th.CellLossW/lScale, 3)
		}
		spread := none
		if c.Spread != nil {
			spread = number(c.Spread.WorstCellV, sigFigs)
		}
		bal, standing, shelf, static := none, none, none, none
		if b := c.Balancing; b != nil {
			bal = b.Kind
			if b.ResistorOhm != nil {
				bal += " " + quantity(*b.ResistorOhm, "Ω")
				if b.ResistorPowerW != nil {
					bal += " " + number(*b.ResistorPowerW, 3) + " W"
				}
				bal += " " + b.Series
			}
			if b.QuiescentA != nil {
				bal += " " + quantity(*b.QuiescentA, "A")
			}
			if b.Count > 0 {
				bal += fmt.Sprintf(" ×%d/string", b.Count)
				standing = number(b.BankLossW/sScale, 3)
			}
			shelf = opt(b.ShelfHoldH)
			static = opt(b.WorstStaticCellV)
		}
		life := none
		if c.Life != nil {
			life = number(c.Life.ExpectedYears, 3)
			if c.Life.AtLeast {
				life = ">= " + life
			}
		}
		t.rows = append(t.rows, []string{c.CellID, hot, rise, loss, spread, bal, standing, shelf, static, life})
	}
	return t
}

// writeTable aligns the table with a tabwriter, padding the right-aligned
// columns first (tabwriter aligns every column one way), and drops the
// trailing blanks of each line.
func writeTable(w io.Writer, t table) {
	width := make([]int, len(t.right))
	for _, row := range t.rows {
		for i, cell := range row {
			width[i] = max(width[i], utf8.RuneCountInString(cell))
		}
	}
	var buf bytes.Buffer
	tw := tabwriter.NewWriter(&buf, 0, 0, 2, ' ', 0)
	for _, row := range t.rows {
		for i, cell := range row {
			if t.right[i] {
				cell = strings.Repeat(" ", width[i]-utf8.RuneCountInString(cell)) + cell
			}
			if i < len(row)-1 {
				cell += "\t"
			}
			fmt.Fprint(tw, cell)
		}
		fmt.Fprintln(tw)
	}
	tw.Flush()
	for line := range strings.Lines(buf.String()) {
		fmt.Fprintln(w, strings.TrimRight(line, " \n"))
	}
}

// number is figures.Number as a terminal shows it (an ASCII minus).
func number(x float64, n int) string {
	return figures.ASCII(figures.Number(x, n))
}

// quantity is figures.SI to sigFigs figures as a terminal shows it (a
// space before the unit, an ASCII minus): "117.6 kJ".
func quantity(x float64, unit string) string {
	return figures.ASCII(figures.SI(x, unit, sigFigs))
}
