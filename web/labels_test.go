package web

import (
	"encoding/json"
	"net/http"
	"net/url"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"

	"capbank/components/figures"
	"capbank/sizing"
	"capbank/web/share"
)

// TestPagePricesCarryTheCurrency: every price on the page says the design's
// boq.currency, and the headline gives the bank's total price (the bill of
// quantities' total, sizing.BillOfQuantities), mass and volume (issue 17).
func TestPagePricesCarryTheCurrency(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := designValues()
	v.Set("boq.currency", "EUR")
	v.Set("boq.link_unit_price", "0.35")
	v.Set("boq.resistor_unit_price", "0.04")
	v.Set("boq.balancer_unit_price", "4.2")
	v.Set("boq.bleeder_unit_price", "6.5")
	rec := postForm(t, s, "/", v, false)
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)

	d := wantDesign(t)
	d.BOQ = &sizing.BOQOptions{Currency: "EUR", LinkUnitPrice: fp(0.35), ResistorUnitPrice: fp(0.04), BalancerUnitPrice: fp(4.2), BleederUnitPrice: fp(6.5)}
	rep, err := sizing.Size(d)
	if err != nil {
		t.Fatal(err)
	}
	b, err := sizing.BillOfQuantities(d, rep, "")
	if err != nil {
		t.Fatal(err)
	}
	rec0 := rep.Candidates[0]
	// The total of every priced line, not the cells' price alone
	// (sizing.BillOfQuantities adds links, resistors and the bleeder).
	if b.Total <= *rec0.TotalPrice {
		t.Fatalf("test design: BOQ total %v not above the cells' %v", b.Total, *rec0.TotalPrice)
	}
	for sel, want := range map[string]string{
		"[data-testid=total-price]":  figures.Money(b.Total) + " EUR",
		"[data-testid=total-mass]":   figures.SI(*rec0.MassKg, "kg", 3),
		"[data-testid=total-volume]": figures.SI(*rec0.VolumeL, "L", 3),
	} {
		if got := text(doc, sel); got != strings.ReplaceAll(want, "\u00a0", " ") {
			t.Errorf("%s reads %q, want %q", sel, got, want)
		}
	}
	// The candidates table and the figures' price row.
	for i := range doc.Find("[data-testid=candidate]").Nodes {
		row := doc.Find("[data-testid=candidate]").Eq(i)
		if c := rep.Candidates[i]; c.TotalPrice != nil && !strings.Contains(row.Text(), figures.Money(*c.TotalPrice)+"\u00a0EUR") {
			t.Errorf("candidate row %q has no price in EUR", row.Text())
		}
	}
	price := doc.Find("[data-testid=figures] tr").FilterFunction(func(_ int, s *goquery.Selection) bool {
		return strings.TrimSpace(s.Find("th").Text()) == "Price"
	})
	if got, want := price.Find("td").First().Text(), figures.Money(*rec0.TotalPrice)+"\u00a0EUR"; got != want {
		t.Errorf("figures' Price row reads %q, want %q", got, want)
	}
}

// TestCellFormMessagesUseLabels: the library's cell form says "the rated
// voltage", the cells API keeps the key rated_v (issue 17).
func TestCellFormMessagesUseLabels(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	vals := url.Values{"id": {"low-surge"}, "rated_v": {"2.7"}, "surge_v": {"2.5"}, "capacitance_f": {"100"}, "esr_ohm": {"12m"}}
	rec := postForm(t, s, "/library", vals, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	// sizing.cellRules: surge below rated, both figures quoted.
	if got, want := text(parse(t, rec), "#msg-surge_v"), "must be at least the rated voltage (2.5 V < 2.7 V)"; got != want {
		t.Errorf("surge voltage says %q, want %q", got, want)
	}
	body := `{"id":"low-surge","rated_v":2.7,"surge_v":2.5,"capacitance_f":100,"esr_ohm":0.012}`
	p := wantProblem(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", body), http.StatusUnprocessableEntity, "surge_v")
	for _, e := range p.Errors {
		if e.Field == "surge_v" && !strings.Contains(e.Message, "rated_v") {
			t.Errorf("API problem %q, want the key rated_v", e.Message)
		}
	}
}

// TestKindChangeWithoutJavaScript: the page posted whole (no htmx) with a
// step's kind changed from power to current: the value typed in W is
// cleared, not read as 350 A, a note beside it says why, the value is then
// asked for, and no bank is sized from it (issue 17).
func TestKindChangeWithoutJavaScript(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	v := designValues()
	v.Set("load.steps[0].kind", "current")
	v.Set("load.steps[0].kind_was", "power")
	v.Set("load.steps[0].value", "350")
	rec := postForm(t, s, "/", v, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	doc := parse(t, rec)
	if got, _ := doc.Find(`input[name="load.steps[0].value"]`).Attr("value"); got != "" {
		t.Errorf("step 1 value reads %q, want it cleared", got)
	}
	if note := text(doc, "#row-load-steps-0 [data-testid=kind-note]"); !strings.Contains(note, "from power (W) to current (A)") {
		t.Errorf("note %q, want it to say the kind changed from power to current", note)
	}
	if got, _ := doc.Find(`input[name="load.steps[0].kind_was"]`).Attr("value"); got != "current" {
		t.Errorf("kind_was %q, want current for the next post", got)
	}
	if msg := text(doc, "#msg-load-steps-0-value"); !strings.Contains(msg, "is required") {
		t.Errorf("value message %q, want it asked for", msg)
	}
	if doc.Find("[data-testid=candidate]").Length() != 0 {
		t.Error("a bank was sized from a value typed for another kind")
	}
	// The same kind posted again keeps the value.
	v.Set("load.steps[0].kind_was", "current")
	doc = parse(t, postForm(t, s, "/", v, false))
	if got, _ := doc.Find(`input[name="load.steps[0].value"]`).Attr("value"); got != "350" {
		t.Errorf("with the kind unchanged the value reads %q, want 350", got)
	}
}

// TestSavedDesignsSummary: the saved designs page gives each design's
// recommended bank, worst-case runtime and total price (with its
// currency), as the design page's headline does (issue 17).
func TestSavedDesignsSummary(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	d := wantDesign(t)
	d.Name = "bus hold-up"
	d.BOQ = &sizing.BOQOptions{Currency: "EUR", LinkUnitPrice: fp(0.35), ResistorUnitPrice: fp(0.04), BalancerUnitPrice: fp(4.2), BleederUnitPrice: fp(6.5)}
	body, err := json.Marshal(map[string]any{"name": "bus hold-up", "design": d})
	if err != nil {
		t.Fatal(err)
	}
	wantStatus(t, do(t, s, http.MethodPost, "/api/v1/designs", "application/json", string(body)), http.StatusCreated)

	rep, err := sizing.Size(d)
	if err != nil {
		t.Fatal(err)
	}
	b, err := sizing.BillOfQuantities(d, rep, "")
	if err != nil {
		t.Fatal(err)
	}
	c := rep.Candidates[0]
	doc := parse(t, get(t, s, "/designs"))
	nb := func(s string) string { return strings.ReplaceAll(s, "\u00a0", " ") }
	for sel, want := range map[string]string{
		"[data-testid=summary-bank]":    figures.BankText(c) + " of " + c.CellID,
		"[data-testid=summary-runtime]": nb(figures.Runtime(&c)),
		"[data-testid=summary-price]":   nb(figures.Money(b.Total) + " EUR"),
	} {
		if got := text(doc, sel); got != want {
			t.Errorf("%s reads %q, want %q", sel, got, want)
		}
	}
}

// TestComparePricesCarryTheCurrency: the comparison's price rows say the
// design's currency (issue 17).
func TestComparePricesCarryTheCurrency(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	d := wantDesign(t)
	d.BOQ = &sizing.BOQOptions{Currency: "EUR"}
	data, err := json.Marshal(d)
	if err != nil {
		t.Fatal(err)
	}
	tok, err := share.Encode(data)
	if err != nil {
		t.Fatal(err)
	}
	rec := get(t, s, "/compare?d="+url.QueryEscape(tok)+"&cell=demo-2v7-650f&cell=demo-3v0-500f")
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	rep, err := sizing.Size(d)
	if err != nil {
		t.Fatal(err)
	}
	for i, id := range []string{"demo-2v7-650f", "demo-3v0-500f"} {
		for _, c := range rep.Candidates {
			if c.CellID == id && c.TotalPrice != nil {
				want := figures.Money(*c.TotalPrice) + "\u00a0EUR"
				if got := rowNamed(doc, "Price").Find("td").Eq(i).Text(); !strings.Contains(got, want) {
					t.Errorf("%s: price %q, want %q", id, got, want)
				}
			}
		}
	}
}
