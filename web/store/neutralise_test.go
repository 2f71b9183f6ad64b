package store

import (
	"bytes"
	"encoding/csv"
	"strings"
	"testing"

	"capbank/sizing"
)

// The cell library's CSV export neutralises text a spreadsheet would run
// as a formula, one case per lead character (OWASP "CSV injection": =, +,
// -, @, tab, carriage return), in every text column: id, name, notes. No
// field of the file starts with a lead, and each of those three has the
// single quote in front.
func TestExportCellsCSVNeutralisesEachLead(t *testing.T) {
	t.Parallel()
	for _, c := range []struct{ name, lead string }{
		{"equals", "="}, {"plus", "+"}, {"minus", "-"}, {"at", "@"}, {"tab", "\t"}, {"carriage return", "\r"},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			text := c.lead + `HYPERLINK("http://example.invalid","x")`
			cell := sizing.Cell{ID: text, Name: text, Notes: text, RatedV: 2.7, CapacitanceF: 100, ESROhm: 0.009} // invented
			var out bytes.Buffer
			if err := ExportCellsCSV(&out, []sizing.Cell{cell}); err != nil {
				t.Fatal(err)
			}
			rows, err := csv.NewReader(&out).ReadAll()
			if err != nil {
				t.Fatal(err)
			}
			if len(rows) != 2 {
				t.Fatalf("%d rows, want the header and one cell", len(rows))
			}
			col := map[string]int{}
			for i, h := range rows[0] {
				col[h] = i
			}
			for i, v := range rows[1] {
				if v != "" && strings.ContainsRune("=+-@\t\r", rune(v[0])) {
					t.Errorf("column %s starts a formula: %q", rows[0][i], v)
				}
			}
			// encoding/csv reads a lone CR inside a quoted field as it is;
			// the quote leads in every case.
			for _, name := range []string{"id", "name", "notes"} {
				if got := rows[1][col[name]]; got != "'"+text {
					t.Errorf("%s %q, want %q", name, got, "'"+text)
				}
			}
		})
	}
}
