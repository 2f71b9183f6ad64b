package export

import (
	"bytes"
	"errors"
	"strings"
	"testing"

	"capbank/sizing"
)

// TestBOQFor walks the "which bank" choice the command line and the web
// share: the recommended bank, a chosen one, and each refusal.
func TestBOQFor(t *testing.T) {
	t.Parallel()
	d := mustDecode(t, upsDesign)
	// demo-c100-2v5 rated for 1 mA cannot carry the 100+ A the load draws.
	for i := range d.Cells {
		if d.Cells[i].ID == "demo-c100-2v5" {
			d.Cells[i].PeakCurrentA, d.Cells[i].MaxCurrentA = price(0.001), price(0.001)
		}
	}
	r, err := sizing.Size(d)
	if err != nil {
		t.Fatal(err)
	}
	csv, _ := LookupFormat("boq-csv")
	pdf, _ := LookupFormat("pdf")
	// Banks as capbank size --format text lists them for this design:
	// demo-c400-2v8 recommended at 15 s × 5 p, demo-c1200-2v7 at 16 s × 2 p.
	ok := []struct {
		name, cell, wantCell string
		series, parallel     int
	}{
		{"recommended", "", "demo-c400-2v8", 15, 5},
		{"chosen", "demo-c1200-2v7", "demo-c1200-2v7", 16, 2},
	}
	for _, tc := range ok {
		b, err := BOQFor(d, r, tc.cell, csv)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if b.CellID != tc.wantCell || b.Series != tc.series || b.Parallel != tc.parallel {
			t.Errorf("%s: bank %s %d s × %d p, want %s %d s × %d p", tc.name, b.CellID, b.Series, b.Parallel, tc.wantCell, tc.series, tc.parallel)
		}
	}

	refused := []struct {
		name, cell string
		want       BankProblem
		message    string
	}{
		{"not a cell", "no-such-cell", NotACandidate, `"no-such-cell" is not a candidate cell of this design`},
		{"infeasible", "demo-c100-2v5", NotFeasible, `"demo-c100-2v5" cannot carry the load (`},
	}
	for _, tc := range refused {
		_, err := BOQFor(d, r, tc.cell, csv)
		var bank *BankError
		if !errors.As(err, &bank) || bank.Problem != tc.want || bank.CellID != tc.cell {
			t.Fatalf("%s: error %v, want a BankError %d for %q", tc.name, err, tc.want, tc.cell)
		}
		if !strings.HasPrefix(bank.Error(), tc.message) {
			t.Errorf("%s: message %q, want it to start %q", tc.name, bank.Error(), tc.message)
		}
	}

	// Nothing feasible: the PDF still goes out, without a bank; a BOQ
	// format has nothing to list.
	for i := range d.Cells {
		d.Cells[i].PeakCurrentA, d.Cells[i].MaxCurrentA = price(0.001), price(0.001)
	}
	none, err := sizing.Size(d)
	if err != nil {
		t.Fatal(err)
	}
	if b, err := BOQFor(d, none, "", pdf); b != nil || err != nil {
		t.Errorf("PDF with nothing feasible: %v, %v; want no BOQ and no error", b, err)
	}
	var bank *BankError
	if _, err := BOQFor(d, none, "", csv); !errors.As(err, &bank) || bank.Problem != NoBank {
		t.Errorf("CSV with nothing feasible: %v, want a BankError NoBank", err)
	}
}

// TestWriteDispatches checks that Write picks the writer of each format,
// by the first bytes each format starts with.
func TestWriteDispatches(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	opt := PDFOptions{Paper: A4, Date: reportDate}
	// File signatures: ZIP (XLSX) "PK", PDF "%PDF-", the UTF-8 byte-order
	// mark and the CSV header, and a JSON object.
	for name, start := range map[string]string{"boq-csv": UTF8BOM + "item,description", "boq-xlsx": "PK", "boq-json": "{", "pdf": "%PDF-"} {
		f, _ := LookupFormat(name)
		var buf bytes.Buffer
		if err := Write(&buf, f, s.d, s.r, s.b, opt); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if !strings.HasPrefix(buf.String(), start) {
			t.Errorf("%s starts %.20q, want %q", name, buf.String(), start)
		}
	}
	if err := Write(&bytes.Buffer{}, Format{Name: "design"}, s.d, s.r, s.b, opt); err == nil {
		t.Error("Write wrote a format it has no writer for")
	}
}
