package sizing

import (
	"math"
	"strings"
	"testing"
)

func TestBillOfQuantitiesUPSDemo(t *testing.T) {
	t.Parallel()
	d := loadDesign(t, "ups-ride-through.json")
	r := mustSize(t, d)
	b, err := BillOfQuantities(d, r, "")
	if err != nil {
		t.Fatal(err)
	}
	c := r.Candidates[0]
	if b.CellID != c.CellID || b.Currency != "EUR" || !b.Complete {
		t.Fatalf("BOQ for %s in %q, complete %v", b.CellID, b.Currency, b.Complete)
	}
	lines := map[string]BOQLine{}
	for _, l := range b.Lines {
		lines[l.Item] = l
	}
	// Hand counted from the arrangement s × p (BillOfQuantities doc):
	// cells s·p; one balancing resistor per cell; links p·(s − 1) + 2·p.
	s, p := float64(c.Series), float64(c.Parallel)
	checks := []struct {
		item       string
		qty, price float64
	}{
		{"cell", s * p, 6.4},
		{"balancing resistor", s * p, 0.04},
		{"interconnect link", p*(s-1) + 2*p, 0.35},
		{"bleeder resistor", 1, 6.5},
		{"enclosure", 1, 145},
		{"fuse", 5, 4.2},
	}
	total := 0.0
	for _, ch := range checks {
		l, ok := lines[ch.item]
		if !ok {
			t.Fatalf("no %q line", ch.item)
		}
		if l.Quantity != ch.qty || l.UnitPrice == nil || *l.UnitPrice != ch.price {
			t.Errorf("%s: %v × %v, want %v × %v", ch.item, l.Quantity, l.UnitPrice, ch.qty, ch.price)
		}
		near(t, ch.item+" extended", *l.ExtendedPrice, ch.qty*ch.price, 1e-12)
		total += ch.qty * ch.price
	}
	near(t, "total", b.Total, total, 1e-12)
	if !strings.Contains(lines["balancing resistor"].Description, "270 Ω") {
		t.Errorf("resistor line %q does not give the 270 Ω value", lines["balancing resistor"].Description)
	}
	near(t, "cell mass", *b.CellMassKg, 0.075*s*p, 1e-12)
}

func TestPlanBleeder(t *testing.T) {
	t.Parallel()
	// A 400 V, 2 F bank: above the 60 V ES1 limit, so the target is 60 V.
	// R = 300 s / (2 F · ln(400/60)) = 79.06 Ω → E24 floor 75 Ω; peak
	// 400²/75 = 2133 W > 100 W, so R = E24 ceiling of 400²/100 = 1600 Ω →
	// 1600 Ω (1.6 kΩ is in E24); time = 1600·2·ln(400/60) = 6070.6 s
	// (REFERENCES.md 3.6, RC discharge).
	b := PlanBleeder(400, 2, 300)
	near(t, "target", b.TargetV, 60, 0)
	near(t, "resistor", b.ResistorOhm, 1600, 1e-12)
	near(t, "peak", b.PeakW, 100, 1e-12)
	near(t, "rating", b.PowerW, 100, 0)
	near(t, "time to 60 V", b.TimeS, 1600*2*math.Log(400.0/60), 1e-12)
	near(t, "time to 2 V", b.TimeTo2VS, 1600*2*math.Log(200), 1e-12)
	if !b.Slower || b.AskedS != 300 {
		t.Errorf("capped bleeder: slower %v, asked %v; want true, 300", b.Slower, b.AskedS)
	}
	// A small 12 V, 10 F bank: target 2 V; R = 300/(10·ln 6) = 16.74 Ω →
	// 16 Ω; peak 144/16 = 9 W → 10 W part; time = 16·10·ln 6 = 286.7 s.
	b = PlanBleeder(12, 10, 300)
	near(t, "small target", b.TargetV, 2, 0)
	near(t, "small resistor", b.ResistorOhm, 16, 1e-12)
	near(t, "small rating", b.PowerW, 10, 0)
	near(t, "small time", b.TimeS, 160*math.Log(6), 1e-12)
	if b.Slower {
		t.Errorf("a 9 W bleeder is not capped")
	}
}

func TestBillOfQuantitiesUnpricedAndErrors(t *testing.T) {
	t.Parallel()
	d := validDesign()
	d.Cells[0].UnitPrice = nil
	r := mustSize(t, d)
	b, err := BillOfQuantities(d, r, "a")
	if err != nil {
		t.Fatal(err)
	}
	// No prices anywhere: every line listed, none in the total.
	if b.Complete || b.Total != 0 || len(b.Lines) < 3 {
		t.Errorf("unpriced BOQ: complete %v, total %v, %d lines", b.Complete, b.Total, len(b.Lines))
	}
	if _, err := BillOfQuantities(d, r, "nope"); err == nil || !strings.Contains(err.Error(), `"nope"`) {
		t.Errorf("unknown cell: %v", err)
	}
}
