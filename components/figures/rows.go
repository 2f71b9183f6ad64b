package figures

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"capbank/sizing"
)

// Row is one figure: what it is (Label), its value, its unit and a note
// (how it was judged, or the per-cell value). Value is the number as text
// ("117.6"), words ("15 in series × 5 strings, 75 cells") or None; Unit carries its
// prefix ("kJ") and is empty for words and plain counts.
//
// A row of a number also keeps it unrounded: Num in Base, the unit
// without prefix (117600 in J for 117.6 kJ, a time in s, a price in the
// design's currency: Unit and Base are the currency, empty when the design
// gives none), so that a spreadsheet holds a number cell rather than text. HasNum says whether it has one: words and
// None have none.
type Row struct {
	Label, Value, Unit, Note string

	Num    float64
	Base   string
	HasNum bool
}

// text is a row of words, with no number behind it.
func text(label, value, note string) Row { return Row{Label: label, Value: value, Note: note} }

// plain is a row of a number in unit, written by format (Fixed, Number).
func plain(label string, v float64, value, unit, note string) Row {
	return Row{Label: label, Value: value, Unit: unit, Note: note, Num: v, Base: unit, HasNum: finite(v)}
}

// Text is the value with its unit, joined by a no-break space, as a page
// shows it in one cell: "117.6 kJ".
func (r Row) Text() string { return join(r.Value, r.Unit) }

// Group is a titled block of rows.
type Group struct {
	Title string
	Rows  []Row
}

// quantity is a row of v in unit through SI.
func quantity(label string, v float64, unit string, sig int, note string) Row {
	n, u := siParts(v, unit, sig)
	return Row{Label: label, Value: n, Unit: u, Note: note, Num: v, Base: unit, HasNum: finite(v)}
}

// optQuantity is quantity for an optional figure: None when nil.
func optQuantity(label string, v *float64, unit string, sig int, note string) Row {
	if v == nil {
		return text(label, None, note)
	}
	return quantity(label, *v, unit, sig, note)
}

// duration is a row of a time through Duration, None when nil.
func duration(label string, s *float64, sig int, note string) Row {
	if s == nil {
		return text(label, None, note)
	}
	n, u := durationParts(*s, sig)
	return Row{Label: label, Value: n, Unit: u, Note: note, Num: *s, Base: "s", HasNum: finite(*s)}
}

// Candidate lays a candidate bank out for reading: the bank, energy and
// runtime, current, heat, balancing, life, the safety figures and the
// price, mass and volume, each a titled group of rows. r is the report the
// candidate is of (its window and cold temperature). Values are formatted
// here; nothing is computed that the report does not hold.
func Candidate(c *sizing.Candidate, r *sizing.Report) []Group {
	bank := Group{Title: "Bank", Rows: []Row{
		text("Arrangement", BankText(*c), limitNote(c.Limit)),
		quantity("Cell voltage at the window top", c.CellV, "V", 4, "ceiling "+SI(c.CellCeilingV, "V", 4)),
		quantity("Capacitance", c.CapacitanceF, "F", 4, "worst case "+SI(c.WorstCapacitanceF, "F", 4)),
		quantity("ESR", c.ESROhm, "Ω", 3, "worst case "+SI(c.WorstESROhm, "Ω", 3)+coldNote(c.ColdESRFactor)),
		optQuantity("Leakage and balancing drain", c.LeakageOhm, "Ω", 3, "as one resistance across the bank"),
	}}
	if t := c.CeilingTempC; t != nil {
		bank.Rows[1].Note += " at " + SI(*t, "°C", 3) + ", the hottest cell (voltage derating)"
	}
	if m := c.Modules; m != nil {
		name := m.Name
		if name == "" {
			name = "module"
		}
		bank.Rows = slices.Insert(bank.Rows, 1, text("Modules", fmt.Sprintf("%d × %s (%d in series × %d in parallel): %d in series × %d strings",
			m.Count, name, m.Series, m.Parallel, m.InSeries, m.Strings), "whole modules"))
	}
	if c.WorstCase != "" {
		bank.Rows = slices.Insert(bank.Rows, 1, text("Worst case", c.WorstCase, "what the worst-case figures apply"))
	}
	energy := Group{Title: "Energy and runtime, worst case", Rows: []Row{
		quantity("Stored energy at the window top", c.StoredEnergyJ, "J", 4, SI(c.StoredEnergyJ/3600, "Wh", 3)+", beginning of life"),
		quantity("Usable energy in the window", c.UsableEnergyJ, "J", 4, SI(c.UsableEnergyJ/3600, "Wh", 3)),
		runtimeRow(c),
		quantity("Lowest terminal voltage", c.MinTerminalV, "V", 4, bottomNote(c, r)),
		quantity("Lowest cell voltage", c.MinCellV, "V", 4, "bank terminal ÷ "+strconv.Itoa(c.Series)+" in series"),
		quantity("Capacitor voltage at the end of the pass", c.EndCapacitorV, "V", 4, ""),
		quantity("Energy out of the bank terminals", c.BankEnergyJ, "J", 4, "over the sizing pass, before the converter"),
		quantity("Energy delivered to the load", c.LoadEnergyJ, "J", 4, "over the sizing pass, after the converter's efficiency"),
		quantity("Lost in the ESR", c.ESRLossJ, "J", 3, "the cells' own"),
		quantity("Lost in leakage and balancing", c.LeakageLossJ, "J", 3, ""),
	}}
	if c.WiringLossJ > 0 {
		energy.Rows = append(energy.Rows, quantity("Lost in the wiring", c.WiringLossJ, "J", 3, "links, string ends and bank resistance"))
	}
	if c.RejectedEnergyJ > 0 {
		energy.Rows = append(energy.Rows, quantity("Charge refused at the window top", c.RejectedEnergyJ, "J", 3, ""))
	}
	current := Group{Title: "Current, worst case", Rows: []Row{
		quantity("Peak current", c.PeakCurrentA, "A", 3, "per cell "+SI(c.CellPeakCurrentA, "A", 3)),
		quantity("RMS current", c.RMSCurrentA, "A", 3, "per cell "+SI(c.CellRMSCurrentA, "A", 3)+", "+rmsOver(c, r)),
	}}
	groups := []Group{bank, energy, current, connection(c)}
	if t := c.Thermal; t != nil {
		groups = append(groups, heat(t))
	}
	if c.Spread != nil || c.Balancing != nil {
		groups = append(groups, balancing(c.Spread, c.Balancing))
	}
	if st := c.Statistics; st != nil {
		groups = append(groups, Lot(st, c))
	}
	if l := c.Life; l != nil {
		g := Group{Title: "Life", Rows: []Row{lifeRow(l)}}
		if l.DesignYears != nil {
			g.Rows = append(g.Rows, plain("Required", *l.DesignYears, Number(*l.DesignYears, 3), "years", ""))
		}
		groups = append(groups, g)
	}
	h := c.Hazards
	groups = append(groups, Group{Title: "Safety figures", Rows: []Row{
		quantity("Bank voltage", h.MaxV, "V", 4, "at the window top"),
		quantity("Stored energy", h.StoredEnergyJ, "J", 4, ""),
		quantity("Short-circuit current", h.ShortCircuitCurrentA, "A", 3, "window top ÷ bank ESR at beginning of life"),
		quantity("Energy per cell", h.CellEnergyWh, "Wh", 3, "as transport rules count it"),
	}})
	return append(groups, Group{Title: "Price, mass and volume", Rows: []Row{
		price(c.TotalPrice, r.Currency),
		optQuantity("Mass", c.MassKg, "kg", 3, "cells only"),
		optQuantity("Volume", c.VolumeL, "L", 3, "cells only, no spacing"),
	}})
}

// Lot lays out the lot analysis of a candidate: the yield, the strings
// for the target, the percentiles and the lot model.
func Lot(st *sizing.LotStatistics, c *sizing.Candidate) Group {
	lots := Count(st.Samples) + " lots, seed " + strconv.FormatInt(st.Seed, 10)
	forTarget := text("Strings for the target yield", None, "not within "+strconv.Itoa(2*c.Parallel)+" strings, or not searched (see the notes)")
	if p := st.ParallelForTarget; p != nil {
		forTarget = plain("Strings for the target yield", float64(*p), strconv.Itoa(*p), "strings", "the fewest whose yield reaches "+YieldText(st.TargetYield))
	}
	g := Group{Title: "Banks built from a production lot", Rows: []Row{
		Row{Label: "Yield", Value: strings.TrimSuffix(YieldText(st.Yield), nbsp+"%"), Unit: "%",
			Note: "share of " + lots + " that carry the whole pass at end of life (standard error " + Number(100*st.YieldStdErr, 2) + nbsp + "%)",
			Num:  100 * st.Yield, Base: "%", HasNum: true},
		forTarget,
		duration("Runtime, 1st percentile", st.RuntimeS.P01, 3, "one lot in a hundred runs shorter"),
		duration("Runtime, median", st.RuntimeS.P50, 3, ""),
		quantity("Highest cell on a first charge, median", st.FirstChargeMaxCellV.P50, "V", 4, "from empty to the window top, before balancing acts"),
		quantity("Highest cell on a first charge, 99.9th percentile", st.FirstChargeMaxCellV.P999, "V", 4, "one bank in a thousand reaches this"),
		optQuantity("Highest cell after a long hold, 99.9th percentile", st.StandbyMaxCellV, "V", 4, "from the leakage spread, with the chosen balancing"),
		quantity("Lowest cell during the pass, 0.1th percentile", st.DischargeMinCellV.P001, "V", 4, "one bank in a thousand goes this low"),
		text("Lot model", LotModelText(st.Model), "standard deviations within a lot, % of nominal"),
	}}
	if len(st.Notes) > 0 {
		g.Rows = append(g.Rows, text("Notes", strings.Join(st.Notes, " "), "where the analysis kept to its work budget"))
	}
	return g
}

// YieldText is a share as a percentage with enough digits to tell 99.9 %
// from 99.99 %: "99.97 %".
func YieldText(y float64) string {
	if y >= 1 {
		return "100" + nbsp + "%"
	}
	d := 1
	for d < 4 && 100*(1-y) < math.Pow10(1-d) {
		d++
	}
	return Fixed(100*y, d) + nbsp + "%"
}

// LotModelText is the lot model in words.
func LotModelText(m sizing.LotModel) string {
	s := m.SpreadText()
	if len(m.Defaulted) > 0 {
		s += "; capbank's defaults where the cell gives none"
	}
	return s
}

// LifeText is the expected life as a table cell shows it: "8.2 years",
// or "≥ 15 years" where the rules of thumb pass the calendar ceiling.
func LifeText(l *sizing.Life) string { return lifeRow(l).Text() }

func lifeRow(l *sizing.Life) Row {
	if l.AtLeast {
		// A floor, not a figure: no number behind it, so nothing ranks by it.
		return text("Expected life", "≥"+nbsp+Number(l.CeilingYears, 3)+nbsp+"years",
			"the rules of thumb give more than the calendar ceiling; neither voltage nor temperature limits the life at "+Celsius(l.TemperatureC)+" and "+SI(l.CellV, "V", 3)+" per cell")
	}
	return plain("Expected life", l.ExpectedYears, Number(l.ExpectedYears, 3), "years", Number(l.ExpectedH, 3)+nbsp+"h at "+Celsius(l.TemperatureC)+" and "+SI(l.CellV, "V", 3)+" per cell")
}

// bottomNote says which window bottom the candidate was sized to.
func bottomNote(c *sizing.Candidate, r *sizing.Report) string {
	if c.MinV > r.MinV {
		return "window bottom " + SI(c.MinV, "V", 4) + ", raised by the cell's own floor from " + SI(r.MinV, "V", 4)
	}
	return "window bottom " + SI(r.MinV, "V", 4)
}

// rmsOver says what the RMS current is taken over.
func rmsOver(c *sizing.Candidate, r *sizing.Report) string {
	if r.PeriodS != nil {
		return "over the " + Duration(*r.PeriodS, 3) + " period between events"
	}
	return "over the pass, as if it repeated back to back (no period given)"
}

func runtimeRow(c *sizing.Candidate) Row {
	note := "not reached within the time followed"
	switch c.RuntimeEnd {
	case "voltage":
		note = "until the window bottom"
	case "power":
		note = "until the maximum-power point"
	case "input_current":
		note = "until the converter's input current limit"
	}
	if c.RuntimeEstimated {
		note += ", " + EstimatedNote
	}
	note += ", repeating the steps"
	if c.RuntimeS == nil {
		// Not rounded: 10⁷ s is 115.74 days, and "beyond 116 days" would
		// claim more than sizing followed.
		return Row{Label: "Runtime", Value: "beyond " + runtimeLimit, Unit: "s", Note: note}
	}
	n, u := durationParts(*c.RuntimeS, 3)
	return Row{Label: "Runtime", Value: Estimated(n, c.RuntimeEstimated), Unit: u, Note: note, Num: *c.RuntimeS, Base: "s", HasNum: true}
}

// runtimeLimit is sizing.RuntimeLimitS, in s, as the README states it
// (TestRuntimeLimit holds the two together).
const runtimeLimit = "10⁷"

// price is the cells' price row, in the design's currency.
func price(p *float64, currency string) Row {
	note := "cells only"
	if currency == "" {
		note += ", in the currency of the unit price"
	}
	if p == nil {
		return text("Price", None, note)
	}
	return Row{Label: "Price", Value: Money(*p), Unit: currency, Note: note, Num: *p, Base: currency, HasNum: finite(*p)}
}

// Price is an amount with the design's currency after it ("683.50 EUR",
// Money), None when there is none; the currency is left out when the
// design gives none.
func Price(v *float64, currency string) string {
	if v == nil || !finite(*v) {
		return None
	}
	return join(Money(*v), currency)
}

// Runtime is a candidate's worst-case runtime as the page states it: a
// duration to 3 figures, marked when estimated ("≈34.3 s"), or "beyond"
// the longest time sizing follows when the bank outlasts it.
func Runtime(c *sizing.Candidate) string { return runtimeRow(c).Text() }

func heat(t *sizing.Thermal) Group {
	g := Group{Title: "Heat in the hottest cell", Rows: []Row{
		quantity("ESR loss", t.CellLossW, "W", 3, "bank "+SI(t.BankLossW, "W", 3)),
		plain("Steady temperature rise", t.SteadyRiseK, Fixed(t.SteadyRiseK, 1), "K", steadyNote(t)),
		plain("Peak rise over the pass", t.PeakRiseK, Fixed(t.PeakRiseK, 1), "K", "from ambient"),
	}}
	if t.DutyPeakRiseK != nil {
		note := "once the repeats settle"
		if !t.BackToBack {
			note = "once the events, one per period, settle"
		}
		g.Rows = append(g.Rows, plain("Peak rise, repeating", *t.DutyPeakRiseK, Fixed(*t.DutyPeakRiseK, 1), "K", note))
	}
	g.Rows = append(g.Rows, plain("Hot spot", t.HotSpotC, Fixed(t.HotSpotC, 1), "°C", ""))
	tc := duration("Thermal time constant", t.TimeConstantS, 3, "")
	if t.TimeConstantS == nil {
		tc.Note = "no mass given: the steady rise is used"
	}
	note := ""
	if t.SpecificHeatDefault {
		note = "default"
	}
	g.Rows = append(g.Rows, tc, plain("Specific heat", t.SpecificHeatJPerKgK, Number(t.SpecificHeatJPerKgK, 4), "J/(kg·K)", note))
	return g
}

func balancing(s *sizing.Spread, b *sizing.BalancingResult) Group {
	g := Group{Title: "Balancing"}
	if s != nil {
		g.Rows = append(g.Rows, quantity("Bound on a first charge from empty", s.WorstCellV, "V", 4,
			fmt.Sprintf("extreme stack: one cell at %s %%, the rest at +%s %%, which no real lot does; the findings judge the lot instead", Number(s.MinusPct, 3), Number(s.PlusPct, 3))))
	}
	if b == nil {
		return g
	}
	// Count and LossW are of one string, BankCount and BankLossW of the
	// whole bank (sizing.BalancingResult).
	g.Rows = append(g.Rows, text("Kind", b.Kind, strconv.Itoa(b.Count)+" per string, "+strconv.Itoa(b.BankCount)+" in the bank, one per cell"))
	if b.ResistorOhm != nil {
		g.Rows = append(g.Rows, quantity("Resistor across each cell", *b.ResistorOhm, "Ω", 3, b.Series+" value"))
	}
	if b.ResistorPowerW != nil {
		g.Rows = append(g.Rows, quantity("Resistor power rating", *b.ResistorPowerW, "W", 3,
			Opt(b.DissipationW, func(v float64) string { return "dissipates " + SI(v, "W", 3) })))
	}
	if b.QuiescentA != nil {
		g.Rows = append(g.Rows, quantity("Circuit quiescent current", *b.QuiescentA, "A", 3, ""))
	}
	var shelfS *float64
	if b.ShelfHoldH != nil {
		s := *b.ShelfHoldH * 3600
		shelfS = &s
	}
	g.Rows = append(g.Rows,
		quantity("Standing loss, whole bank", b.BankLossW, "W", 3, "at the window top; per string "+SI(b.LossW, "W", 3)),
		duration("Equalisation time constant", b.TimeConstantS, 3, "R·C of one cell"),
		duration("Shelf hold to the window bottom", shelfS, 3, "no load, no charger"),
		optQuantity("Worst cell after a long hold", b.WorstStaticCellV, "V", 4, "leakage spread "+SI(b.LeakageSpreadA, "A", 3)),
	)
	for _, a := range b.Alternatives {
		g.Rows = append(g.Rows, alternativeRow(a))
	}
	return g
}

// alternativeRow is a balancing alternative in one row of words.
func alternativeRow(a sizing.BalancingAlternative) Row {
	label := "Alternative: one more cell in series"
	if a.Kind == "active" {
		label = "Alternative: active balancing"
	}
	if !a.Feasible {
		return text(label, "cannot carry the load", "")
	}
	v := Arrangement(a.Series, a.Parallel, a.Cells) + "; drain " + SI(a.BankLossW, "W", 3)
	if a.ResistorOhm != nil {
		v += ", resistors " + SI(*a.ResistorOhm, "Ω", 3)
	}
	if a.QuiescentA != nil {
		v += ", " + SI(*a.QuiescentA, "A", 3) + " per cell"
		if a.QuiescentAssumed {
			v += " (assumed)"
		}
	}
	note := ""
	if a.ShelfHoldH != nil {
		note = "shelf hold " + Duration(*a.ShelfHoldH*3600, 3)
	}
	if a.RuntimeS != nil {
		if note != "" {
			note += ", "
		}
		note += "runtime " + Duration(*a.RuntimeS, 3)
	}
	return text(label, v, note)
}

// BankText is a candidate's arrangement with its cell count, in words
// that cannot be read as a time or a unit: "15 in series × 4 strings,
// 60 cells" (Arrangement).
func BankText(c sizing.Candidate) string { return Arrangement(c.Series, c.Parallel, c.Cells) }

// Arrangement is the one way every output writes a bank's arrangement:
// cells in series per string × strings in parallel, and the cell count
// when cells > 0 ("23 in series × 1 string, 23 cells"). The short "s × p"
// shorthand is not used: its "s" reads as seconds beside a runtime.
func Arrangement(series, strings, cells int) string {
	s := fmt.Sprintf("%d in series × %d %s", series, strings, plural(strings, "string", "strings"))
	if cells > 0 {
		s += fmt.Sprintf(", %d %s", cells, plural(cells, "cell", "cells"))
	}
	return s
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

func limitNote(limit string) string {
	switch limit {
	case "voltage":
		return "strings set by the window bottom"
	case "power":
		return "strings set by the maximum-power point"
	case "peak_current":
		return "strings set by the cell's peak current"
	case "rms_current":
		return "strings set by the cell's continuous current"
	case "temperature":
		return "strings set by the cell's maximum temperature"
	case "input_current":
		return "strings set by the converter's input current limit"
	case "recharge":
		return "not rechargeable between events"
	}
	return "one string carries the load"
}

func coldNote(k float64) string {
	if k > 1 {
		return ", cold ×" + Number(k, 3)
	}
	return ""
}

// SortedFlags orders flags danger first, then warning, then info, keeping
// the report's order within a grade; a grade it does not know goes last.
func SortedFlags(flags []sizing.Flag) []sizing.Flag {
	out := append([]sizing.Flag(nil), flags...)
	rank := func(s sizing.Severity) int {
		switch s {
		case sizing.Danger:
			return 0
		case sizing.Warning:
			return 1
		case sizing.Info:
			return 2
		}
		return 3
	}
	sort.SliceStable(out, func(i, j int) bool { return rank(out[i].Severity) < rank(out[j].Severity) })
	return out
}

// steadyNote says what the steady rise assumes.
func steadyNote(t *sizing.Thermal) string {
	if t.BackToBack {
		return "at the pass's RMS loss, as if the pass repeated back to back for ever (no period given): a bound a one-shot event never reaches"
	}
	return "at the RMS loss over the period between events"
}

// connection lays out how the bank is charged and connected: the
// charger's times and energy, the inrush and the precharge resistor.
func connection(c *sizing.Candidate) Group {
	g := Group{Title: "Charging and connection"}
	if c.FirstChargeS != nil || c.RechargeS != nil {
		g.Rows = append(g.Rows,
			duration("Recharge after the event", c.RechargeS, 3, "worst case, from the end of the pass to the end of the constant-voltage phase"),
			duration("First charge from empty", c.FirstChargeS, 3, "a new bank, nominal capacitance and ESR"),
			optQuantity("Energy from the charger's supply", c.ChargeEnergyJ, "J", 4, "for the recharge"),
			optQuantity("Lost in ESR and wiring while recharging", c.ChargeSeriesLossJ, "J", 3, ""),
		)
	}
	if c.FirstChargeS == nil && c.RechargeS == nil {
		note := "give the charger to see the recharge time"
		if slices.ContainsFunc(c.Flags, func(f sizing.Flag) bool { return f.Code == "charge-never-ends" }) {
			note = "the charger cannot finish: see its flag"
		}
		g.Rows = append(g.Rows, text("Recharge", None, note))
	}
	inrushNote := "into the empty bank connected straight across the window top: max_v ÷ (ESR + wiring)"
	if c.FirstChargeS != nil || c.RechargeS != nil {
		inrushNote = "into the empty bank through the charger: its current limit; without it (a stiff bus, a charged DC link) see the precharge resistor"
	}
	g.Rows = append(g.Rows, quantity("Inrush current", c.InrushCurrentA, "A", 3, inrushNote))
	if pc := c.Precharge; pc != nil {
		if pc.ResistanceOhm == 0 {
			g.Rows = append(g.Rows, text("Precharge resistor", "none needed", "the bank's ESR alone keeps the inrush within the limit"))
		} else {
			g.Rows = append(g.Rows,
				quantity("Precharge resistor", pc.ResistanceOhm, "Ω", 3, "E24, at least "+SI(pc.NeededOhm, "Ω", 3)),
				quantity("Precharge peak current", pc.PeakCurrentA, "A", 3, "the empty bank connected across a stiff bus at the window top: max_v ÷ (R + ESR)"),
				quantity("Precharge peak power", pc.PeakPowerW, "W", 3, "in the resistor at connection"),
				quantity("Precharge pulse energy", pc.EnergyJ, "J", 3, "½·C·V², what the resistor must absorb at most"),
				duration("Precharge time to 99 %", &pc.TimeTo99S, 3, "(R + ESR)·C·ln 100"),
			)
		}
	}
	return g
}
