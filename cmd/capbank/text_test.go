package main

import (
	"bytes"
	"strings"
	"testing"
	"unicode/utf8"

	"capbank/sizing"
)

func ptr[T any](v T) *T { return &v }

// sampleReport is a hand-made report (not from sizing.Size) with one
// feasible and one infeasible candidate, to test the text layout alone.
func sampleReport() *sizing.Report {
	return &sizing.Report{
		Design:               "bus hold-up",
		Currency:             "EUR",
		Recommended:          ptr("c350"),
		RankBy:               "price",
		MaxV:                 48,
		MinV:                 24,
		EOLCapacitanceFactor: 0.8,
		EOLESRFactor:         2,
		ColdC:                ptr(-20.0),
		ProfileDurationS:     20,
		PassDurationS:        60,
		Repeat:               3,
		Candidates: []sizing.Candidate{
			{
				CellID: "c350", CellName: "350 F cell", Feasible: true,
				Series: 18, Parallel: 4, Cells: 72,
				UsableEnergyJ: 53760, RuntimeS: ptr(23.3068528), RuntimeEstimated: true,
				MinTerminalV: 25.6789, PeakCurrentA: 141.67, RMSCurrentA: 98.2,
				TotalPrice: ptr(468.0), MassKg: ptr(4.536),
				Flags: []sizing.Flag{
					{Code: "no-price", Severity: sizing.Info, Message: "a cell has no price"},
					{Code: "cold-below-range", Severity: sizing.Warning, Message: "cold_c is below the cell's rated range"},
					{Code: "cell-overvoltage", Severity: sizing.Danger, Message: "one cell can pass its surge voltage",
						Caution: "limit the charge current"},
				},
			},
			{
				CellID: "c10", Feasible: false, Reason: "the maximum-power point is below the load",
				Series: 18, Parallel: 1000, Cells: 18000,
				UsableEnergyJ: 1536000, MinTerminalV: 12.5, PeakCurrentA: 1234.6, RMSCurrentA: 5,
			},
		},
	}
}

func TestWriteText(t *testing.T) {
	t.Parallel()
	var buf bytes.Buffer
	writeText(&buf, sampleReport())
	out := buf.String()
	lines := strings.Split(strings.TrimSuffix(out, "\n"), "\n")

	wantLines := []string{
		"Design: bus hold-up",
		"Recommended: c350 (350 F cell), 18 in series × 4 strings, 72 cells",
		"Window 48 V → 24 V; worst case: capacitance × 0.8, ESR × 2, cold -20 °C; sizing pass 60 s (3 × 20 s); ranked by price",
		"",
	}
	for i, want := range wantLines {
		if i >= len(lines) || lines[i] != want {
			t.Fatalf("line %d is not %q; output:\n%s", i+1, want, out)
		}
	}
	header, rows := lines[4], lines[5:7]
	for _, col := range []string{"cell", "feasible", "in series", "strings", "cells", "runtime (s)", "lowest terminal (V)",
		"usable energy (MJ)", "peak current (kA)", "RMS current (A)", "price (EUR)", "mass (kg)", "reason"} {
		if !strings.Contains(header, col) {
			t.Errorf("header has no column %q: %q", col, header)
		}
	}
	// The feasible row: runtime estimated, energy in the column's MJ, peak
	// current in kA; the infeasible one: no runtime, price or mass, and its
	// reason.
	for _, want := range []string{"c350", "yes", "≈23.31", "25.68", "0.05376", "0.1417", "98.2", "468.00", "4.536"} {
		if !strings.Contains(rows[0], want) {
			t.Errorf("row %q has no %q", rows[0], want)
		}
	}
	for _, want := range []string{"c10", "no", "18000", "1.536", "1.235", "—", "the maximum-power point is below the load"} {
		if !strings.Contains(rows[1], want) {
			t.Errorf("row %q has no %q", rows[1], want)
		}
	}
	if strings.Count(rows[1], "—") != 3 {
		t.Errorf("row %q: want — for runtime, price and mass", rows[1])
	}
	// Numbers are right-aligned under their headers: the last rune of each
	// number column ends where its header ends.
	for _, col := range []struct{ header, v0, v1 string }{
		{"cells", "72", "18000"},
		{"lowest terminal (V)", "25.68", "12.5"},
		{"usable energy (MJ)", "0.05376", "1.536"},
		{"mass (kg)", "4.536", "—"}, // the last — in the row
	} {
		end := runeEnd(t, header, col.header)
		if got := runeEnd(t, rows[0], col.v0); got != end {
			t.Errorf("%s: %q ends at rune %d, header at %d", col.header, col.v0, got, end)
		}
		if got := runeEnd(t, rows[1], col.v1); got != end {
			t.Errorf("%s: %q ends at rune %d, header at %d", col.header, col.v1, got, end)
		}
	}
	if got, want := runeEnd(t, rows[0], "≈23.31"), runeEnd(t, header, "runtime (s)"); got != want {
		t.Errorf("runtime ends at rune %d, header at %d", got, want)
	}
	for i, line := range lines {
		if strings.TrimRight(line, " ") != line {
			t.Errorf("line %d has trailing blanks: %q", i+1, line)
		}
	}

	// The flags, most severe first, a caution under its flag's message.
	flagsAt := 8
	if len(lines) < flagsAt+5 || lines[flagsAt-1] != "" || lines[flagsAt] != "Flags for c350:" {
		t.Fatalf("want a blank line, then the flags of c350: three flags and a caution; output:\n%s", out)
	}
	for i, f := range []struct{ severity, code, message string }{
		{"danger", "cell-overvoltage", "one cell can pass its surge voltage"},
		{"", "", "Caution: limit the charge current"},
		{"warning", "cold-below-range", "cold_c is below the cell's rated range"},
		{"info", "no-price", "a cell has no price"},
	} {
		line := lines[flagsAt+1+i]
		want := strings.Join(strings.Fields(strings.Join([]string{f.severity, f.code, f.message}, " ")), " ")
		if got := strings.Join(strings.Fields(line), " "); got != want {
			t.Errorf("flag line %q, want %q", line, want)
		}
	}
	msgCol := runeEnd(t, lines[flagsAt+1], "cell-overvoltage") + 2
	if got := utf8.RuneCountInString(lines[flagsAt+2]) - utf8.RuneCountInString(strings.TrimLeft(lines[flagsAt+2], " ")); got != msgCol {
		t.Errorf("caution starts at rune %d, want %d (under the message)", got, msgCol)
	}
}

// runeEnd is the rune offset just after the last occurrence of s in line
// (the last, since a cell id may repeat a number).
func runeEnd(t *testing.T, line, s string) int {
	t.Helper()
	i := strings.LastIndex(line, s)
	if i < 0 {
		t.Fatalf("%q not in %q", s, line)
	}
	return utf8.RuneCountInString(line[:i+len(s)])
}

func TestWriteTextNothingRecommended(t *testing.T) {
	t.Parallel()
	r := sampleReport()
	r.Recommended = nil
	r.Design = ""
	r.Candidates = r.Candidates[1:]
	var buf bytes.Buffer
	writeText(&buf, r)
	out := buf.String()
	for _, want := range []string{
		"Design: (unnamed design)\n",
		"Recommended: none; no candidate carries the load at worst case",
		"the maximum-power point is below the load\n",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("output has no %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "Flags for") {
		t.Errorf("flags printed with nothing recommended:\n%s", out)
	}
}

func TestWriteTextNoFlags(t *testing.T) {
	t.Parallel()
	r := sampleReport()
	r.Candidates[0].Flags = nil
	var buf bytes.Buffer
	writeText(&buf, r)
	if !strings.Contains(buf.String(), "\nFlags for c350: none\n\nHeat, balancing and life") {
		t.Errorf("output has no empty flags line before the heat table:\n%s", buf.String())
	}
}

// The heat table's columns in W take one SI prefix each, chosen by the
// column's largest figure, as the candidate table's do (README: "SI
// prefixes chosen per column"): a logger's 6.78 µW per cell reads 6.78
// under "ESR loss/cell (µW)", not 0.00000678 or 6.78e-6.
func TestSafetyTableColumnPrefixes(t *testing.T) {
	t.Parallel()
	cs := []sizing.Candidate{
		{CellID: "c22", Parallel: 5, Thermal: &sizing.Thermal{CellLossW: 6.78e-6, HotSpotC: 30},
			Balancing: &sizing.BalancingResult{Kind: "passive", Count: 2, BankCount: 10, LossW: 0.002016, BankLossW: 0.01008}},
		{CellID: "c5", Parallel: 2, Thermal: &sizing.Thermal{CellLossW: 1.31e-6, HotSpotC: 30},
			Balancing: &sizing.BalancingResult{Kind: "passive", Count: 2, BankCount: 4, LossW: 0.0082, BankLossW: 0.0164}},
	}
	tb := safetyTable(cs)
	header := strings.Join(tb.rows[0], "|")
	for _, want := range []string{"ESR loss/cell (µW)", "standing loss/bank (mW)"} {
		if !strings.Contains(header, want) {
			t.Errorf("header %q has no %q", header, want)
		}
	}
	// 6.78 µW and 1.31 µW per cell; 2.016 mW × 5 strings = 10.08 mW and
	// 8.2 mW × 2 = 16.4 mW per bank, to 3 figures.
	for i, want := range [][2]string{{"6.78", "10.1"}, {"1.31", "16.4"}} {
		if got := [2]string{tb.rows[i+1][3], tb.rows[i+1][6]}; got != want {
			t.Errorf("%s: loss/cell and standing loss %q, want %q", cs[i].CellID, got, want)
		}
	}
}

// The recommended bank's charging line: recharge, first charge, inrush,
// precharge and wiring loss, each with its unit.
func TestWriteTextCharging(t *testing.T) {
	t.Parallel()
	r := sampleReport()
	c := &r.Candidates[0]
	c.RechargeS, c.FirstChargeS, c.InrushCurrentA, c.WiringLossJ = ptr(244.6), ptr(999.4), 10, 578.8
	c.Precharge = &sizing.Precharge{ResistanceOhm: 0.82, PeakPowerW: 2779, EnergyJ: 283800, TimeTo99S: 935.2}
	var buf bytes.Buffer
	writeText(&buf, r)
	want := "Charging and connection of c350: recharge 244.6 s, first charge from empty 999.4 s, inrush 10 A; precharge resistor 820 mΩ (E24), peak 2.779 kW, pulse energy 283.8 kJ, 99 % in 935.2 s; wiring loss over the pass 578.8 J"
	if !strings.Contains(buf.String(), want+"\n") {
		t.Errorf("no line %q in:\n%s", want, buf.String())
	}
	buf.Reset()
	writeText(&buf, sampleReport())
	if strings.Contains(buf.String(), "Charging and connection") {
		t.Error("a charging line for a design with no charger, inrush limit or wiring")
	}
}
