package main

import (
	"bytes"
	"math"
	"strings"
	"testing"
	"unicode/utf8"

	"capbank/sizing"
)

func TestFormatSig(t *testing.T) {
	t.Parallel()
	// Expected strings: decimal rounding to n significant figures by hand,
	// half away from zero as strconv rounds exact decimal ties (common
	// practice, no source).
	tests := []struct {
		x    float64
		n    int
		want string
	}{
		{23.30685282, 4, "23.31"},
		{32.333333, 4, "32.33"},
		{120000, 4, "120000"},
		{1234567, 4, "1235000"},
		{0.0012345678, 4, "0.001235"},
		{999.96, 4, "1000"},
		{2.5, 4, "2.5"},
		{48, 3, "48"},
		{-0.72, 4, "-0.72"},
		{-0.00001, 3, "-0.00001"},
		{0, 4, "0"},
		{math.Copysign(0, -1), 4, "0"},
		{math.NaN(), 4, "NaN"},
		{math.Inf(1), 4, "+Inf"},
	}
	for _, tt := range tests {
		if got := formatSig(tt.x, tt.n); got != tt.want {
			t.Errorf("formatSig(%v, %d) = %q, want %q", tt.x, tt.n, got, tt.want)
		}
	}
}

func TestFormatSI(t *testing.T) {
	t.Parallel()
	// Expected strings: SI prefixes by powers of 1000 (SI Brochure, 9th
	// ed., table 7), figures rounded by hand.
	tests := []struct {
		x    float64
		unit string
		want string
	}{
		{120000, "J", "120 kJ"},      // usable energy, REFERENCES.md 10.1
		{0.0072, "Ω", "7.2 mΩ"},      // string ESR, REFERENCES.md 10.1
		{0.0004, "Ω", "400 µΩ"},      // cell ESR, REFERENCES.md 10.1; µ, not u
		{138.888889, "F", "138.9 F"}, // string capacitance, REFERENCES.md 10.1
		{4556.25, "W", "4.556 kW"},   // cell matched-load power, REFERENCES.md 10.5
		{48, "V", "48 V"},            // no prefix
		{0, "J", "0 J"},              // zero takes no prefix
		{-2500000, "J", "-2.5 MJ"},   // the sign is kept
		{1000, "A", "1 kA"},          // an exact power of 1000
		{0.001, "Ω", "1 mΩ"},         // an exact negative power of 1000
		{999.96, "V", "1 kV"},        // rounds to 1000, so into the next prefix
		{0.00099999, "Ω", "1 mΩ"},    // the same below 1
		{0.0009994, "Ω", "999.4 µΩ"}, // stays below the boundary
		{123456789, "W", "123.5 MW"}, // rounded to four figures
		{100.04, "A", "100 A"},       // 100.0 to four figures, shown without the zero
		{2e18, "J", "2000 PJ"},       // above the largest prefix: stays at P
		{1e-20, "A", "0.00001 fA"},   // below the smallest: stays at f
		{math.Inf(1), "W", "+Inf W"}, // not a number to scale
	}
	for _, tt := range tests {
		if got := formatSI(tt.x, tt.unit); got != tt.want {
			t.Errorf("formatSI(%v, %q) = %q, want %q", tt.x, tt.unit, got, tt.want)
		}
	}
}

func TestColumnPrefix(t *testing.T) {
	t.Parallel()
	// One prefix for the whole column, chosen by its largest magnitude.
	tests := []struct {
		xs        []float64
		base      string
		scale     float64
		unit      string
		formatted []string
	}{
		{[]float64{120000, 45000, 1200000}, "J", 1e6, "MJ", []string{"0.12", "0.045", "1.2"}},
		{[]float64{208.333, 52.1}, "A", 1, "A", []string{"208.3", "52.1"}},
		{[]float64{0.004, 0.0125}, "A", 1e-3, "mA", []string{"4", "12.5"}},
		{[]float64{-3000, 10}, "W", 1e3, "kW", []string{"-3", "0.01"}},
		{nil, "J", 1, "J", nil},
		{[]float64{math.NaN(), 5000}, "J", 1e3, "kJ", []string{"NaN", "5"}},
	}
	for _, tt := range tests {
		scale, unit := columnPrefix(tt.xs, tt.base)
		if scale != tt.scale || unit != tt.unit {
			t.Errorf("columnPrefix(%v) = %g, %q; want %g, %q", tt.xs, scale, unit, tt.scale, tt.unit)
		}
		for i, x := range tt.xs {
			if got := formatSig(x/scale, sigFigs); got != tt.formatted[i] {
				t.Errorf("%v in %s: %q, want %q", x, unit, got, tt.formatted[i])
			}
		}
	}
}

func ptr[T any](v T) *T { return &v }

// sampleReport is a hand-made report (not from sizing.Size) with one
// feasible and one infeasible candidate, to test the text layout alone.
func sampleReport() *sizing.Report {
	return &sizing.Report{
		Design:               "bus hold-up",
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
		"Recommended: c350 (350 F cell), 18 s × 4 p, 72 cells",
		"Window 48 V → 24 V; worst case: capacitance × 0.8, ESR × 2, cold -20 °C; sizing pass 60 s (3 × 20 s); ranked by price",
		"",
	}
	for i, want := range wantLines {
		if i >= len(lines) || lines[i] != want {
			t.Fatalf("line %d is not %q; output:\n%s", i+1, want, out)
		}
	}
	header, rows := lines[4], lines[5:7]
	for _, col := range []string{"cell", "feasible", "series", "parallel", "cells", "runtime (s)", "min terminal (V)",
		"usable (MJ)", "peak I (kA)", "rms I (A)", "price", "mass (kg)", "reason"} {
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
		{"min terminal (V)", "25.68", "12.5"},
		{"usable (MJ)", "0.05376", "1.536"},
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
