package main

import (
	"errors"
	"fmt"
	"io"
	"runtime/debug"
	"strings"
	"time"

	"capbank/components/export"
	"capbank/sizing"
)

// today is the date printed on a PDF report.
var today = time.Now

// chooseBOQ returns the bill of quantities of the export (export.BOQFor:
// for cellID, or the recommended cell when cellID is empty). A cell the
// design does not have, or one that cannot carry the load, is a
// command-line mistake; its message names the cells to choose from instead
// of repeating the usage. With nothing feasible, the PDF is still written
// (it says why) and gets a nil BOQ; the BOQ formats have nothing to list.
func chooseBOQ(d *sizing.Design, r *sizing.Report, cellID string, f export.Format, stderr io.Writer) (*sizing.BOQ, error) {
	b, err := export.BOQFor(d, r, cellID, f)
	var bank *export.BankError
	switch {
	case err == nil:
		return b, nil
	case !errors.As(err, &bank):
		return nil, fmt.Errorf("cannot make the bill of quantities: %w", err)
	case bank.Problem == export.NoBank:
		return nil, fmt.Errorf("no candidate carries the load at worst case, so there is no bank to list (capbank size --format text says why)")
	}
	usage := func(w io.Writer) { fmt.Fprintln(w, `Run "capbank size -h" for the flags.`) }
	if bank.Problem == export.NotACandidate {
		return nil, usageFailure(stderr, usage, "capbank size: --cell %q is not a cell of this design; its cells are %s", cellID, cellList(r, false))
	}
	return nil, usageFailure(stderr, usage, "capbank size: --cell %q cannot carry the load (%s); feasible cells: %s", cellID, bank.Reason, cellList(r, true))
}

// cellList lists the report's cell ids (the feasible ones only, if asked),
// or says there are none.
func cellList(r *sizing.Report, feasibleOnly bool) string {
	var ids []string
	for _, c := range r.Candidates {
		if c.Feasible || !feasibleOnly {
			ids = append(ids, c.CellID)
		}
	}
	if len(ids) == 0 {
		return "none"
	}
	return strings.Join(ids, ", ")
}

// writeExport writes the export f (export.Write). A panic in an export
// writer is a bug in capbank and becomes an internalError.
func writeExport(w io.Writer, f export.Format, d *sizing.Design, r *sizing.Report, b *sizing.BOQ, opt export.PDFOptions) (err error) {
	defer func() {
		if p := recover(); p != nil {
			err = &internalError{value: p, stack: debug.Stack()}
		}
	}()
	return export.Write(w, f, d, r, b, opt)
}
