package web

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	cdpbrowser "github.com/chromedp/cdproto/browser"
	"github.com/chromedp/chromedp"
	"github.com/xuri/excelize/v2"
)

// download clicks the button and waits for the browser to save the file
// it answers with; it returns the suggested file name and the content.
func download(t *testing.T, ctx context.Context, dir, sel string) (string, []byte) {
	t.Helper()
	begin := make(chan *cdpbrowser.EventDownloadWillBegin, 1)
	done := make(chan *cdpbrowser.EventDownloadProgress, 1)
	lctx, cancel := context.WithCancel(ctx)
	defer cancel()
	must(t, chromedp.ListenBrowser(lctx, func(ev any) {
		switch e := ev.(type) {
		case *cdpbrowser.EventDownloadWillBegin:
			select {
			case begin <- e:
			default:
			}
		case *cdpbrowser.EventDownloadProgress:
			if e.State == cdpbrowser.DownloadProgressStateCompleted || e.State == cdpbrowser.DownloadProgressStateCanceled {
				select {
				case done <- e:
				default:
				}
			}
		}
	}), "listening for downloads")
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(sel))), "clicking "+sel)
	var name string
	select {
	case e := <-begin:
		name = e.SuggestedFilename
	case <-time.After(20 * time.Second):
		t.Fatalf("%s: no download began", sel)
	}
	select {
	case e := <-done:
		if e.State != cdpbrowser.DownloadProgressStateCompleted {
			t.Fatalf("%s: the download was cancelled", sel)
		}
		data, err := os.ReadFile(filepath.Join(dir, e.GUID))
		must(t, err, "reading the download")
		return name, data
	case <-time.After(20 * time.Second):
		t.Fatalf("%s: the download did not finish", sel)
	}
	return "", nil
}

// Each download button, for the recommended bank and for another
// feasible one, saves a file of its type; and the buttons are plain form
// posts, so they work with htmx on the page and the page stays put.
func TestBrowserDownloads(t *testing.T) {
	ctx, url, logs := browser(t, 1280, 900)
	dir := t.TempDir()
	must(t, chromedp.Do(ctx,
		chromedp.Navigate(url+"/"),
		chromedp.WaitVisible(chromedp.CSS("[data-testid=bank]")),
		chromedp.Func(func(ctx context.Context, _ *chromedp.Target) error {
			_, err := chromedp.CallBrowser(ctx, cdpbrowser.SetDownloadBehavior, cdpbrowser.SetDownloadBehaviorParams{
				Behavior: cdpbrowser.SetDownloadBehaviorBehaviorAllowAndName, DownloadPath: dir, EventsEnabled: new(true)})
			return err
		}),
	), "opening the page")
	htmxReady(t, ctx)
	run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker = 9`), "marking the window")

	rec := run(t, ctx, chromedp.Evaluate[string](`document.querySelector("[data-testid=downloads] [data-testid=download-bar]").dataset.cell`), "reading the recommended cell")
	other := run(t, ctx, chromedp.Evaluate[string](
		`[...document.querySelectorAll("details.cand")].filter(e => !e.querySelector("summary").textContent.includes("not feasible")).map(e => e.id.replace(/^cand-/, ""))[0] || ""`), "finding another feasible bank")
	if other == "" {
		t.Fatal("the example shows no other feasible bank")
	}
	// Its card loads its figures and downloads when opened.
	must(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(`#cand-`+other+` > summary`)),
		chromedp.WaitVisible(chromedp.CSS(`#cand-`+other+` [data-testid=download-bar]`))), "opening its details")

	isType := map[string]func([]byte) error{
		"boq-csv": func(b []byte) error { _, err := csv.NewReader(bytes.NewReader(b)).ReadAll(); return err },
		"boq-xlsx": func(b []byte) error {
			f, err := excelize.OpenReader(bytes.NewReader(b))
			if err == nil {
				f.Close()
			}
			return err
		},
		"boq-json": func(b []byte) error { return json.Unmarshal(b, new(map[string]any)) },
		"pdf-a4": func(b []byte) error {
			if !bytes.HasPrefix(b, []byte("%PDF-")) {
				return os.ErrInvalid
			}
			return nil
		},
		"design": func(b []byte) error { return json.Unmarshal(b, new(map[string]any)) },
	}
	isType["pdf-letter"] = isType["pdf-a4"]
	ext := map[string]string{"boq-csv": ".csv", "boq-xlsx": ".xlsx", "boq-json": ".json", "pdf-a4": ".pdf", "pdf-letter": ".pdf", "design": ".json"}

	for _, cell := range []string{rec, other} {
		for _, format := range []string{"boq-csv", "boq-xlsx", "boq-json", "pdf-a4", "pdf-letter"} {
			sel := `[data-testid=download-bar][data-cell="` + cell + `"] button[data-format=` + format + `]`
			name, data := download(t, ctx, dir, sel)
			if !strings.HasSuffix(name, ext[format]) {
				t.Errorf("%s %s: file name %q, want %s", cell, format, name, ext[format])
			}
			if cell == other && !strings.Contains(name, other) {
				t.Errorf("%s %s: file name %q does not name the cell", cell, format, name)
			}
			if err := isType[format](data); err != nil {
				t.Errorf("%s %s: the file is not a %s: %v (%q…)", cell, format, format, err, data[:min(len(data), 40)])
			}
		}
	}
	name, data := download(t, ctx, dir, `button[data-format=design]`)
	if !strings.HasSuffix(name, "-design.json") || isType["design"](data) != nil {
		t.Errorf("design file %q: %q…", name, data[:min(len(data), 40)])
	}
	if m := run(t, ctx, chromedp.Evaluate[int](`window.capbankMarker || 0`), "reading the marker"); m != 9 {
		t.Error("a download replaced the page")
	}
	if errs := logs.errors(); len(errs) > 0 {
		t.Errorf("the page logged errors:\n%s", strings.Join(errs, "\n"))
	}
}
