package web

import (
	"net/url"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"capbank/components/figures"
	"capbank/sizing"
	"capbank/web/form"
	"capbank/web/store"
)

// sizeValues sizes the design the form values give and returns the bank
// text of cell id's candidate.
func sizeValues(t *testing.T, v url.Values, id string) string {
	t.Helper()
	dec := form.Read(v).Decode(store.DemoCell)
	if len(dec.Problems) > 0 {
		t.Fatalf("problems: %v", dec.Problems)
	}
	rep, err := sizing.Size(dec.Design)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range rep.Candidates {
		if c.CellID == id && c.Feasible {
			return figures.BankText(c)
		}
	}
	t.Fatalf("no feasible candidate %s", id)
	return ""
}

// TestBrowserModulesAndDerating: a user types a cell of their own into the
// example, then its voltage derating table as "25 °C: 2.7 V, 30 °C: 2.2 V"
// (the example's ambient is 30 °C, so the ceiling falls from the
// example's 2.5 V per cell to 2.2 V: 48 V / 2.2 V = 21.8, 22 in series),
// then a series count in multiples of 8 (22 rounds up to 24); the own
// cell's bank in the candidates table follows each, in place, as
// sizing.Size gives it. A derating point typed without its colon is
// named beside the field.
func TestBrowserModulesAndDerating(t *testing.T) {
	ctx, url, logs := browser(t, 1280, 900)
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/"), chromedp.WaitVisible(chromedp.CSS("[data-testid=bank]"))), "opening the example")
	htmxReady(t, ctx)
	run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker = 19`), "marking the window")

	v := exampleValues()
	own := map[string]string{"inline.id": "own", "inline.rated_v": "2.7", "inline.capacitance_f": "650", "inline.esr_ohm": "0.8m"}
	for k, val := range own {
		v.Set(k, val)
	}
	plain := sizeValues(t, v, "own")
	v.Set("inline.voltage_derating", "25 °C: 2.7 V, 30 °C: 2.2 V")
	derated := sizeValues(t, v, "own")
	v.Set("series_multiple", "8")
	multiple := sizeValues(t, v, "own")
	if !strings.HasPrefix(plain, "20 in series") || !strings.HasPrefix(derated, "22 in series") || !strings.HasPrefix(multiple, "24 in series") {
		t.Fatalf("the test needs 20, 22 then 24 in series: %q, %q, %q", plain, derated, multiple)
	}
	row := `[data-testid=candidate][data-cell="own"] .bank-cell`

	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS("#own-cell > summary")), chromedp.WaitVisible(chromedp.ID("f-inline-id"))), "unfolding the own cell")
	for _, k := range []string{"inline.id", "inline.rated_v", "inline.capacitance_f", "inline.esr_ohm"} {
		must(t, chromedp.Do(ctx, typeInto("f-"+form.DomID(k), own[k])), "typing "+k)
	}
	if got := waitText(t, ctx, row, plain, "sizing the own cell"); !strings.Contains(got, plain) {
		t.Errorf("own cell %q, want %q", got, plain)
	}

	must(t, chromedp.Do(ctx, typeInto("f-inline-voltage_derating", "25 °C: 2.7 V, 30 °C 2.2 V")), "typing a point without its colon")
	waitText(t, ctx, "#msg-inline-voltage_derating", "point 2, “30 °C 2.2 V”, has no colon", "naming the point")
	waitText(t, ctx, "#results-status", "Out of date", "marking the results stale")

	must(t, chromedp.Do(ctx, typeInto("f-inline-voltage_derating", "25 °C: 2.7 V, 30 °C: 2.2 V")), "typing the derating table")
	if got := waitText(t, ctx, row, derated, "resizing with the derating"); !strings.Contains(got, derated) {
		t.Errorf("own cell %q, want %q", got, derated)
	}
	if got := run(t, ctx, chromedp.Text(chromedp.ID("msg-inline-voltage_derating")), "reading the message"); strings.TrimSpace(got) != "" {
		t.Errorf("the message stays after the fix: %q", got)
	}

	must(t, chromedp.Do(ctx,
		chromedp.Click(chromedp.CSS("#system-settings > summary")),
		chromedp.WaitVisible(chromedp.ID("f-series_multiple")),
		typeInto("f-series_multiple", "8"),
	), "giving the series multiple")
	if got := waitText(t, ctx, row, multiple, "resizing in multiples of 8"); !strings.Contains(got, multiple) {
		t.Errorf("own cell %q, want %q", got, multiple)
	}
	saveViewShot(t, ctx, `[data-testid="field-inline.voltage_derating"]`, "module-derating-1280.png")
	if m := run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker || 0`), "reading the marker"); m != 19 {
		t.Error("the page reloaded")
	}
	if errs := logs.errors(); len(errs) > 0 {
		t.Errorf("the page logged errors:\n%s", strings.Join(errs, "\n"))
	}
}
