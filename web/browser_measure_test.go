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

// The measure page lists the figures by name with their units, the
// measured figures first and in capbank measure's order, and keeps the
// page short: the measured cell's JSON is folded away and wraps when
// opened. Before, the rows were the JSON keys ("esr", "u1", "t1") in
// alphabetical order and the JSON block made the page 2 487 px high.
func TestBrowserMeasureLayout(t *testing.T) {
	ctx, url, logs := browser(t, 1280, 900)
	log, err := filepath.Abs("../testdata/measure/cc-discharge.csv")
	must(t, err, "finding the demo log")
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/measure"), chromedp.WaitVisible(chromedp.ID("log_csv"))), "opening the measurement page")
	must(t, chromedp.Do(ctx,
		chromedp.SetUploadFiles(chromedp.ID("log_csv"), []string{log}),
		typeInto("rated_v", "2.7"),
		chromedp.Click(chromedp.CSS(`form[action="/measure"] button[type=submit]`)),
		chromedp.WaitVisible(chromedp.CSS("[data-testid=measure-figures]")),
	), "working out the figures")
	labels := run(t, ctx, chromedp.Evaluate[[]string](`[...document.querySelectorAll("[data-testid=measure-figure] th")].map(e => e.textContent)`), "reading the labels")
	values := run(t, ctx, chromedp.Evaluate[[]string](`[...document.querySelectorAll("[data-testid=measure-figure] td")].map(e => e.textContent.replace(/\u00a0/g, " "))`), "reading the values")
	// The first rows: capacitance (100 F, the log's model), ESR (25 mΩ,
	// within 1 %), the time constant, the current; each value with a unit.
	want := []struct{ label, unit string }{
		{"capacitance C = I/|slope| (fit t1–t2)", " F"},
		{"capacitance, two-point I·(t2 − t1)/(U1 − U2)", " F"},
		{"ESR = ΔU3/I", " mΩ"},
		{"time constant ESR·C", " s"},
		{"discharge current I (logged mean, t1–t2)", " A"},
		{"U1 = 0.8·UR", " V"},
	}
	if len(labels) < len(want) || len(values) != len(labels) {
		t.Fatalf("%d labels, %d values: %q", len(labels), len(values), labels)
	}
	for i, w := range want {
		if labels[i] != w.label || !strings.HasSuffix(values[i], w.unit) {
			t.Errorf("row %d: %q = %q, want %q in%s", i+1, labels[i], values[i], w.label, w.unit)
		}
	}
	if v := values[2]; !strings.HasPrefix(v, "25.0") && !strings.HasPrefix(v, "24.9") {
		t.Errorf("ESR %q, want 25 mΩ within 1 %%", v)
	}
	for _, raw := range []string{"esr", "u1", "t1 s", "capacitance f", "r squared"} {
		for _, l := range labels {
			if l == raw || strings.HasPrefix(l, raw+" ") && !strings.Contains(l, "=") {
				t.Errorf("a row is labelled with a raw key: %q", l)
			}
		}
	}
	// The JSON is folded, and wraps within the panel when opened.
	if run(t, ctx, chromedp.Evaluate[bool](`document.querySelector("[data-testid=measure-cell-json]").open`), "reading the fold") {
		t.Error("the measured cell's JSON is open")
	}
	height := run(t, ctx, chromedp.Evaluate[float64](`document.documentElement.scrollHeight`), "measuring the page")
	// 1 800 px: two screens at 900 px, against 2 487 px before.
	if height > 1800 {
		t.Errorf("the page is %.0f px high, want at most 1 800", height)
	}
	saveScreenshot(t, ctx, "measure-figures-1280.png")
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`[data-testid=measure-cell-json] summary`))), "opening the JSON")
	wide := run(t, ctx, chromedp.Evaluate[bool](`(() => { const p = document.querySelector("[data-testid=measure-cell]"); return p.scrollWidth > p.clientWidth + 1 })()`), "reading the JSON's width")
	if wide {
		t.Error("the opened JSON is wider than its panel: it does not wrap")
	}
	if errs := logs.errors(); len(errs) > 0 {
		t.Errorf("console errors: %q", errs)
	}
}
