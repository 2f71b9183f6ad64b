package export

import (
	"math"
	"strconv"
	"strings"

	"capbank/sizing"
)

// Neutralise returns s so that a spreadsheet shows it as text: a cell that
// begins with '=', '+', '-', '@', a tab or a carriage return can be taken
// as a formula when the file is opened (CSV injection), so it gets a single
// quote in front, the spreadsheet's own mark for "this is text". Other text
// is returned as it is.
func Neutralise(s string) string {
	if s == "" {
		return s
	}
	switch s[0] {
	case '=', '+', '-', '@', '\t', '\r':
		return "'" + s
	}
	return s
}

// plainNumber formats x for a machine to read back: dot decimal, every
// digit needed to round-trip the float64, no exponent and no grouping.
func plainNumber(x float64) string {
	return strconv.FormatFloat(x, 'f', -1, 64)
}

// sigFigs is how many significant figures the PDF shows.
const sigFigs = 4

// none stands for a figure the report does not have.
const none = "—"

// formatSig formats x with n significant figures in plain decimal
// notation, without trailing zeros: 1234.56 is "1235", 0.0012345 "0.001235".
func formatSig(x float64, n int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return none
	}
	if x == 0 {
		return "0"
	}
	e := strconv.FormatFloat(x, 'e', n-1, 64)
	rounded, _ := strconv.ParseFloat(e, 64)
	_, exp, _ := strings.Cut(e, "e")
	p, _ := strconv.Atoi(exp)
	s := strconv.FormatFloat(rounded, 'f', max(0, n-1-p), 64)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if s == "-0" {
		s = "0"
	}
	return s
}

// formatSI formats x in unit with an SI prefix, so the number stands in
// [1, 1000): 117600 J is "117.6 kJ", 0.0028 Ω "2.8 mΩ".
func formatSI(x float64, unit string) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return none
	}
	if x == 0 {
		return "0 " + unit
	}
	e := strconv.FormatFloat(x, 'e', sigFigs-1, 64)
	_, exp, _ := strings.Cut(e, "e")
	p, _ := strconv.Atoi(exp)
	e3 := p - ((p%3)+3)%3
	e3 = min(max(e3, -12), 12)
	prefix := map[int]string{-12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}[e3]
	return formatSig(x/math.Pow10(e3), sigFigs) + " " + prefix + unit
}

// formatFarad formats a capacitance: in F from 1 F up (a bank of 1000 F
// reads "1000 F", as datasheets print it), with a prefix below.
func formatFarad(x float64) string {
	if math.Abs(x) >= 1 && math.Abs(x) < 1e7 {
		return formatSig(x, sigFigs) + " F"
	}
	return formatSI(x, "F")
}

// formatUnit formats x with sigFigs figures and a unit that takes no
// prefix (°C, K, %, years).
func formatUnit(x float64, unit string) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return none
	}
	if unit == "" {
		return formatSig(x, sigFigs)
	}
	return formatSig(x, sigFigs) + " " + unit
}

// formatDuration formats seconds in s below 2 min, min below 2 h, h below
// 2 days and days above.
func formatDuration(s float64) string {
	switch {
	case math.IsNaN(s) || math.IsInf(s, 0):
		return none
	case math.Abs(s) >= 2*86400:
		return formatSig(s/86400, sigFigs) + " days"
	case math.Abs(s) >= 7200:
		return formatSig(s/3600, sigFigs) + " h"
	case math.Abs(s) >= 120:
		return formatSig(s/60, sigFigs) + " min"
	}
	return formatSig(s, sigFigs) + " s"
}

// formatMoney formats a price with two decimals (more when the price has
// them, up to four) and the currency.
func formatMoney(x float64, currency string) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return none
	}
	s := strconv.FormatFloat(x, 'f', 4, 64)
	s = strings.TrimRight(s, "0")
	if i := strings.IndexByte(s, '.'); i >= 0 && len(s)-i-1 < 2 {
		s += strings.Repeat("0", 2-(len(s)-i-1))
	}
	s = groupThousands(s)
	if currency != "" {
		s += " " + currency
	}
	return s
}

// groupThousands puts a thin separator (a comma) between thousands of the
// integer part, for reading, never for a machine.
func groupThousands(s string) string {
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	intPart, frac, hasFrac := strings.Cut(s, ".")
	var b strings.Builder
	for i, r := range intPart {
		if i > 0 && (len(intPart)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	out := b.String()
	if hasFrac {
		out += "." + frac
	}
	if neg {
		out = "-" + out
	}
	return out
}

// optSI formats an optional figure with formatSI, none for nil.
func optSI(p *float64, unit string) string {
	if p == nil {
		return none
	}
	return formatSI(*p, unit)
}

// optUnit formats an optional figure with formatUnit, none for nil.
func optUnit(p *float64, unit string) string {
	if p == nil {
		return none
	}
	return formatUnit(*p, unit)
}

// candidateByID returns the candidate of the report for that cell id.
func candidateByID(r *sizing.Report, id string) *sizing.Candidate {
	for i := range r.Candidates {
		if r.Candidates[i].CellID == id {
			return &r.Candidates[i]
		}
	}
	return nil
}

// cellByID returns the design's cell with that id.
func cellByID(d *sizing.Design, id string) *sizing.Cell {
	for i := range d.Cells {
		if d.Cells[i].ID == id {
			return &d.Cells[i]
		}
	}
	return nil
}

// severityRank orders flags danger first, then warning, then info.
func severityRank(s sizing.Severity) int {
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

// stepKind names a load step's kind and gives its value and unit.
func stepKind(s sizing.Step) (kind string, value float64, unit string, ok bool) {
	switch {
	case s.PowerW != nil:
		return "power", *s.PowerW, "W", true
	case s.CurrentA != nil:
		return "current", *s.CurrentA, "A", true
	case s.ResistanceOhm != nil:
		return "resistance", *s.ResistanceOhm, "Ω", true
	case s.Rest:
		return "rest", 0, "", false
	}
	return "rest", 0, "", false
}

// runningSum adds durations with Neumaier's compensated summation, so the
// start times of a long logged profile (10^5 steps of 10 ms) print as
// 1199.99 rather than carry the rounding of every addition.
type runningSum struct{ sum, comp float64 }

func (r *runningSum) add(x float64) {
	t := r.sum + x
	if math.Abs(r.sum) >= math.Abs(x) {
		r.comp += (r.sum - t) + x
	} else {
		r.comp += (x - t) + r.sum
	}
	r.sum = t
}

func (r *runningSum) value() float64 { return r.sum + r.comp }
