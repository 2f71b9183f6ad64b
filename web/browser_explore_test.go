package web

import (
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
)

// TestBrowserExploreBoosted: on the explorer page a user unticks "Life"
// from the objectives and presses Show; the boosted form swaps the page in
// place (the window is the same one, the address carries the new
// choices) and the front is judged on the rest. While the sweep runs the
// form's "Sizing every bank…" status is the indicator.
func TestBrowserExploreBoosted(t *testing.T) {
	ctx, url, logs := browser(t, 1280, 900)
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/explore"), chromedp.WaitVisible(chromedp.CSS("[data-testid=explore-summary]"))), "opening the explorer")
	htmxReady(t, ctx)
	run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker = 21`), "marking the window")
	indicator := run(t, ctx, chromedp.Evaluate[bool](`document.querySelector('[data-testid=explore-busy]').classList.contains('htmx-indicator')`), "finding the indicator")
	if !indicator {
		t.Fatal("the explorer form has no htmx indicator")
	}
	run(t, ctx, chromedp.Evaluate[bool](`(() => { const b = document.querySelector('input[name=objective][value=life_years]'); b.checked = false; return true })()`), "unticking life")
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`[data-testid=explore-form] button[type=submit]`))), "pressing Show")
	run(t, ctx, chromedp.Poll[bool](`location.search.includes('objective=price') && !location.search.includes('objective=life_years')`), "waiting for the new address")
	must(t, chromedp.Do(ctx, chromedp.WaitVisible(chromedp.CSS("[data-testid=explore-summary]"))), "waiting for the new front")
	if m := run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker || 0`), "reading the marker"); m != 21 {
		t.Errorf("the page reloaded (marker %d): the form was not boosted", m)
	}
	if run(t, ctx, chromedp.Evaluate[bool](`document.querySelector('input[name=objective][value=life_years]').checked`), "reading the objectives") {
		t.Error("the new page still judges the front on life")
	}
	if errs := logs.errors(); len(errs) > 0 {
		t.Errorf("the page logged errors:\n%s", strings.Join(errs, "\n"))
	}
}
