package web

import (
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"capbank/components/figures"
	"capbank/sizing"
	"capbank/web/form"
	"capbank/web/store"
)

// TestBrowserSystemSection: a user unfolds "Charger, converter and
// wiring" on the example, gives the converter's minimum input voltage and
// sees the bank the engine sizes for it, in place; an end current without
// the charger's current limit is asked for beside the current limit.
func TestBrowserSystemSection(t *testing.T) {
	ctx, url, logs := browser(t, 1280, 900)
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/"), chromedp.WaitVisible(chromedp.CSS("[data-testid=bank]"))), "opening the example")
	htmxReady(t, ctx)
	run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker = 19`), "marking the window")

	// The converter stops below 44 V: the window bottom rises from 24 V,
	// so the bank needs more energy above it (sizing.Converter.MinInputV).
	d := form.Read(exampleValues()).Decode(store.DemoCell).Design
	before, err := sizing.Size(d)
	if err != nil || before.Recommended == nil {
		t.Fatalf("sizing the example: %v", err)
	}
	minIn := 44.0
	d.Converter = &sizing.Converter{MinInputV: &minIn}
	after, err := sizing.Size(d)
	if err != nil || after.Recommended == nil {
		t.Fatalf("sizing the example with the converter: %v", err)
	}
	want := figures.BankText(after.Candidates[0])
	if want == figures.BankText(before.Candidates[0]) {
		t.Fatalf("the test needs a converter limit that changes the bank (both %q)", want)
	}

	must(t, chromedp.Do(ctx,
		chromedp.Click(chromedp.CSS("#system-settings > summary")),
		chromedp.WaitVisible(chromedp.ID("f-converter-min_input_v")),
		typeInto("f-converter-min_input_v", "44 V"),
	), "giving the converter's minimum input")
	if got := waitText(t, ctx, "[data-testid=bank]", want, "resizing"); got != want {
		t.Errorf("headline %q, want %q", got, want)
	}

	must(t, chromedp.Do(ctx, typeInto("f-charger-end_current_pct", "3")), "giving an end current alone")
	waitText(t, ctx, "#msg-charger-current_a", "is required when any charger field is given", "asking for the current limit")
	waitText(t, ctx, "#results-status", "Out of date", "marking the results stale")
	saveViewShot(t, ctx, "#system", "system-section-1280.png")

	must(t, chromedp.Do(ctx, typeInto("f-charger-current_a", "20")), "giving the current limit")
	must(t, chromedp.Do(ctx, chromedp.WaitNotPresent(chromedp.CSS("#results-status.stale"))), "clearing the stale mark")
	if got := run(t, ctx, chromedp.Text(chromedp.ID("msg-charger-current_a")), "reading the message"); strings.TrimSpace(got) != "" {
		t.Errorf("the message stays after the fix: %q", got)
	}
	if m := run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker || 0`), "reading the marker"); m != 19 {
		t.Error("the page reloaded")
	}
	if errs := logs.errors(); len(errs) > 0 {
		t.Errorf("the page logged errors:\n%s", strings.Join(errs, "\n"))
	}
}
