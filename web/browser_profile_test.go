package web

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"capbank/sizing/sizingtest"
)

// loggedDayCSV is the shared invented logged day (sizingtest.LoggedDayCSV).
var loggedDayCSV = sizingtest.LoggedDayCSV

// A user loads a logged profile of 2 000 rows into the example design: the
// page shows it as a profile (its rows, a chart), not as steps, and sizes
// it; the design is saved, opened again from the list and shared by its
// link, and each time the profile and the bank are the same.
func TestBrowserProfileSaveReopenShare(t *testing.T) {
	ctx, url, logs := browser(t, 1280, 1000)
	csv := filepath.Join(t.TempDir(), "logged-day.csv")
	must(t, os.WriteFile(csv, []byte(loggedDayCSV(2000)), 0o644), "writing the log")

	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/"), chromedp.WaitVisible(chromedp.CSS("[data-testid=headline]"))), "opening the design page")
	htmxReady(t, ctx)
	// Note whether the progress indicator shows while the profile uploads
	// and sizes (htmx marks it with htmx-request for the request's length).
	watch := `(() => { window.sawProgress = false; const i = document.getElementById("profile-progress");
		new MutationObserver(() => { if (getComputedStyle(i).visibility === "visible") window.sawProgress = true; })
			.observe(i, {attributes: true}); return true })()`
	if !run(t, ctx, chromedp.Evaluate[bool](watch), "watching the progress indicator") {
		t.Fatal("no progress indicator to watch")
	}
	must(t, chromedp.Do(ctx,
		chromedp.Click(chromedp.CSS("#profile-file summary")),
		chromedp.SetUploadFiles(chromedp.ID("f-profile_csv"), []string{csv}),
		chromedp.Click(chromedp.CSS("[data-testid=load-profile]")),
		chromedp.WaitVisible(chromedp.CSS("[data-testid=profile-summary]")),
	), "loading the profile")
	// 2 000 rows a second apart, the last held 1 s: 2 000 s (own arithmetic).
	check := func(when string) string {
		t.Helper()
		rows := waitText(t, ctx, "[data-testid=profile-rows]", "2000", when)
		if rows != "2000 (power_w)" {
			t.Errorf("%s: rows %q, want 2000 (power_w)", when, rows)
		}
		if n := run(t, ctx, chromedp.Evaluate[int](`document.querySelectorAll("[data-testid=step-row]").length`), "counting step rows"); n != 0 {
			t.Errorf("%s: %d step rows beside the profile, want none", when, n)
		}
		if n := run(t, ctx, chromedp.Evaluate[int](`document.querySelectorAll("[data-testid=chart-profile] svg[role=img] .series").length`), "finding the chart"); n != 1 {
			t.Errorf("%s: %d profile chart lines, want 1", when, n)
		}
		return waitText(t, ctx, "[data-testid=bank]", "×", when)
	}
	bank := check("loaded")
	// The progress shown while it uploads and sizes is the button's
	// indicator, and it is gone once the profile is in.
	ind := run(t, ctx, chromedp.Evaluate[string](`(() => { const b = document.querySelector("[data-testid=load-profile]");
		const i = document.querySelector(b.getAttribute("hx-indicator")); return i ? i.textContent.trim() + "|" + getComputedStyle(i).visibility : "none" })()`), "reading the progress indicator")
	if !run(t, ctx, chromedp.Evaluate[bool](`window.sawProgress === true`), "reading the progress watch") {
		t.Error("no progress was shown while the profile uploaded and sized")
	}
	if ind != "Uploading and sizing…|hidden" {
		t.Errorf("progress indicator %q after the load, want \"Uploading and sizing…\" and hidden", ind)
	}
	if d := waitText(t, ctx, "[data-testid=profile-duration]", "", "reading the duration"); !strings.Contains(d, "33.33 min") && !strings.Contains(d, "2000 s") && !strings.Contains(d, "2 000 s") {
		t.Errorf("duration %q, want 2000 s (33.33 min)", d)
	}
	saveScreenshot(t, ctx, "profile-loaded-1280.png")

	// Save it, reopen it from the list of saved designs.
	must(t, chromedp.Do(ctx, typeInto("save-name", "Logged day"),
		chromedp.Click(chromedp.CSS(`[data-testid=save-new]`)), chromedp.WaitVisible(chromedp.CSS("[data-testid=notice]"))), "saving")
	waitText(t, ctx, "[data-testid=notice]", "Saved as “Logged day”", "saving the design")
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/designs"), chromedp.WaitVisible(chromedp.CSS("[data-testid=saved-design]"))), "listing the saved designs")
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`[data-testid=saved-design] th a`)), chromedp.WaitVisible(chromedp.CSS("[data-testid=profile-summary]"))), "opening the design")
	if got := check("reopened"); got != bank {
		t.Errorf("the reopened design sizes to %q, want %q", got, bank)
	}

	// Share it: the link carries the profile whole.
	if n := run(t, ctx, chromedp.Evaluate[int](`document.querySelectorAll("[data-testid=link-note]").length`), "finding a link note"); n != 0 {
		t.Error("a 2 000-row profile is said to be too large for a link")
	}
	link := run(t, ctx, chromedp.Evaluate[string](`document.querySelector("[data-testid=share-link]").href`), "reading the share link")
	must(t, chromedp.Do(ctx, chromedp.Navigate("about:blank"), chromedp.Navigate(link), chromedp.WaitVisible(chromedp.CSS("[data-testid=profile-summary]"))), "opening the share link")
	if got := check("shared"); got != bank {
		t.Errorf("the shared design sizes to %q, want %q", got, bank)
	}
	if errs := logs.errors(); len(errs) > 0 {
		t.Errorf("console errors: %q", errs)
	}
}
