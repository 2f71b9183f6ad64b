package export

import (
	"fmt"
	"strings"

	"capbank/components/figures"
	"capbank/sizing"
)

// inputRow is one design input beyond the window, the load and the worst
// case: its design-file key, what it is, and its value, either a number
// with its SI unit or a text.
type inputRow struct {
	key, label string
	value      *float64
	unit, text string
}

// shown is the row as the PDF's inputs table writes it.
func (r inputRow) shown() string {
	if r.value != nil {
		return quantity(*r.value, r.unit)
	}
	return r.text
}

// systemInputs lists the bank-in-its-system inputs the design gives (start
// voltage, series multiple, charger, converter, wiring, inrush limit) and
// each candidate cell's module and hot-temperature voltage derating, for
// the PDF's and the XLSX's inputs alike: a reviewer sees every key that
// moved the result.
func systemInputs(d *sizing.Design) []inputRow {
	var rows []inputRow
	num := func(key, label string, v *float64, unit string) {
		if v != nil {
			rows = append(rows, inputRow{key: key, label: label, value: v, unit: unit})
		}
	}
	num("load.start_v", "start voltage", d.Load.StartV, "V")
	if d.SeriesMultiple != nil {
		rows = append(rows, inputRow{key: "series_multiple", label: "series count in multiples of", text: fmt.Sprint(*d.SeriesMultiple)})
	}
	if c := d.Charger; c != nil {
		current := c.CurrentA
		num("charger.current_a", "charger current limit", &current, "A")
		num("charger.power_w", "charger power limit", c.PowerW, "W")
		if c.EndCurrentPct != nil {
			rows = append(rows, inputRow{key: "charger.end_current_pct", label: "charge ends at", text: figures.Number(*c.EndCurrentPct, sigFigs) + " % of the current limit"})
		}
		if c.Efficiency != nil {
			rows = append(rows, inputRow{key: "charger.efficiency", label: "charger efficiency", text: figures.Number(*c.Efficiency, sigFigs)})
		}
	}
	if c := d.Converter; c != nil {
		num("converter.min_input_v", "converter minimum input voltage", c.MinInputV, "V")
		num("converter.max_input_current_a", "converter input current limit", c.MaxInputCurrentA, "A")
		if len(c.EfficiencyCurve) > 0 {
			rows = append(rows, inputRow{key: "converter.efficiency_curve", label: "converter efficiency by input voltage", text: pointText(c.EfficiencyCurve, "V", "")})
		}
	}
	if w := d.Wiring; w != nil {
		num("wiring.link_resistance_ohm", "each cell-to-cell link", w.LinkResistanceOhm, "Ω")
		num("wiring.string_resistance_ohm", "each string's end connections", w.StringResistanceOhm, "Ω")
		num("wiring.bank_resistance_ohm", "in series with the bank", w.BankResistanceOhm, "Ω")
	}
	if s := d.System; s != nil {
		num("system.inrush_limit_a", "inrush limit", s.InrushLimitA, "A")
	}
	for _, c := range d.Cells {
		if m := c.Module; m != nil {
			parallel := 1
			if m.Parallel != nil {
				parallel = *m.Parallel
			}
			text := fmt.Sprintf("%d in series × %d in parallel", m.Series, parallel)
			if m.Name != "" {
				text = m.Name + ": " + text
			}
			rows = append(rows, inputRow{key: "cells[" + c.ID + "].module", label: "module", text: text})
		}
		if len(c.VoltageDerating) > 0 {
			rows = append(rows, inputRow{key: "cells[" + c.ID + "].voltage_derating", label: "per-cell ceiling by temperature", text: pointText(c.VoltageDerating, "°C", "V")})
		}
	}
	return rows
}

// pointText writes a table of [x, y] points as "x unit: y unit, …"; an
// empty yUnit writes y as a plain number (an efficiency).
func pointText(points [][]float64, xUnit, yUnit string) string {
	parts := make([]string, 0, len(points))
	for _, p := range points {
		if len(p) != 2 {
			continue
		}
		y := figures.Number(p[1], sigFigs)
		if yUnit != "" {
			y = quantity(p[1], yUnit)
		}
		parts = append(parts, quantity(p[0], xUnit)+": "+y)
	}
	return strings.Join(parts, ", ")
}
