package web

import (
	"capbank/web/form"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
)

// A user uploads a logged constant-current discharge, sees the capacitance
// and ESR, saves the measured cell to the library and sizes a bank with it.
// The demo log is an ideal 100 F, 25 mΩ cell with noise (its header says
// so); IEC 62391-1's method recovers those figures.
func TestBrowserMeasureSaveAndSize(t *testing.T) {
	ctx, url, logs := browser(t, 1280, 1000)
	log, err := filepath.Abs("../testdata/measure/cc-discharge.csv")
	must(t, err, "finding the demo log")
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/measure"), chromedp.WaitVisible(chromedp.ID("log_csv"))), "opening the measurement page")
	must(t, chromedp.Do(ctx,
		chromedp.SetValue(chromedp.ID("method"), "constant-current"),
		chromedp.SetUploadFiles(chromedp.ID("log_csv"), []string{log}),
		typeInto("rated_v", "2.7"),
		chromedp.Click(chromedp.CSS(`form[action="/measure"] button[type=submit]`)),
		chromedp.WaitVisible(chromedp.CSS("[data-testid=measure-figures]")),
	), "working out the figures")
	figs := strings.ReplaceAll(run(t, ctx, chromedp.TextContent(chromedp.CSS("[data-testid=measure-figures]")), "reading the figures"), "\u00a0", " ")
	// 100 F within 1 % and 25 mΩ within 5 % (the log's own model).
	if !strings.Contains(figs, "capacitance") || !(strings.Contains(figs, "99.") || strings.Contains(figs, "100 F") || strings.Contains(figs, "100.")) {
		t.Errorf("the figures do not show about 100 F: %s", figs)
	}
	if !strings.Contains(figs, "mΩ") {
		t.Errorf("the figures show no ESR in mΩ: %s", figs)
	}

	// Save it: the add form comes filled in; give it an id and add it.
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`[data-testid=save-measured] button`)), chromedp.WaitVisible(chromedp.ID("f-id"))), "opening the filled cell form")
	capText := run(t, ctx, chromedp.Evaluate[string](`document.getElementById("f-capacitance_f").value`), "reading the capacitance")
	if c, err := form.ParseSI(capText, form.UnitFarad); err != nil || math.Abs(c-100) > 1 {
		t.Errorf("the form's capacitance is %q, want 100 F within 1 %%", capText)
	}
	esrText := run(t, ctx, chromedp.Evaluate[string](`document.getElementById("f-esr_ohm").value`), "reading the ESR")
	if r, err := form.ParseSI(esrText, form.UnitOhm); err != nil || math.Abs(r-0.025) > 0.025*0.05 {
		t.Errorf("the form's ESR is %q, want 25 mΩ within 5 %%", esrText)
	}
	must(t, chromedp.Do(ctx, typeInto("f-id", "sample-100f-measured"),
		chromedp.Click(chromedp.CSS(`[data-testid=cell-form] button[type=submit]`)),
		chromedp.WaitVisible(chromedp.CSS("[data-testid=cell-merit]"))), "adding the measured cell")
	waitText(t, ctx, "[data-testid=notice]", "Added to the library", "adding the measured cell")
	if src := run(t, ctx, chromedp.Evaluate[string](`document.getElementById("f-source").value`), "reading the source"); src != "measured" {
		t.Errorf("the saved cell's source is %q, want measured", src)
	}

	// Size a bank with it.
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`a[href="/?cell=sample-100f-measured"]`)), chromedp.WaitVisible(chromedp.CSS("[data-testid=headline]"))), "sizing with the cell")
	waitText(t, ctx, "#results", "sample-100f-measured", "the bank of the measured cell")
	if !run(t, ctx, chromedp.Evaluate[bool](`document.getElementById("pick-sample-100f-measured").checked`), "reading the pick") {
		t.Error("the design page does not pick the measured cell")
	}
	saveScreenshot(t, ctx, "measured-sized-1280.png")
	if errs := logs.errors(); len(errs) > 0 {
		t.Errorf("console errors: %q", errs)
	}
}
