package web

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"capbank/web/form"
)

// The two widths of issue 17: a laptop and a phone.
var labelWidths = []struct {
	name          string
	width, height int
}{{"1280", 1280, 900}, {"390", 390, 844}}

// openAt opens the example design at a width, as a user's browser would.
func openAt(t *testing.T, width, height int) (ctx context.Context, url string) {
	t.Helper()
	c, u, _ := browser(t, width, height)
	must(t, chromedp.Do(c, chromedp.EmulateViewport(int64(width), int64(height)), chromedp.Navigate(u+"/"), chromedp.WaitVisible(chromedp.CSS("[data-testid=bank]"))), "opening the example")
	htmxReady(t, c)
	return c, u
}

// TestBrowserCandidatesTableFitsItsCard: the candidates table stays within
// its results card at 1400, 1280 and a phone's 390 px, scrolling in its own
// box when wider, so that every column can be reached; from 1280 px up the
// columns through the usable energy are in view without scrolling (they
// were hidden at 1400 px; issue 17).
func TestBrowserCandidatesTableFitsItsCard(t *testing.T) {
	widths := append([]struct {
		name          string
		width, height int
	}{{"1400", 1400, 900}}, labelWidths...)
	for _, w := range widths {
		t.Run(w.name, func(t *testing.T) {
			ctx, _ := openAt(t, w.width, w.height)
			got := run(t, ctx, chromedp.Evaluate[map[string]float64](`(() => {
				const table = document.querySelector("[data-testid=candidates]");
				const box = table.closest(".table-scroll"), card = document.getElementById("results");
				const th = [...table.querySelectorAll("thead th")].find(h => h.textContent.trim() === "Usable energy");
				box.scrollLeft = 0;
				const unscrolled = th.getBoundingClientRect().right;
				th.scrollIntoView({block: "nearest", inline: "nearest"});
				const b = box.getBoundingClientRect(), c = card.getBoundingClientRect(), h = th.getBoundingClientRect();
				return {unscrolled: unscrolled, boxRight: b.right, cardRight: c.right, cardScroll: card.scrollWidth - card.clientWidth,
					thRight: h.right, thLeft: h.left, boxLeft: b.left, page: document.documentElement.scrollWidth};
			})()`), "measuring the table")
			saveViewShot(t, ctx, "[data-testid=candidates]", "candidates-"+w.name+".png")
			if got["boxRight"] > got["cardRight"]+0.5 || got["cardScroll"] > 0 {
				t.Errorf("the table's box ends at %g px, past its card at %g px (card overflows by %g px)", got["boxRight"], got["cardRight"], got["cardScroll"])
			}
			if got["thRight"] > got["boxRight"]+0.5 || got["thLeft"] < got["boxLeft"]-0.5 {
				t.Errorf("the usable-energy column (%g–%g px) cannot be scrolled into its box (%g–%g px)", got["thLeft"], got["thRight"], got["boxLeft"], got["boxRight"])
			}
			// From 1280 px up the figures through the usable energy are in
			// view without scrolling; a phone scrolls the table in its box.
			if w.width >= 1280 && got["unscrolled"] > got["boxRight"]+0.5 {
				t.Errorf("at %d px the usable-energy column ends at %g px, past the table's box at %g px: hidden until scrolled", w.width, got["unscrolled"], got["boxRight"])
			}
			if got["page"] > float64(w.width) {
				t.Errorf("the page is %g px wide at %d px", got["page"], w.width)
			}
		})
	}
}

// TestBrowserStepMessageHasRoom: a step value's message runs under the
// whole step row, not inside the narrow value column, so the message for
// a value that is not a number takes at most two lines at 1280 px and
// three at 390 px (it took 5–7 before), and the value input itself is wide
// enough for "1.5k" and more (issue 17).
func TestBrowserStepMessageHasRoom(t *testing.T) {
	for _, w := range []struct {
		name                    string
		width, height, maxLines int
		minInput                float64
	}{{"1280", 1280, 900, 2, 80}, {"390", 390, 844, 3, 200}} {
		t.Run(w.name, func(t *testing.T) {
			ctx, _ := openAt(t, w.width, w.height)
			must(t, chromedp.Do(ctx, typeInto("f-load-steps-0-value", "three hundred")), "typing a bad value")
			waitText(t, ctx, "#msg-load-steps-0-value", form.NotANumber, "showing the problem")
			got := run(t, ctx, chromedp.Evaluate[map[string]float64](`(() => {
				const e = document.getElementById("msg-load-steps-0-value");
				e.scrollIntoView({block: "center"});
				const r = document.createRange(); r.selectNodeContents(e);
				return {lines: new Set([...r.getClientRects()].map(x => Math.round(x.top))).size,
					input: document.getElementById("f-load-steps-0-value").getBoundingClientRect().width};
			})()`), "counting the message's lines")
			saveViewShot(t, ctx, "#steps", "step-message-"+w.name+".png")
			if lines := int(got["lines"]); lines < 1 || lines > w.maxLines {
				t.Errorf("the step value's message takes %d lines at %d px, want 1 to %d", lines, w.width, w.maxLines)
			}
			if got["input"] < w.minInput {
				t.Errorf("the step value input is %g px wide at %d px, want at least %g", got["input"], w.width, w.minInput)
			}
		})
	}
}

// TestBrowserKindChangeClearsTheValue: changing a step's kind with htmx
// swaps the form in with the value cleared and a note beside it, and the
// results do not size 350 W as 350 A (issue 17).
func TestBrowserKindChangeClearsTheValue(t *testing.T) {
	ctx, _ := openAt(t, 1280, 900)
	before := run(t, ctx, chromedp.Evaluate[string](`document.querySelector("[data-testid=bank]").textContent`), "reading the bank")
	must(t, chromedp.Do(ctx, chromedp.SetValue(chromedp.ID("f-load-steps-0-kind"), "current")), "choosing current")
	run(t, ctx, chromedp.Evaluate[bool](`document.getElementById("f-load-steps-0-kind").dispatchEvent(new Event("change", {bubbles: true}))`), "firing change")
	note := waitText(t, ctx, "[data-testid=kind-note]", "from power (W) to current (A)", "showing the note")
	value := run(t, ctx, chromedp.Evaluate[string](`document.getElementById("f-load-steps-0-value").value`), "reading the value")
	if value != "" {
		t.Errorf("the value reads %q after the kind changed, want it cleared (note %q)", value, note)
	}
	unit := run(t, ctx, chromedp.Evaluate[string](`document.getElementById("unit-load-steps-0-value").textContent`), "reading the unit")
	if strings.TrimSpace(unit) != "A" {
		t.Errorf("unit %q, want A", unit)
	}
	// The results say the design now has a problem (the value asked
	// for) and keep the last bank, marked stale: nothing sized 350 A.
	waitText(t, ctx, "#results-status", "1 problem", "marking the results stale")
	after := run(t, ctx, chromedp.Evaluate[string](`document.querySelector("[data-testid=bank]").textContent`), "reading the bank")
	if after != before {
		t.Errorf("the bank changed from %q to %q: the value was read as amperes", before, after)
	}
	saveViewShot(t, ctx, "#steps", "kind-change-1280.png")
}

// saveViewShot scrolls the element into view and saves what the viewport
// shows, as saveScreenshot does for the whole page.
func saveViewShot(t *testing.T, ctx context.Context, css, name string) {
	t.Helper()
	run(t, ctx, chromedp.Evaluate[bool](`(() => { document.querySelector(`+jsString(css)+`).scrollIntoView({block: "start"}); return true })()`), "scrolling to "+css)
	png := run(t, ctx, chromedp.CaptureScreenshot(), "screenshot")
	dirs := []string{t.TempDir()}
	if d := os.Getenv("CAPBANK_SCREENSHOT_DIR"); d != "" {
		must(t, os.MkdirAll(d, 0o755), "screenshot directory")
		dirs = append(dirs, d)
	}
	for _, d := range dirs {
		must(t, os.WriteFile(filepath.Join(d, name), png, 0o644), "writing the screenshot")
	}
}
