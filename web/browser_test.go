package web

import (
	"context"
	"errors"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"capbank/components/figures"
	"capbank/sizing"
)

const chromiumPath = "/usr/bin/chromium"

// browser starts the real server and a headless Chromium, and returns a
// tab and the server's URL. Where Chromium is missing the test is skipped,
// except in CI, where it fails.
func browser(t *testing.T, width, height int) (context.Context, string, *consoleLog) {
	t.Helper()
	if _, err := os.Stat(chromiumPath); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("browser tests need Chromium at %s (apt-get install chromium chromium-driver): %v", chromiumPath, err)
		}
		t.Skipf("Chromium is not installed at %s; skipping the browser test (apt-get install chromium chromium-driver)", chromiumPath)
	}
	srv, _ := newTestServer(t)
	ts := httptest.NewServer(srv)
	t.Cleanup(ts.Close)

	alloc, cancelAlloc := chromedp.NewExecAllocator(context.Background(),
		chromedp.ExecPath(chromiumPath),
		chromedp.Headless,
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.NoFirstRun,
		chromedp.NoDefaultBrowserCheck,
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("disable-dev-shm-usage", true),
		chromedp.UserDataDir(t.TempDir()),
		chromedp.WindowSize(width, height),
	)
	ctx, cancelTab := chromedp.NewContext(alloc)
	ctx, cancelTime := context.WithTimeout(ctx, 60*time.Second)
	t.Cleanup(func() { cancelTime(); cancelTab(); cancelAlloc() })

	logs := &consoleLog{}
	messages := chromedp.Console(ctx)
	go func() {
		for m, err := range messages {
			if err != nil {
				return
			}
			logs.add(m)
		}
	}()
	return ctx, ts.URL, logs
}

// consoleLog keeps what the page wrote to its console.
type consoleLog struct {
	mu   sync.Mutex
	msgs []chromedp.ConsoleMessage
}

func (l *consoleLog) add(m chromedp.ConsoleMessage) {
	l.mu.Lock()
	defer l.mu.Unlock()
	l.msgs = append(l.msgs, m)
}

// errors are the exceptions and error messages, such as a script that
// failed or a blocked resource.
func (l *consoleLog) errors() []string {
	l.mu.Lock()
	defer l.mu.Unlock()
	var out []string
	for _, m := range l.msgs {
		if m.IsException() || m.Type == "error" {
			out = append(out, m.String())
		}
	}
	return out
}

func must(t *testing.T, err error, doing string) {
	t.Helper()
	if err != nil {
		t.Fatalf("%s: %v", doing, err)
	}
}

func run[T any](t *testing.T, ctx context.Context, a chromedp.Action[T], doing string) T {
	t.Helper()
	v, err := chromedp.Run(ctx, a)
	must(t, err, doing)
	return v
}

// typeInto replaces the text of an input as a user would: empty it (select
// all and delete, which fires an input event), then type. chromedp.Clear
// only resets the value attribute, which a field the user has typed in
// ignores.
func typeInto(id, text string) chromedp.Action[chromedp.Void] {
	empty := `(() => { const e = document.getElementById(` + jsString(id) + `); e.focus(); e.select();
		e.value = ""; e.dispatchEvent(new Event("input", {bubbles: true})); return true })()`
	return chromedp.Steps(
		chromedp.Func(func(ctx context.Context, t *chromedp.Target) error {
			_, err := chromedp.Evaluate[bool](empty)(ctx, t)
			return err
		}),
		chromedp.SendKeys(chromedp.ID(id), text))
}

// waitText waits until the element's text contains want and returns it.
func waitText(t *testing.T, ctx context.Context, css, want, doing string) string {
	t.Helper()
	js := `(() => { const e = document.querySelector(` + jsString(css) + `); return e && e.textContent.includes(` + jsString(want) + `) ? e.textContent : false })()`
	// A poll that started on the page before a navigation ends with the
	// navigation (its execution context is gone); poll again on the new
	// page until the deadline.
	deadline := time.Now().Add(10 * time.Second)
	var got string
	var err error
	for {
		got, err = chromedp.Run(ctx, chromedp.Poll[string](js, chromedp.WithPollingTimeout(time.Until(deadline))))
		if err == nil || errors.Is(err, chromedp.ErrPollingTimeout) || ctx.Err() != nil || time.Now().After(deadline) {
			break
		}
		time.Sleep(50 * time.Millisecond)
	}
	if err != nil {
		now, _ := chromedp.Run(ctx, chromedp.Evaluate[string](`(document.querySelector(`+jsString(css)+`) || {textContent: "(missing)"}).textContent`))
		t.Fatalf("%s: %s never showed %q (it shows %q): %v", doing, css, want, strings.Join(strings.Fields(now), " "), err)
	}
	return strings.Join(strings.Fields(got), " ")
}

// htmxReady waits until the page has loaded and htmx has set itself up, so
// that a click right after a navigation is htmx's, not a plain form post
// (the script is deferred, and a busy machine runs it late).
func htmxReady(t *testing.T, ctx context.Context) {
	t.Helper()
	_, err := chromedp.Run(ctx, chromedp.Poll[bool](`document.readyState === "complete" && !!window.htmx`, chromedp.WithPollingTimeout(10*time.Second)))
	must(t, err, "waiting for htmx")
}

func jsString(s string) string {
	r := strings.NewReplacer(`\`, `\\`, `"`, `\"`, "\n", `\n`)
	return `"` + r.Replace(s) + `"`
}

func saveScreenshot(t *testing.T, ctx context.Context, name string) {
	t.Helper()
	png := run(t, ctx, chromedp.FullScreenshot(100), "screenshot")
	dirs := []string{t.TempDir()}
	if d := os.Getenv("CAPBANK_SCREENSHOT_DIR"); d != "" {
		must(t, os.MkdirAll(d, 0o755), "screenshot directory")
		dirs = append(dirs, d)
	}
	for _, d := range dirs {
		path := filepath.Join(d, name)
		must(t, os.WriteFile(path, png, 0o644), "writing the screenshot")
		t.Logf("screenshot: %s", path)
	}
}

// bankFor is the headline the engine gives for the test design with a
// step of power w.
func bankFor(t *testing.T, w float64) string {
	t.Helper()
	d := wantDesign(t)
	d.Load.Steps[0].PowerW = &w
	rep, err := sizing.Size(d)
	if err != nil || rep.Recommended == nil {
		t.Fatalf("sizing the expected design: %v", err)
	}
	return figures.BankText(rep.Candidates[0])
}

// A user opens a new design, enters it, sees the bank, changes a value and
// sees the bank change without the page reloading, then breaks the window
// and sees the message beside the field while the last results stay,
// marked out of date.
func TestBrowserSizesABankAsYouType(t *testing.T) {
	ctx, url, logs := browser(t, 1280, 900)
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/?new=1"), chromedp.WaitVisible(chromedp.ID("f-window-max_v"))), "opening the page")
	htmxReady(t, ctx)
	run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker = 42`), "marking the window")

	must(t, chromedp.Do(ctx,
		typeInto("f-window-max_v", "48"),
		typeInto("f-window-min_v", "24"),
		typeInto("f-load-steps-0-value", "1.5k"),
		typeInto("f-load-steps-0-duration_s", "10"),
		chromedp.Click(chromedp.ID("pick-demo-2v7-650f")),
		chromedp.Click(chromedp.ID("pick-demo-3v0-500f")),
	), "entering the design")
	want := bankFor(t, 1500)
	if got := waitText(t, ctx, "[data-testid=bank]", want, "sizing"); got != want {
		t.Errorf("headline %q, want %q", got, want)
	}

	// A bigger load needs a bigger bank; the page updates in place.
	must(t, chromedp.Do(ctx, typeInto("f-load-steps-0-value", "6k")), "changing the load")
	want6k := bankFor(t, 6000)
	if want6k == want {
		t.Fatalf("the test needs a load change that changes the bank (both %q)", want)
	}
	waitText(t, ctx, "[data-testid=bank]", want6k, "resizing")
	if m := run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker || 0`), "reading the marker"); m != 42 {
		t.Error("the page reloaded: the window's marker is gone")
	}

	// The chart is there with its axes and the window marked.
	svg := run(t, ctx, chromedp.TextContent(chromedp.CSS("[data-testid=chart-voltage] svg")), "reading the chart")
	svg = strings.ReplaceAll(svg, "\u00a0", " ") // numbers and units are joined by a no-break space
	for _, label := range []string{"Time (s)", "Voltage (V)", "window top 48 V", "window bottom 24 V"} {
		if !strings.Contains(svg, label) {
			t.Errorf("the voltage chart lacks %q", label)
		}
	}
	if n := run(t, ctx, chromedp.Evaluate[int](`document.querySelectorAll("[data-testid=chart-voltage] svg[role=img] .series").length`), "counting lines"); n != 2 {
		t.Errorf("voltage chart has %d lines, want terminal and capacitor", n)
	}
	saveScreenshot(t, ctx, "results-1280.png")

	// The window bottom above its top: the message appears beside the
	// field, the bank stays, marked out of date.
	must(t, chromedp.Do(ctx, typeInto("f-window-min_v", "60")), "breaking the window")
	msg := waitText(t, ctx, "#msg-window-min_v", "must be below the window top", "showing the problem")
	if !strings.Contains(msg, "60 V ≥ 48 V") {
		t.Errorf("message %q", msg)
	}
	beside := run(t, ctx, chromedp.Evaluate[bool](
		`document.getElementById("msg-window-min_v").closest(".field").contains(document.getElementById("f-window-min_v"))`), "locating the message")
	if !beside {
		t.Error("the message is not beside its field")
	}
	visible := run(t, ctx, chromedp.Evaluate[bool](`document.getElementById("msg-window-min_v").offsetHeight > 0`), "checking visibility")
	if !visible {
		t.Error("the message is not visible")
	}
	waitText(t, ctx, "#results-status", "Out of date", "marking the results stale")
	if got := run(t, ctx, chromedp.Text(chromedp.CSS("[data-testid=bank]")), "reading the stale bank"); strings.TrimSpace(got) != want6k {
		t.Errorf("stale headline %q, want the last good %q", got, want6k)
	}
	saveScreenshot(t, ctx, "problem-1280.png")

	// Fixing it brings fresh results back.
	must(t, chromedp.Do(ctx, typeInto("f-window-min_v", "24")), "fixing the window")
	must(t, chromedp.Do(ctx, chromedp.WaitNotPresent(chromedp.CSS("#results-status.stale"))), "clearing the stale mark")
	if got := run(t, ctx, chromedp.Text(chromedp.ID("msg-window-min_v")), "reading the message"); strings.TrimSpace(got) != "" {
		t.Errorf("the message stays after the fix: %q", got)
	}
	if m := run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker || 0`), "reading the marker"); m != 42 {
		t.Error("the page reloaded")
	}
	if errs := logs.errors(); len(errs) > 0 {
		t.Errorf("the page logged errors:\n%s", strings.Join(errs, "\n"))
	}
}

// The step list is edited with its buttons, and the candidates table
// re-sorts, both in place; keyboard users reach the sort buttons.
func TestBrowserEditsStepsAndSorts(t *testing.T) {
	ctx, url, logs := browser(t, 1280, 900)
	must(t, chromedp.Do(ctx, chromedp.Navigate(url+"/"), chromedp.WaitVisible(chromedp.CSS("[data-testid=bank]"))), "opening the example")
	htmxReady(t, ctx)
	run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker = 7`), "marking the window")
	rows := func() int {
		return run(t, ctx, chromedp.Evaluate[int](`document.querySelectorAll("[data-testid=step-row]").length`), "counting steps")
	}
	before := rows()
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`button[value="add-step"]`))), "adding a step")
	must(t, chromedp.Do(ctx, chromedp.WaitVisible(chromedp.ID("f-load-steps-"+itoa(before)+"-value"))), "waiting for the new row")
	if got := rows(); got != before+1 {
		t.Errorf("%d rows after adding, want %d", got, before+1)
	}
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`button[value="remove-step:`+itoa(before)+`"]`))), "removing it")
	must(t, chromedp.Do(ctx, chromedp.WaitNotPresent(chromedp.ID("f-load-steps-"+itoa(before)+"-value"))), "waiting for the row to go")

	// htmx sets up the swapped-in buttons when the swap settles; a key
	// pressed before then is a plain form post.
	_, err := chromedp.Run(ctx, chromedp.Poll[bool](`!document.querySelector(".htmx-request, .htmx-swapping, .htmx-settling, .htmx-added")`, chromedp.WithPollingTimeout(10*time.Second)))
	must(t, err, "waiting for the swap to settle")
	time.Sleep(100 * time.Millisecond)

	// Sort by mass with the keyboard: focus the button, press Enter.
	must(t, chromedp.Do(ctx, chromedp.Focus(chromedp.CSS(`button[name=sort_by][value=mass]`)), chromedp.KeyEvent("\r")), "sorting by mass")
	waitText(t, ctx, "button[name=sort_by][aria-pressed=true]", "Mass", "pressing the sort button")
	masses := run(t, ctx, chromedp.Evaluate[[]string](
		`[...document.querySelectorAll("[data-testid=candidate]")].map(r => r.querySelectorAll("td")[2].textContent)`), "reading masses")
	if len(masses) < 2 {
		t.Fatalf("masses %q", masses)
	}
	prev := 0.0
	for _, m := range masses {
		v, err := strconv.ParseFloat(strings.Fields(strings.ReplaceAll(m, "\u00a0", " "))[0], 64)
		if err != nil || v < prev {
			t.Errorf("masses not in ascending order: %q", masses)
			break
		}
		prev = v
	}
	if m := run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker || 0`), "reading the marker"); m != 7 {
		t.Error("editing or sorting reloaded the page")
	}
	if errs := logs.errors(); len(errs) > 0 {
		t.Errorf("the page logged errors:\n%s", strings.Join(errs, "\n"))
	}
}

// At a phone's width the page is one column and nothing but the wide
// tables and charts, which scroll in their own boxes, is wider than the
// screen.
func TestBrowserPhoneWidth(t *testing.T) {
	ctx, url, _ := browser(t, 390, 844)
	must(t, chromedp.Do(ctx, chromedp.EmulateViewport(390, 844), chromedp.Navigate(url+"/"), chromedp.WaitVisible(chromedp.CSS("[data-testid=bank]"))), "opening the page")
	htmxReady(t, ctx)
	width := run(t, ctx, chromedp.Evaluate[int](`document.documentElement.scrollWidth`), "measuring")
	if width > 390 {
		wide := run(t, ctx, chromedp.Evaluate[[]string](`[...document.querySelectorAll("body *")].filter(e => e.getBoundingClientRect().right > 391 && !e.closest(".table-scroll, .chart-scroll, .cell-list")).slice(0, 8).map(e => e.tagName + "." + e.className + "#" + e.id)`), "finding wide elements")
		t.Errorf("the page is %d px wide at 390 px; too wide: %q", width, wide)
	}
	formRight := run(t, ctx, chromedp.Evaluate[float64](`document.getElementById("design-form").getBoundingClientRect().right`), "measuring the form")
	resultsTop := run(t, ctx, chromedp.Evaluate[float64](`document.getElementById("results").getBoundingClientRect().top`), "measuring the results")
	formBottom := run(t, ctx, chromedp.Evaluate[float64](`document.getElementById("design-form").getBoundingClientRect().bottom`), "measuring the form")
	if formRight > 390 || resultsTop < formBottom {
		t.Errorf("not one column: form right %g, results top %g, form bottom %g", formRight, resultsTop, formBottom)
	}
	saveScreenshot(t, ctx, "results-390.png")
}
