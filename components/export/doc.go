// Package export writes a sized bank out of capbank: the bill of quantities
// as CSV, XLSX or JSON, and the design report as PDF. Each writer takes what
// sizing produced — the design, its report and the bill of quantities from
// sizing.BillOfQuantities — and writes one document to an io.Writer; the
// command line (capbank size --format) and the web pages' download buttons
// call the same functions.
//
//	d, _ := sizing.DecodeDesign(file)
//	r, _ := sizing.Size(d)
//	b, _ := sizing.BillOfQuantities(d, r, "") // "" is the recommended cell
//	_ = export.BOQCSV(w, b)
//	_ = export.ReportPDF(w, d, r, b, export.PDFOptions{Paper: export.A4, Date: today})
//
// Text a user typed (names, ids, extra lines, the currency) reaches every
// format safely: in CSV and XLSX a text cell that a spreadsheet would take
// as a formula is prefixed with a single quote (see Neutralise), and in the
// PDF every string goes through one helper that maps it to the core font's
// code page.
package export
