package main

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"
	"unicode/utf8"

	"capbank/sizing"
)

// sigFigs is the number of significant figures the text report shows.
const sigFigs = 4

// none stands for a figure the report does not have (a nil runtime, price
// or mass).
const none = "—"

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
		fmt.Fprintf(w, "Recommended: %s, %d s × %d p, %d cells\n", label, rec.Series, rec.Parallel, rec.Cells)
	} else {
		fmt.Fprintln(w, "Recommended: none; no candidate carries the load at worst case (see the reasons below)")
	}
	fmt.Fprintln(w, assumptions(r))
	fmt.Fprintln(w)
	writeTable(w, candidateTable(r.Candidates))
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
	for _, f := range bySeverity(rec.Flags) {
		flags.rows = append(flags.rows, []string{"  " + string(f.Severity), f.Code, f.Message})
		if f.Caution != "" {
			flags.rows = append(flags.rows, []string{"", "", "Caution: " + f.Caution})
		}
	}
	writeTable(w, flags)
}

// bySeverity orders flags danger first, then warning, then info, keeping
// sizing's order within a severity.
func bySeverity(flags []sizing.Flag) []sizing.Flag {
	rank := map[sizing.Severity]int{sizing.Danger: 0, sizing.Warning: 1, sizing.Info: 2}
	sorted := slices.Clone(flags)
	slices.SortStableFunc(sorted, func(a, b sizing.Flag) int { return rank[a.Severity] - rank[b.Severity] })
	return sorted
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
		formatSI(r.MaxV, "V"), formatSI(r.MinV, "V"),
		formatSig(r.EOLCapacitanceFactor, sigFigs), formatSig(r.EOLESRFactor, sigFigs))
	if r.ColdC != nil {
		fmt.Fprintf(&b, ", cold %s °C", formatSig(*r.ColdC, sigFigs))
	}
	fmt.Fprintf(&b, "; sizing pass %s s", formatSig(r.PassDurationS, sigFigs))
	if r.Repeat > 1 {
		fmt.Fprintf(&b, " (%d × %s s)", r.Repeat, formatSig(r.ProfileDurationS, sigFigs))
	}
	if r.RankBy != "" {
		fmt.Fprintf(&b, "; ranked by %s", r.RankBy)
	}
	return b.String()
}

// table is rows of cells, the first row the header; right marks the
// columns (numbers) aligned to the right.
type table struct {
	rows  [][]string
	right []bool
}

func candidateTable(cs []sizing.Candidate) table {
	energy := make([]float64, len(cs))
	peak := make([]float64, len(cs))
	rms := make([]float64, len(cs))
	for i, c := range cs {
		energy[i], peak[i], rms[i] = c.UsableEnergyJ, c.PeakCurrentA, c.RMSCurrentA
	}
	eScale, eUnit := columnPrefix(energy, "J")
	pScale, pUnit := columnPrefix(peak, "A")
	rScale, rUnit := columnPrefix(rms, "A")

	t := table{
		right: []bool{false, false, true, true, true, true, true, true, true, true, true, true, false},
		rows: [][]string{{
			"cell", "feasible", "series", "parallel", "cells", "runtime (s)", "min terminal (V)",
			"usable (" + eUnit + ")", "peak I (" + pUnit + ")", "rms I (" + rUnit + ")",
			"price", "mass (kg)", "reason",
		}},
	}
	for _, c := range cs {
		feasible := "no"
		if c.Feasible {
			feasible = "yes"
		}
		runtime := none
		if c.RuntimeS != nil {
			runtime = formatSig(*c.RuntimeS, sigFigs)
			if c.RuntimeEstimated {
				runtime = "≈" + runtime
			}
		}
		price := none
		if c.TotalPrice != nil {
			price = strconv.FormatFloat(*c.TotalPrice, 'f', 2, 64)
		}
		mass := none
		if c.MassKg != nil {
			mass = formatSig(*c.MassKg, sigFigs)
		}
		t.rows = append(t.rows, []string{
			c.CellID, feasible, strconv.Itoa(c.Series), strconv.Itoa(c.Parallel), strconv.Itoa(c.Cells),
			runtime, formatSig(c.MinTerminalV, sigFigs),
			formatSig(c.UsableEnergyJ/eScale, sigFigs),
			formatSig(c.PeakCurrentA/pScale, sigFigs),
			formatSig(c.RMSCurrentA/rScale, sigFigs),
			price, mass, c.Reason,
		})
	}
	return t
}

// safetyTable is one row per candidate with its thermal, spread,
// balancing and life figures.
func safetyTable(cs []sizing.Candidate) table {
	t := table{
		right: []bool{false, true, true, true, true, false, true, true, true, true},
		rows: [][]string{{
			"cell", "hot spot (°C)", "peak rise (K)", "loss/cell (W)", "spread cell (V)",
			"balancing", "standing loss (W)", "shelf hold (h)", "static cell (V)", "life (years)",
		}},
	}
	opt := func(p *float64) string {
		if p == nil {
			return none
		}
		return formatSig(*p, sigFigs)
	}
	for _, c := range cs {
		hot, rise, loss := none, none, none
		if th := c.Thermal; th != nil {
			hot = formatSig(th.HotSpotC, 3)
			r := th.PeakRiseK
			if th.DutyPeakRiseK != nil {
				r = max(r, *th.DutyPeakRiseK)
			}
			rise = formatSig(r, 3)
			loss = formatSig(th.CellLossW, 3)
		}
		spread := none
		if c.Spread != nil {
			spread = formatSig(c.Spread.WorstCellV, sigFigs)
		}
		bal, standing, shelf, static := none, none, none, none
		if b := c.Balancing; b != nil {
			bal = b.Kind
			if b.ResistorOhm != nil {
				bal += " " + formatSI(*b.ResistorOhm, "Ω")
				if b.ResistorPowerW != nil {
					bal += " " + formatSig(*b.ResistorPowerW, 3) + " W"
				}
				bal += " " + b.Series
			}
			if b.QuiescentA != nil {
				bal += " " + formatSI(*b.QuiescentA, "A")
			}
			if b.Count > 0 {
				bal += fmt.Sprintf(" ×%d", b.Count)
				standing = formatSig(b.LossW*float64(c.Parallel), 3)
			}
			shelf = opt(b.ShelfHoldH)
			static = opt(b.WorstStaticCellV)
		}
		life := none
		if c.Life != nil {
			life = formatSig(c.Life.ExpectedYears, 3)
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

// formatSig formats x with n significant figures in plain decimal notation
// (1234567 with 4 gives "1235000", 0.0012345 gives "0.001235"), without
// trailing zeros after the decimal point.
func formatSig(x float64, n int) string {
	switch {
	case math.IsNaN(x):
		return "NaN"
	case math.IsInf(x, 1):
		return "+Inf"
	case math.IsInf(x, -1):
		return "-Inf"
	case x == 0:
		return "0"
	}
	rounded, exp := roundSig(x, n)
	s := strconv.FormatFloat(rounded, 'f', max(0, n-1-exp), 64)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return s
}

// roundSig rounds x to n significant figures and returns it with its
// decimal exponent after rounding (999.96 to 4 figures is 1000, exponent 3).
func roundSig(x float64, n int) (float64, int) {
	e := strconv.FormatFloat(x, 'e', n-1, 64)
	rounded, _ := strconv.ParseFloat(e, 64)
	_, exp, _ := strings.Cut(e, "e")
	p, _ := strconv.Atoi(exp)
	return rounded, p
}

var siPrefixes = map[int]string{
	-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T", 15: "P",
}

// siPrefix chooses the SI prefix for x shown to n significant figures: the
// power of 1000 that puts it in [1, 1000). It returns the divisor and the
// prefix; 0, NaN and ±Inf take no prefix.
func siPrefix(x float64, n int) (float64, string) {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return 1, ""
	}
	_, exp := roundSig(x, n)
	e3 := exp - ((exp%3)+3)%3 // round down to a multiple of 3, also for negative exponents
	e3 = min(max(e3, -15), 15)
	return math.Pow10(e3), siPrefixes[e3]
}

// formatSI formats x in unit with an SI prefix and sigFigs significant
// figures: 120000 J is "120 kJ", 0.0072 Ω is "7.2 mΩ".
func formatSI(x float64, unit string) string {
	scale, prefix := siPrefix(x, sigFigs)
	return formatSig(x/scale, sigFigs) + " " + prefix + unit
}

// columnPrefix chooses one SI prefix for a column of figures, from the
// largest magnitude, so that a column reads in one unit.
func columnPrefix(xs []float64, unit string) (float64, string) {
	largest := 0.0
	for _, x := range xs {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			largest = max(largest, math.Abs(x))
		}
	}
	scale, prefix := siPrefix(largest, sigFigs)
	return scale, prefix + unit
}
