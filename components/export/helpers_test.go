package export

import (
	"math"
	"os"
	"testing"

	"capbank/sizing"
)

// upsDesign is the demo design the exports are checked on.
const upsDesign = "../../testdata/ups-ride-through.json"

// sized is a design with its report and the bill of quantities of one cell.
type sized struct {
	d *sizing.Design
	r *sizing.Report
	b *sizing.BOQ
	c *sizing.Candidate
}

// mustSize decodes the design file, lets edit change it, sizes it and
// makes the bill of quantities of cellID ("" for the recommended cell)
// with the engine.
func mustSize(tb testing.TB, path string, edit func(*sizing.Design), cellID string) sized {
	tb.Helper()
	d := mustDecode(tb, path)
	if edit != nil {
		edit(d)
	}
	r, err := sizing.Size(d)
	if err != nil {
		tb.Fatal(err)
	}
	b, err := sizing.BillOfQuantities(d, r, cellID)
	if err != nil {
		tb.Fatal(err)
	}
	c := candidateByID(r, b.CellID)
	if c == nil {
		tb.Fatalf("no candidate %s", b.CellID)
	}
	return sized{d, r, b, c}
}

// mustDecode reads the design file at path.
func mustDecode(tb testing.TB, path string) *sizing.Design {
	tb.Helper()
	f, err := os.Open(path)
	if err != nil {
		tb.Fatal(err)
	}
	defer f.Close()
	d, err := sizing.DecodeDesign(f)
	if err != nil {
		tb.Fatal(err)
	}
	return d
}

// withExtras adds extra lines to the design's bill of quantities.
func withExtras(extras ...sizing.BOQExtra) func(*sizing.Design) {
	return func(d *sizing.Design) {
		if d.BOQ == nil {
			d.BOQ = &sizing.BOQOptions{}
		}
		d.BOQ.Extras = append(d.BOQ.Extras, extras...)
	}
}

func price(x float64) *float64 { return &x }

// closeTo reports whether got is within rel of want (or within rel of 0
// when want is 0).
func closeTo(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Max(math.Abs(want), 1)
}

// formulaPrefixes are the text cells a spreadsheet may run as a formula
// (the OWASP "CSV injection" list: =, +, -, @, tab, carriage return).
var formulaPrefixes = []struct {
	name string
	item string
}{
	{"equals", `=HYPERLINK("x")`},
	{"plus", "+1"},
	{"minus", "-1"},
	{"at", "@SUM(A1)"},
	{"tab", "\tx"},
	{"carriage return", "\rx"},
}
