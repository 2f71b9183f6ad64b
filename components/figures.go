package components

import (
	"fmt"
	"sort"
	"strconv"

	"capbank/sizing"
)

// FigureGroup is a titled block of the figures table.
type FigureGroup struct {
	Title string
	Rows  []FigureRow
}

// FigureRow is one figure: what it is, its value with unit, and a note
// (how it was judged, or the per-cell value).
type FigureRow struct{ Name, Value, Note string }

// Figures lays out a candidate's figures for reading: the bank, energy and
// runtime, current, heat, balancing, life and the safety figures. Values
// are formatted here; nothing is computed that the report does not hold.
func Figures(c *sizing.Candidate, r *sizing.Report) []FigureGroup {
	worst := "end of life"
	if r.ColdC != nil {
		worst += ", " + Quantity(*r.ColdC, "°C", 3)
	}
	bank := FigureGroup{Title: "Bank", Rows: []FigureRow{
		{"Arrangement", BankText(*c), limitNote(c.Limit)},
		{"Cell voltage at the window top", Quantity(c.CellV, "V", 4), "ceiling " + Quantity(c.CellCeilingV, "V", 4)},
		{"Capacitance", Quantity(c.CapacitanceF, "F", 4), "worst case " + Quantity(c.WorstCapacitanceF, "F", 4) + " (" + worst + ")"},
		{"ESR", Quantity(c.ESROhm, "Ω", 3), "worst case " + Quantity(c.WorstESROhm, "Ω", 3) + coldNote(c.ColdESRFactor)},
		{"Leakage and balancing drain", Opt(c.LeakageOhm, func(v float64) string { return Quantity(v, "Ω", 3) }), "as one resistance across the bank"},
	}}
	runtime := "beyond " + Duration(sizing.RuntimeLimitS)
	if c.RuntimeS != nil {
		runtime = Duration(*c.RuntimeS)
	}
	energy := FigureGroup{Title: "Energy and runtime, worst case", Rows: []FigureRow{
		{"Stored energy at the window top", Quantity(c.StoredEnergyJ, "J", 4), Quantity(c.StoredEnergyJ/3600, "Wh", 3) + ", beginning of life"},
		{"Usable energy in the window", Quantity(c.UsableEnergyJ, "J", 4), Quantity(c.UsableEnergyJ/3600, "Wh", 3)},
		{"Runtime", runtime, runtimeNote(c)},
		{"Lowest terminal voltage", Quantity(c.MinTerminalV, "V", 4), "window bottom " + Quantity(r.MinV, "V", 4)},
		{"Capacitor voltage at the end of the pass", Quantity(c.EndCapacitorV, "V", 4), ""},
		{"Energy delivered to the load", Quantity(c.DeliveredEnergyJ, "J", 4), "over the sizing pass"},
		{"Lost in the ESR", Quantity(c.ESRLossJ, "J", 3), ""},
		{"Lost in leakage and balancing", Quantity(c.LeakageLossJ, "J", 3), ""},
	}}
	if c.RejectedEnergyJ > 0 {
		energy.Rows = append(energy.Rows, FigureRow{"Charge refused at the window top", Quantity(c.RejectedEnergyJ, "J", 3), ""})
	}
	current := FigureGroup{Title: "Current, worst case", Rows: []FigureRow{
		{"Peak current", Quantity(c.PeakCurrentA, "A", 3), "per cell " + Quantity(c.CellPeakCurrentA, "A", 3)},
		{"RMS current", Quantity(c.RMSCurrentA, "A", 3), "per cell " + Quantity(c.CellRMSCurrentA, "A", 3)},
	}}
	groups := []FigureGroup{bank, energy, current}
	if t := c.Thermal; t != nil {
		g := FigureGroup{Title: "Heat in the hottest cell", Rows: []FigureRow{
			{"ESR loss", Quantity(t.CellLossW, "W", 3), "bank " + Quantity(t.BankLossW, "W", 3)},
			{"Steady temperature rise", Kelvin(t.SteadyRiseK), "at the pass's RMS loss"},
			{"Peak rise over the pass", Kelvin(t.PeakRiseK), "from ambient"},
		}}
		if t.DutyPeakRiseK != nil {
			g.Rows = append(g.Rows, FigureRow{"Peak rise, repeating", Kelvin(*t.DutyPeakRiseK), "once the repeats settle"})
		}
		g.Rows = append(g.Rows, FigureRow{"Hot spot", Celsius(t.HotSpotC), ""})
		tc := "no mass given: the steady rise is used"
		tcv := "—"
		if t.TimeConstantS != nil {
			tcv, tc = Duration(*t.TimeConstantS), ""
		}
		g.Rows = append(g.Rows, FigureRow{"Thermal time constant", tcv, tc})
		note := ""
		if t.SpecificHeatDefault {
			note = "default"
		}
		g.Rows = append(g.Rows, FigureRow{"Specific heat", Number(t.SpecificHeatJPerKgK, 4) + nbsp + "J/(kg·K)", note})
		groups = append(groups, g)
	}
	if s, b := c.Spread, c.Balancing; s != nil || b != nil {
		g := FigureGroup{Title: "Balancing"}
		if s != nil {
			g.Rows = append(g.Rows, FigureRow{"Worst cell before balancing acts", Quantity(s.WorstCellV, "V", 4),
				fmt.Sprintf("tolerance %s %% / +%s %%", Number(s.MinusPct, 3), Number(s.PlusPct, 3))})
		}
		if b != nil {
			g.Rows = append(g.Rows, FigureRow{"Kind", b.Kind, strconv.Itoa(b.Count) + " per bank, one per cell"})
			if b.ResistorOhm != nil {
				g.Rows = append(g.Rows, FigureRow{"Resistor across each cell", Quantity(*b.ResistorOhm, "Ω", 3), b.Series + " value"})
			}
			if b.ResistorPowerW != nil {
				g.Rows = append(g.Rows, FigureRow{"Resistor power rating", Quantity(*b.ResistorPowerW, "W", 3),
					Opt(b.DissipationW, func(v float64) string { return "dissipates " + Quantity(v, "W", 3) })})
			}
			if b.QuiescentA != nil {
				g.Rows = append(g.Rows, FigureRow{"Circuit quiescent current", Quantity(*b.QuiescentA, "A", 3), ""})
			}
			g.Rows = append(g.Rows,
				FigureRow{"Standing loss", Quantity(b.LossW, "W", 3), "at the window top"},
				FigureRow{"Equalisation time constant", Opt(b.TimeConstantS, Duration), "R·C of one cell"},
				FigureRow{"Shelf hold to the window bottom", Opt(b.ShelfHoldH, Hours), "no load, no charger"},
				FigureRow{"Worst cell after a long hold", Opt(b.WorstStaticCellV, func(v float64) string { return Quantity(v, "V", 4) }),
					"leakage spread " + Quantity(b.LeakageSpreadA, "A", 3)},
			)
		}
		groups = append(groups, g)
	}
	if l := c.Life; l != nil {
		g := FigureGroup{Title: "Life", Rows: []FigureRow{
			{"Expected life", Number(l.ExpectedYears, 3) + nbsp + "years", Number(l.ExpectedH, 3) + nbsp + "h at " + Celsius(l.TemperatureC) + " and " + Quantity(l.CellV, "V", 3) + " per cell"},
		}}
		if l.DesignYears != nil {
			g.Rows = append(g.Rows, FigureRow{"Required", Number(*l.DesignYears, 3) + nbsp + "years", ""})
		}
		groups = append(groups, g)
	}
	h := c.Hazards
	groups = append(groups, FigureGroup{Title: "Safety figures", Rows: []FigureRow{
		{"Bank voltage", Quantity(h.MaxV, "V", 4), "at the window top"},
		{"Stored energy", Quantity(h.StoredEnergyJ, "J", 4), ""},
		{"Short-circuit current", Quantity(h.ShortCircuitCurrentA, "A", 3), "window top ÷ bank ESR"},
		{"Energy per cell", Quantity(h.CellEnergyWh, "Wh", 3), "as transport rules count it"},
	}})
	cost := FigureGroup{Title: "Price, mass and volume"}
	cost.Rows = append(cost.Rows,
		FigureRow{"Price", Opt(c.TotalPrice, Money), "cells only, in the currency of the unit price"},
		FigureRow{"Mass", Opt(c.MassKg, func(v float64) string { return Quantity(v, "kg", 3) }), "cells only"},
		FigureRow{"Volume", Opt(c.VolumeL, func(v float64) string { return Quantity(v, "L", 3) }), "cells only, no spacing"},
	)
	return append(groups, cost)
}

// BankText is the arrangement as engineers write it: "15 s × 4 p, 60 cells".
func BankText(c sizing.Candidate) string {
	cells := "cells"
	if c.Cells == 1 {
		cells = "cell"
	}
	return fmt.Sprintf("%d s × %d p, %d %s", c.Series, c.Parallel, c.Cells, cells)
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
	}
	return "one string carries the load"
}

func coldNote(k float64) string {
	if k > 1 {
		return ", cold ×" + Number(k, 3)
	}
	return ""
}

func runtimeNote(c *sizing.Candidate) string {
	note := ""
	switch c.RuntimeEnd {
	case "voltage":
		note = "until the window bottom"
	case "power":
		note = "until the maximum-power point"
	default:
		note = "not reached within the time followed"
	}
	if c.RuntimeEstimated {
		note += ", estimated from the drain per repeat"
	}
	return note + ", repeating the steps"
}

// SeverityLabel is the word shown with a flag, so its grade never rests on
// colour alone.
func SeverityLabel(s sizing.Severity) string {
	switch s {
	case sizing.Danger:
		return "Danger"
	case sizing.Warning:
		return "Warning"
	}
	return "Note"
}

// SortedFlags orders flags danger first, then warning, then info, keeping
// the report's order within a grade.
func SortedFlags(flags []sizing.Flag) []sizing.Flag {
	out := append([]sizing.Flag(nil), flags...)
	rank := map[sizing.Severity]int{sizing.Danger: 0, sizing.Warning: 1, sizing.Info: 2}
	sort.SliceStable(out, func(i, j int) bool { return rank[out[i].Severity] < rank[out[j].Severity] })
	return out
}

// FlagCounts summarises flags for a line of text: "1 danger, 2 warnings".
func FlagCounts(flags []sizing.Flag) string {
	var d, w, n int
	for _, f := range flags {
		switch f.Severity {
		case sizing.Danger:
			d++
		case sizing.Warning:
			w++
		default:
			n++
		}
	}
	var parts []string
	add := func(k int, one, many string) {
		if k == 1 {
			parts = append(parts, "1 "+one)
		} else if k > 1 {
			parts = append(parts, strconv.Itoa(k)+" "+many)
		}
	}
	add(d, "danger", "dangers")
	add(w, "warning", "warnings")
	add(n, "note", "notes")
	if len(parts) == 0 {
		return "no findings"
	}
	s := parts[0]
	for _, p := range parts[1:] {
		s += ", " + p
	}
	return s
}

func itoa(i int) string { return strconv.Itoa(i) }
