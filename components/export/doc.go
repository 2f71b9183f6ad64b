// Package export writes a sized bank out of capbank: the bill of quantities
// as CSV, XLSX or JSON, and the design report as PDF. Each writer takes what
// sizing produced — the design, its report and the bill of quantities from
// sizing.BillOfQuantities — and writes one document to an io.Writer; the
// command line (capbank size --format) and the web pages' download buttons
// call the same functions: BOQFor chooses the bank (the recommended one, or
// a feasible cell asked for) and Write picks the writer of the format.
//
//	d, _ := sizing.DecodeDesign(file)
//	r, _ := sizing.Size(d)
//	f, _ := export.LookupFormat("pdf")
//	b, err := export.BOQFor(d, r, "", f) // "" is the recommended cell; a refusal is a *BankError
//	_ = export.Write(w, f, d, r, b, export.PDFOptions{Paper: export.A4, Date: today})
//
// Numbers are written by components/figures, the one SI formatter.
//
// Text a user typed (names, ids, extra lines, the currency) reaches every
// format safely: in CSV and XLSX a text cell that a spreadsheet would take
// as a formula is prefixed with a single quote (see Neutralise), and in the
// PDF every string goes through one helper that maps it to the core font's
// code page.
package export
