package export

import (
	"math"
	"strconv"

	"capbank/components/figures"
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
const none = figures.None

// quantity is v in unit through figures.SI, to sigFigs figures: 117.6 kJ.
func quantity(v float64, unit string) string { return figures.SI(v, unit, sigFigs) }

// optQuantity is quantity for an optional figure, none for nil.
func optQuantity(p *float64, unit string) string {
	if p == nil {
		return none
	}
	return quantity(*p, unit)
}

// money is a price through figures.Money with its currency, if any:
// "683.50 EUR".
func money(v float64, currency string) string {
	if currency == "" {
		return figures.Money(v)
	}
	return figures.Money(v) + " " + currency
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
