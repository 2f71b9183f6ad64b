package web

import (
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
)

// A user adds a cell of their own to the library, compares it with two
// demo cells, sizes the design with it, saves the design, reloads the list
// of saved designs and opens the design again: everything is still there.
func TestBrowserLibraryCompareSave(t *testing.T) {
	ctx, url, logs := browser(t, 1280, 1000)

	// Add a cell (invented figures, for the test only).
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/library"), chromedp.WaitVisible(chromedp.CSS("[data-testid=library]"))), "opening the library")
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`a[href="/library/new"]`)), chromedp.WaitVisible(chromedp.ID("f-id"))), "opening the add form")
	must(t, chromedp.Do(ctx,
		typeInto("f-id", "bench-2v7-80f"),
		typeInto("f-name", "Bench sample 80 F"),
		typeInto("f-rated_v", "2.7"),
		typeInto("f-capacitance_f", "80"),
		typeInto("f-esr_ohm", "11m"),
		typeInto("f-mass_kg", "18m"),
		typeInto("f-unit_price", "2.2"),
		chromedp.Click(chromedp.CSS(`[data-testid=cell-form] button[type=submit]`)),
		chromedp.WaitVisible(chromedp.CSS("[data-testid=cell-merit]")),
	), "adding the cell")
	waitText(t, ctx, "[data-testid=notice]", "Added to the library", "adding the cell")
	// 2.7 V, 80 F, 18 g: ½·80·2.7²/3600/0.018 = 4.5 Wh/kg (E = ½CV²,
	// sizing/REFERENCES.md 3.1).
	waitText(t, ctx, "[data-testid=cell-merit]", "4.5 Wh/kg", "showing its figures of merit")

	// Compare it with two demo cells, picked on the compare page.
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/compare"), chromedp.WaitVisible(chromedp.CSS("[data-testid=compare-picker]"))), "opening the comparison")
	pick := `(() => { const want = new Set(["bench-2v7-80f", "demo-2v7-650f", "demo-3v0-500f"]);
		document.querySelectorAll("[data-testid=compare-picker] input[name=cell]").forEach(b => { if (b.checked !== want.has(b.value)) b.click() });
		return document.querySelectorAll("[data-testid=compare-picker] input[name=cell]:checked").length })()`
	if n := run(t, ctx, chromedp.Evaluate[int](pick), "picking three cells"); n != 3 {
		t.Fatalf("%d cells picked, want 3", n)
	}
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`[data-testid=compare-picker] button[type=submit]`))), "comparing")
	// The page before shows the example's cells; wait for the new one.
	waitText(t, ctx, "[data-testid=compare-table] thead", "bench-2v7-80f", "comparing the picked cells")
	cols := run(t, ctx, chromedp.Evaluate[string](`[...document.querySelectorAll("[data-testid=compare-table] thead th a")].map(a => a.textContent).join(",")`), "reading the columns")
	for _, id := range []string{"bench-2v7-80f", "demo-2v7-650f", "demo-3v0-500f"} {
		if !strings.Contains(cols, id) {
			t.Errorf("compared columns %q lack %s", cols, id)
		}
	}
	if n := run(t, ctx, chromedp.Evaluate[int](`document.querySelectorAll("[data-testid=compare-table] td[data-best]").length`), "counting best marks"); n == 0 {
		t.Error("no figure is marked best")
	}
	saveScreenshot(t, ctx, "compare-1280.png")

	// Size the example design with the new cell and save it.
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/"), chromedp.WaitVisible(chromedp.ID("pick-bench-2v7-80f"))), "opening the design page")
	htmxReady(t, ctx)
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.ID("pick-bench-2v7-80f"))), "picking the new cell")
	waitText(t, ctx, "#results", "bench-2v7-80f", "sizing with the new cell")
	must(t, chromedp.Do(ctx, typeInto("save-name", "Bench cell hold-up"),
		chromedp.Click(chromedp.CSS(`[data-testid=save-new]`)), chromedp.WaitVisible(chromedp.CSS("[data-testid=notice]"))), "saving")
	waitText(t, ctx, "[data-testid=notice]", "Saved as “Bench cell hold-up”", "saving the design")

	// Reload the list of saved designs and open the design again.
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/designs"), chromedp.Reload(), chromedp.WaitVisible(chromedp.CSS("[data-testid=saved-design]"))), "listing the saved designs")
	waitText(t, ctx, "[data-testid=designs]", "Bench cell hold-up", "listing the design")
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`[data-testid=saved-design] th a`)), chromedp.WaitVisible(chromedp.CSS("[data-testid=notice]"))), "opening the design")
	waitText(t, ctx, "[data-testid=notice]", "Opened “Bench cell hold-up”", "reopening")
	if !run(t, ctx, chromedp.Evaluate[bool](`document.getElementById("pick-bench-2v7-80f").checked`), "reading the pick") {
		t.Error("the reopened design does not pick the new cell")
	}
	waitText(t, ctx, "#results", "bench-2v7-80f", "the reopened design's results")
	if n := run(t, ctx, chromedp.Evaluate[int](`document.querySelectorAll("[data-testid=save-over]").length`), "finding save-over"); n != 1 {
		t.Error("the reopened design offers no save over it")
	}
	saveScreenshot(t, ctx, "reopened-1280.png")
	if errs := logs.errors(); len(errs) > 0 {
		t.Errorf("console errors: %q", errs)
	}
}
