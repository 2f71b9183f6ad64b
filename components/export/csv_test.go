package export

import (
	"bytes"
	"encoding/csv"
	"strconv"
	"strings"
	"testing"

	"capbank/sizing"
)

// readCSV writes the BOQ as CSV and parses it back with encoding/csv.
func readCSV(t *testing.T, b *sizing.BOQ) ([][]string, string) {
	t.Helper()
	var buf bytes.Buffer
	if err := BOQCSV(&buf, b); err != nil {
		t.Fatal(err)
	}
	// The UTF-8 byte-order mark first (Unicode 15 §23.8), then RFC 4180.
	raw, ok := bytes.CutPrefix(buf.Bytes(), []byte{0xEF, 0xBB, 0xBF})
	if !ok {
		t.Fatalf("the CSV does not start with the UTF-8 byte-order mark EF BB BF: %.12q", buf.Bytes())
	}
	rd := csv.NewReader(bytes.NewReader(raw))
	rd.FieldsPerRecord = len(CSVHeader)
	rows, err := rd.ReadAll()
	if err != nil {
		t.Fatalf("the CSV does not parse back: %v\n%s", err, buf.String())
	}
	return rows, string(raw)
}

func parseNum(t *testing.T, s, what string) float64 {
	t.Helper()
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("%s %q is not a plain number: %v", what, s, err)
	}
	return x
}

func TestBOQCSVRoundTrip(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	rows, raw := readCSV(t, s.b)

	// RFC 4180 §2: records end in CRLF.
	if !strings.HasSuffix(raw, "\r\n") || strings.Count(raw, "\r\n") != len(rows) {
		t.Errorf("records do not end in CRLF:\n%q", raw)
	}
	// The header the brief and README give, units in the column names.
	if got, want := strings.Join(rows[0], ","), "item,description,quantity,unit,unit_price,extended_price,currency"; got != want {
		t.Errorf("header %q, want %q", got, want)
	}
	// One row per engine line, then the total and the completeness rows.
	if len(rows) != 1+len(s.b.Lines)+2 {
		t.Fatalf("%d rows, want header + %d lines + 2", len(rows), len(s.b.Lines))
	}
	sum := 0.0
	for i, l := range s.b.Lines {
		row := rows[1+i]
		if row[0] != l.Item || row[3] != l.Unit || row[6] != "EUR" {
			t.Errorf("row %d = %q, want item %q, unit %q, currency EUR (the design's boq.currency)", i+1, row, l.Item, l.Unit)
		}
		qty := parseNum(t, row[2], "quantity")
		if qty != l.Quantity {
			t.Errorf("%s: quantity %v, want the engine's %v", l.Item, qty, l.Quantity)
		}
		if row[4] == "" || row[5] == "" {
			t.Errorf("%s: price fields %q, %q empty; the demo design prices every line", l.Item, row[4], row[5])
			continue
		}
		up, ext := parseNum(t, row[4], "unit_price"), parseNum(t, row[5], "extended_price")
		// extended = quantity × unit price (BOQLine), exact to rounding.
		if !closeTo(ext, qty*up, 1e-12) {
			t.Errorf("%s: %v × %v = %v, but extended_price is %v", l.Item, qty, up, qty*up, ext)
		}
		sum += ext
	}
	total := rows[len(rows)-2]
	if total[0] != "total" || total[6] != "EUR" {
		t.Errorf("total row %q", total)
	}
	got := parseNum(t, total[5], "total")
	// The engine's total (sizing.BillOfQuantities), and the sum of the rows.
	if !closeTo(got, s.b.Total, 1e-12) || !closeTo(got, sum, 1e-12) {
		t.Errorf("total %v, want the engine's %v and the rows' sum %v", got, s.b.Total, sum)
	}
	// Own arithmetic from the demo prices and the engine's 15 s × 5 p bank:
	// 75 × 6.40 + 75 × 0.04 + 80 × 0.35 + 6.50 + 145 + 5 × 4.20 = 683.50.
	if !closeTo(got, 683.5, 1e-12) {
		t.Errorf("total %v, want 683.50 (hand sum of the demo lines)", got)
	}
	if done := rows[len(rows)-1]; done[0] != "total complete" || done[1] != "yes" {
		t.Errorf("completeness row %q, want total complete,yes (every demo line is priced)", done)
	}
}

// A line without a price has empty price fields, is not in the total, and
// the completeness row names it.
func TestBOQCSVUnpricedLine(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, withExtras(sizing.BOQExtra{Item: "monitoring", Description: "price to follow", Quantity: 1}), "")
	rows, _ := readCSV(t, s.b)
	line := rows[len(rows)-3]
	if line[0] != "monitoring" || line[4] != "" || line[5] != "" {
		t.Errorf("unpriced row %q, want empty unit_price and extended_price", line)
	}
	// Same total as without the line: 683.50 (TestBOQCSVRoundTrip).
	if got := parseNum(t, rows[len(rows)-2][5], "total"); !closeTo(got, 683.5, 1e-12) || !closeTo(got, s.b.Total, 1e-12) {
		t.Errorf("total %v, want 683.50, the priced lines only", got)
	}
	if done := rows[len(rows)-1][1]; done != "no: without a unit price, not in the total: monitoring" {
		t.Errorf("completeness %q", done)
	}
}

func TestBOQCSVNeutralisesFormulas(t *testing.T) {
	t.Parallel()
	for _, tt := range formulaPrefixes {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			s := mustSize(t, upsDesign, withExtras(sizing.BOQExtra{
				Item: tt.item, Description: tt.item, Unit: tt.item, Quantity: 2, UnitPrice: price(3),
			}), "")
			rows, _ := readCSV(t, s.b)
			row := rows[len(rows)-3]
			// A single quote in front (OWASP CSV injection advice). With
			// UseCRLF, encoding/csv drops a lone CR inside a field, so "\rx"
			// reads back as "'x": the quote still leads.
			want := "'" + strings.ReplaceAll(tt.item, "\r", "")
			for col, name := range map[int]string{0: "item", 1: "description", 3: "unit"} {
				if row[col] != want {
					t.Errorf("%s %q, want %q", name, row[col], want)
				}
			}
			// Numbers are not touched: 2 × 3 = 6.
			if row[2] != "2" || row[4] != "3" || row[5] != "6" {
				t.Errorf("numbers %q %q %q, want 2 3 6", row[2], row[4], row[5])
			}
		})
	}
}

func TestNeutralise(t *testing.T) {
	t.Parallel()
	tests := []struct{ in, want string }{
		{`=1+1`, `'=1+1`},
		{"+1", "'+1"},
		{"-1", "'-1"},
		{"@x", "'@x"},
		{"\tx", "'\tx"},
		{"\rx", "'\rx"},
		// Left alone: text that does not start with a trigger.
		{"cell", "cell"},
		{"a=b", "a=b"},
		{" =1", " =1"},
		{"", ""},
	}
	for _, tt := range tests {
		if got := Neutralise(tt.in); got != tt.want {
			t.Errorf("Neutralise(%q) = %q, want %q", tt.in, got, tt.want)
		}
	}
}

func TestPlainNumber(t *testing.T) {
	t.Parallel()
	// strconv 'f', -1: shortest round-trip decimal, no exponent, no grouping.
	tenth := 0.1 // a variable, so 0.1 + 0.2 is float64 arithmetic, not an exact constant
	tests := []struct {
		in   float64
		want string
	}{
		{683.5, "683.5"},
		{1234567.25, "1234567.25"},
		{1e-9, "0.000000001"},
		{tenth + 0.2, "0.30000000000000004"},
		{75, "75"},
	}
	for _, tt := range tests {
		if got := plainNumber(tt.in); got != tt.want {
			t.Errorf("plainNumber(%v) = %q, want %q", tt.in, got, tt.want)
		}
	}
}

// TestBOQCSVUTF8Mark checks that the CSV starts with the UTF-8 byte-order
// mark and that the text beyond ASCII it carries (Ω, →, −, ×) reads back
// unchanged: a spreadsheet takes the file as UTF-8 only with the mark.
func TestBOQCSVUTF8Mark(t *testing.T) {
	t.Parallel()
	s := mustSize(t, upsDesign, nil, "")
	var buf bytes.Buffer
	if err := BOQCSV(&buf, s.b); err != nil {
		t.Fatal(err)
	}
	// Unicode 15 §23.8: the UTF-8 form of U+FEFF is EF BB BF.
	if got := buf.Bytes()[:3]; !bytes.Equal(got, []byte{0xEF, 0xBB, 0xBF}) {
		t.Fatalf("first bytes % X, want EF BB BF", got)
	}
	rows, _ := readCSV(t, s.b)
	beyond := 0
	for i, l := range s.b.Lines {
		if got := rows[1+i][1]; got != l.Description {
			t.Errorf("line %d description read back %q, want %q", i+1, got, l.Description)
		}
		if strings.ContainsAny(l.Description, "Ω→−×") {
			beyond++
		}
	}
	// The bleeder line says "18 Ω ... 42 V → 2 V" (sizing's BOQ text).
	if beyond == 0 {
		t.Error("no line holds Ω, →, − or ×: the check above proves nothing")
	}
}
