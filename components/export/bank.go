package export

import (
	"fmt"
	"io"
	"slices"

	"capbank/sizing"
)

// BankProblem says why an export has no bank to write.
type BankProblem int

const (
	// NotACandidate: the cell asked for is not a cell of the design.
	NotACandidate BankProblem = iota + 1
	// NotFeasible: the cell asked for cannot carry the load, so it has no
	// bank.
	NotFeasible
	// NoBank: no cell was asked for and no candidate carries the load, so
	// there is no recommended bank; only the PDF, which says why, is
	// written then.
	NoBank
)

// BankError is an export asked of a bank the report does not have. The
// command line and the web each say it in their own words (a flag, a form
// field); Error gives the web's.
type BankError struct {
	Problem BankProblem
	// CellID is the cell asked for ("" for the recommended bank).
	CellID string
	// Reason is why CellID cannot carry the load (NotFeasible).
	Reason string
}

func (e *BankError) Error() string {
	switch e.Problem {
	case NotACandidate:
		return fmt.Sprintf("%q is not a candidate cell of this design", e.CellID)
	case NotFeasible:
		return fmt.Sprintf("%q cannot carry the load (%s), so it has no bank to export", e.CellID, e.Reason)
	}
	return "no candidate carries the load at worst case, so there is no bank to list; the PDF report says why"
}

// BOQFor is the bill of quantities of the export f: of the bank of cellID,
// or of the recommended bank when cellID is empty. The cell must be a
// feasible candidate of r, else the error is a *BankError. With no feasible
// candidate and no cell asked for, the PDF still has something to say (why
// nothing carries the load): it gets a nil BOQ and no error, while the BOQ
// formats get a *BankError with Problem NoBank. Any other error is
// sizing.BillOfQuantities'.
func BOQFor(d *sizing.Design, r *sizing.Report, cellID string, f Format) (*sizing.BOQ, error) {
	if cellID != "" {
		i := slices.IndexFunc(r.Candidates, func(c sizing.Candidate) bool { return c.CellID == cellID })
		if i < 0 {
			return nil, &BankError{Problem: NotACandidate, CellID: cellID}
		}
		if c := r.Candidates[i]; !c.Feasible {
			return nil, &BankError{Problem: NotFeasible, CellID: cellID, Reason: c.Reason}
		}
	} else if r.Recommended == nil {
		if f.Name == "pdf" {
			return nil, nil
		}
		return nil, &BankError{Problem: NoBank}
	}
	return sizing.BillOfQuantities(d, r, cellID)
}

// Write writes the export f of design d, sized in r, for the bill of
// quantities b (from BOQFor); opt is read by the PDF only.
func Write(w io.Writer, f Format, d *sizing.Design, r *sizing.Report, b *sizing.BOQ, opt PDFOptions) error {
	switch f.Name {
	case "boq-csv":
		return BOQCSV(w, b)
	case "boq-xlsx":
		return BOQXLSX(w, d, r, b)
	case "boq-json":
		return BOQJSON(w, b)
	case "pdf":
		return ReportPDF(w, d, r, b, opt)
	}
	return fmt.Errorf("no writer for the format %q", f.Name)
}
