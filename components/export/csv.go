package export

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strings"

	"capbank/sizing"
)

// UTF8BOM is the byte-order mark (U+FEFF, the bytes EF BB BF) that starts
// the BOQ CSV. Its text holds Ω, − and →; a spreadsheet opening a CSV
// without the mark reads it in the machine's legacy code page and shows
// mojibake ("Î©" for Ω), with it as UTF-8 (Unicode 15 §23.8: U+FEFF at
// the start of a stream is a signature, not content).
const UTF8BOM = "\uFEFF"

// CSVHeader is the header row of the BOQ in CSV. Prices are in the
// currency of the currency column.
var CSVHeader = []string{"item", "description", "quantity", "unit", "unit_price", "extended_price", "currency"}

// BOQCSV writes the bill of quantities as CSV (RFC 4180: comma separated,
// CRLF line ends, fields quoted where needed) in UTF-8 after the mark
// UTF8BOM: the header row CSVHeader,
// one row per line, then a row "total" whose extended_price is the sum of
// the priced lines, and a row "total complete" whose description is "yes",
// or "no: ..." naming the lines without a price (they are not in the
// total). Numbers are plain: dot decimal, full precision, no grouping; an
// unpriced line has empty price fields. Text cells go through Neutralise.
func BOQCSV(w io.Writer, b *sizing.BOQ) error {
	if b == nil {
		return errors.New("export: no bill of quantities to write")
	}
	if _, err := io.WriteString(w, UTF8BOM); err != nil {
		return fmt.Errorf("cannot write the bill of quantities as CSV: %w", err)
	}
	cw := csv.NewWriter(w)
	cw.UseCRLF = true
	cur := Neutralise(b.Currency)
	rows := [][]string{CSVHeader}
	for _, l := range b.Lines {
		rows = append(rows, []string{
			Neutralise(l.Item), Neutralise(l.Description), plainNumber(l.Quantity), Neutralise(l.Unit),
			optPlain(l.UnitPrice), optPlain(l.ExtendedPrice), cur,
		})
	}
	rows = append(rows,
		[]string{"total", "sum of the priced lines' extended prices", "", "", "", plainNumber(b.Total), cur},
		[]string{"total complete", completeness(b), "", "", "", "", ""},
	)
	if err := cw.WriteAll(rows); err != nil {
		return fmt.Errorf("cannot write the bill of quantities as CSV: %w", err)
	}
	return nil
}

func optPlain(p *float64) string {
	if p == nil {
		return ""
	}
	return plainNumber(*p)
}

// completeness says whether the BOQ's total holds every line: "yes", or
// "no: " and the items without a unit price.
func completeness(b *sizing.BOQ) string {
	if b.Complete {
		return "yes"
	}
	var missing []string
	for _, l := range b.Lines {
		if l.UnitPrice == nil {
			missing = append(missing, l.Item)
		}
	}
	return "no: without a unit price, not in the total: " + strings.Join(missing, ", ")
}
