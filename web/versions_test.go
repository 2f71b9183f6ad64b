package web

import (
	"net/http"
	"net/http/httptest"
	"net/url"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"
)

// Two engineers open the same cell and the same saved design through the
// API, both change them: the first change wins and gets the next ETag, the
// second is refused with 412 and the current ETag, and nothing of it is
// kept; a change without If-Match is 428 and a bad If-Match 400.
func TestAPIVersionsAndConflicts(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	rec := do(t, s, http.MethodPost, "/api/v1/cells", "application/json", userCellJSON)
	wantStatus(t, rec, http.StatusCreated)
	if got := rec.Header().Get("ETag"); got != `"1"` {
		t.Fatalf("a new cell's ETag %q, want \"1\"", got)
	}
	cellURL := "/api/v1/cells/bench-2v7-80f"
	rec = do(t, s, http.MethodGet, cellURL, "", "")
	opened := rec.Header().Get("ETag")
	if opened != `"1"` {
		t.Fatalf("GET gives ETag %q, want \"1\"", opened)
	}
	first := strings.Replace(userCellJSON, `"capacitance_f":80`, `"capacitance_f":76.5`, 1)
	second := strings.Replace(userCellJSON, `"capacitance_f":80`, `"capacitance_f":90`, 1)
	rec = doMatch(t, s, http.MethodPut, cellURL, "application/json", first, opened)
	wantStatus(t, rec, http.StatusOK)
	if got := rec.Header().Get("ETag"); got != `"2"` {
		t.Errorf("after the first edit: ETag %q, want \"2\"", got)
	}
	rec = doMatch(t, s, http.MethodPut, cellURL, "application/json", second, opened)
	p := wantProblem(t, rec, http.StatusPreconditionFailed, "")
	if rec.Header().Get("ETag") != `"2"` || !strings.Contains(p.Detail, "changed by someone else since you opened it") || !strings.Contains(p.Detail, "version 2") {
		t.Errorf("stale edit: ETag %q, problem %+v; want the current ETag \"2\" and the words", rec.Header().Get("ETag"), p)
	}
	rec = do(t, s, http.MethodGet, cellURL, "", "")
	if !strings.Contains(rec.Body.String(), `"capacitance_f":76.5`) {
		t.Errorf("the refused edit was kept: %s", rec.Body)
	}
	wantProblem(t, doMatch(t, s, http.MethodPut, cellURL, "application/json", second, ""), http.StatusPreconditionRequired, "")
	wantProblem(t, doMatch(t, s, http.MethodPut, cellURL, "application/json", second, "yesterday"), http.StatusBadRequest, "")
	wantProblem(t, doMatch(t, s, http.MethodDelete, cellURL, "", "", opened), http.StatusPreconditionFailed, "")
	wantProblem(t, doMatch(t, s, http.MethodDelete, cellURL, "", "", ""), http.StatusPreconditionRequired, "")
	wantStatus(t, doMatch(t, s, http.MethodDelete, cellURL, "", "", `"2"`), http.StatusNoContent)

	design := `{"window":{"max_v":48,"min_v":24},"load":{"steps":[{"power_w":1500,"duration_s":10}]},"cells":[` + userCellJSON + `]}`
	rec = do(t, s, http.MethodPost, "/api/v1/designs", "application/json", `{"name":"Shared","design":`+design+`}`)
	wantStatus(t, rec, http.StatusCreated)
	loc := rec.Header().Get("Location")
	if rec.Header().Get("ETag") != `"1"` {
		t.Fatalf("a new design's ETag %q", rec.Header().Get("ETag"))
	}
	rec = doMatch(t, s, http.MethodPatch, loc, "application/json", `{"name":"Mine"}`, `"1"`)
	wantStatus(t, rec, http.StatusOK)
	rec = doMatch(t, s, http.MethodPut, loc, "application/json", `{"name":"Theirs","design":`+design+`}`, `"1"`)
	wantProblem(t, rec, http.StatusPreconditionFailed, "")
	if rec.Header().Get("ETag") != `"2"` {
		t.Errorf("stale design edit: ETag %q, want \"2\"", rec.Header().Get("ETag"))
	}
	wantProblem(t, doMatch(t, s, http.MethodPatch, loc, "application/json", `{"name":"x"}`, ""), http.StatusPreconditionRequired, "")
	rec = do(t, s, http.MethodGet, loc, "", "")
	if !strings.Contains(rec.Body.String(), `"name":"Mine"`) || rec.Header().Get("ETag") != `"2"` {
		t.Errorf("after the refused edit: ETag %q, %s", rec.Header().Get("ETag"), rec.Body)
	}
	wantStatus(t, doMatch(t, s, http.MethodDelete, loc, "", "", `W/"2"`), http.StatusNoContent)
}

// /healthz answers 503 when the database does not answer, with the reason
// in the log and not in the answer.
func TestHealthzReportsTheDatabase(t *testing.T) {
	t.Parallel()
	s, logs := newTestServer(t)
	wantStatus(t, do(t, s, http.MethodGet, "/healthz", "", ""), http.StatusOK)
	s.store.Close()
	rec := do(t, s, http.MethodGet, "/healthz", "", "")
	wantStatus(t, rec, http.StatusServiceUnavailable)
	if body := rec.Body.String(); strings.Contains(body, "closed") || strings.Contains(body, "capbank.db") || !strings.Contains(body, "unavailable") {
		t.Errorf("healthz body %s; want only the status", body)
	}
	if !strings.Contains(logs.String(), "the database does not answer") {
		t.Errorf("log %s; want the reason", logs)
	}
}

// pageInputs are the named inputs of the form matched by sel, as a browser
// would post them (text, hidden; the first value of each name).
func pageInputs(t *testing.T, rec *httptest.ResponseRecorder, sel string) url.Values {
	t.Helper()
	vals := url.Values{}
	parse(t, rec).Find(sel).Find("input[name]").Each(func(_ int, in *goquery.Selection) {
		name, _ := in.Attr("name")
		typ, _ := in.Attr("type")
		if typ == "checkbox" || typ == "radio" || typ == "file" || vals.Has(name) {
			return
		}
		v, _ := in.Attr("value")
		vals.Set(name, v)
	})
	return vals
}

// Two engineers open the same cell page; the first saves, the second's
// save is refused with "changed by someone else since you opened it",
// keeps their figures in the form and offers to reload or save as a new
// cell; a delete from the old page is refused too.
func TestCellPageConflict(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	wantStatus(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", userCellJSON), http.StatusCreated)
	page := get(t, s, "/library/bench-2v7-80f")
	wantStatus(t, page, http.StatusOK)
	mine := pageInputs(t, page, "[data-testid=cell-form]")
	if mine.Get("version") != "1" {
		t.Fatalf("the cell form carries version %q, want 1", mine.Get("version"))
	}
	theirs := pageInputs(t, page, "[data-testid=cell-form]")
	theirs.Set("name", "their edit")
	wantStatus(t, postForm(t, s, "/library/bench-2v7-80f", theirs, false), http.StatusSeeOther)

	mine.Set("name", "my edit")
	rec := postForm(t, s, "/library/bench-2v7-80f", mine, false)
	wantStatus(t, rec, http.StatusConflict)
	doc := parse(t, rec)
	if msg := doc.Find("[data-testid=stale]").Text(); !strings.Contains(msg, "changed by someone else since you opened it") {
		t.Errorf("stale notice %q", msg)
	}
	if href, _ := doc.Find("[data-testid=stale] a").Attr("href"); href != "/library/bench-2v7-80f" {
		t.Errorf("reload link %q", href)
	}
	if v, _ := doc.Find("[data-testid=cell-form] input[name=name]").Attr("value"); v != "my edit" {
		t.Errorf("the form lost my edit: name %q", v)
	}
	if doc.Find("[data-testid=save-as-new-cell]").Length() != 1 {
		t.Error("no Save as a new cell")
	}
	rec = do(t, s, http.MethodGet, "/api/v1/cells/bench-2v7-80f", "", "")
	if !strings.Contains(rec.Body.String(), `"name":"their edit"`) || rec.Header().Get("ETag") != `"2"` {
		t.Errorf("their edit was overwritten: %s", rec.Body)
	}
	// Saving again from the refused page is refused again.
	again := pageInputs(t, rec2page(t, s, mine), "[data-testid=cell-form]")
	wantStatus(t, postForm(t, s, "/library/bench-2v7-80f", again, false), http.StatusConflict)
	// Save as a new cell, under a new id.
	mine.Set("id", "bench-2v7-80f-mine")
	wantStatus(t, postForm(t, s, "/library", mine, false), http.StatusSeeOther)
	wantStatus(t, do(t, s, http.MethodGet, "/api/v1/cells/bench-2v7-80f-mine", "", ""), http.StatusOK)
	// A delete from the page opened at version 1.
	wantStatus(t, postForm(t, s, "/library/bench-2v7-80f/delete", url.Values{"version": {"1"}}, false), http.StatusPreconditionFailed)
	wantStatus(t, postForm(t, s, "/library/bench-2v7-80f/delete", url.Values{"version": {"2"}}, false), http.StatusSeeOther)
}

// rec2page posts vals to the cell page again and returns the refused page.
func rec2page(t *testing.T, s http.Handler, vals url.Values) *httptest.ResponseRecorder {
	t.Helper()
	return postForm(t, s, "/library/bench-2v7-80f", vals, false)
}

// Two engineers open the same saved design; the first saves over it, the
// second's "Save over" is refused with the notice and a reload link, their
// design still on the page with "Save as new".
func TestSavedDesignPageConflict(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	design := `{"name":"Shared","window":{"max_v":48,"min_v":24},"load":{"steps":[{"power_w":1500,"duration_s":10}]},"cells":[` + userCellJSON + `]}`
	rec := do(t, s, http.MethodPost, "/api/v1/designs", "application/json", `{"name":"Shared","design":`+design+`}`)
	wantStatus(t, rec, http.StatusCreated)
	loc := strings.TrimPrefix(rec.Header().Get("Location"), "/api/v1")
	page := get(t, s, loc)
	wantStatus(t, page, http.StatusOK)
	saveOver := parse(t, page).Find("[data-testid=save-over]").Closest("form")
	mine := url.Values{}
	saveOver.Find("input[type=hidden]").Each(func(_ int, in *goquery.Selection) {
		n, _ := in.Attr("name")
		v, _ := in.Attr("value")
		mine.Set(n, v)
	})
	if mine.Get("saved_version") != "1" || mine.Get("d") == "" {
		t.Fatalf("the save-over form posts %v; want the design and saved_version 1", mine)
	}
	// Someone else saves over it first (the same form, opened at 1).
	wantStatus(t, postForm(t, s, loc, mine, false), http.StatusSeeOther)
	rec = postForm(t, s, loc, mine, false)
	wantStatus(t, rec, http.StatusConflict)
	doc := parse(t, rec)
	if msg := doc.Find("[data-testid=stale]").Text(); !strings.Contains(msg, "changed by someone else since you opened it") {
		t.Errorf("stale notice %q", msg)
	}
	if href, _ := doc.Find("[data-testid=stale] a").Attr("href"); href != loc {
		t.Errorf("reload link %q, want %s", href, loc)
	}
	if doc.Find("[data-testid=save-new]").Length() != 1 {
		t.Error("no Save as new on the refused page")
	}
	if v, _ := doc.Find("[data-testid=save-over]").Closest("form").Find("input[name=saved_version]").Attr("value"); v != "1" {
		t.Errorf("the refused page's save-over carries version %q; want the opened 1, so it is refused again", v)
	}
	if rec := do(t, s, http.MethodGet, "/api/v1"+loc, "", ""); rec.Header().Get("ETag") != `"2"` {
		t.Errorf("after one save over: ETag %q, want \"2\"", rec.Header().Get("ETag"))
	}
	// A stale link set by the address is never shown.
	if parse(t, get(t, s, "/?stale=javascript:alert(1)")).Find("[data-testid=stale]").Length() != 0 {
		t.Error("the stale notice shows for a link from the address")
	}
}

// The saved designs list posts the version it shows with a rename and a
// delete: after someone else's change, both are refused (412) and change
// nothing.
func TestDesignsListVersions(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	design := `{"window":{"max_v":48,"min_v":24},"load":{"steps":[{"power_w":1500,"duration_s":10}]},"cells":[` + userCellJSON + `]}`
	rec := do(t, s, http.MethodPost, "/api/v1/designs", "application/json", `{"name":"Listed","design":`+design+`}`)
	wantStatus(t, rec, http.StatusCreated)
	loc := strings.TrimPrefix(rec.Header().Get("Location"), "/api/v1")
	list := get(t, s, "/designs")
	rename := url.Values{"name": {"Mine"}}
	if v, _ := parse(t, list).Find(`form[action="` + loc + `/rename"] input[name=version]`).Attr("value"); v != "1" {
		t.Fatalf("the rename form carries version %q, want 1", v)
	} else {
		rename.Set("version", v)
	}
	wantStatus(t, doMatch(t, s, http.MethodPatch, "/api/v1"+loc, "application/json", `{"name":"Theirs"}`, `"1"`), http.StatusOK)
	wantStatus(t, postForm(t, s, loc+"/rename", rename, false), http.StatusPreconditionFailed)
	wantStatus(t, postForm(t, s, loc+"/delete", url.Values{"version": {"1"}}, false), http.StatusPreconditionFailed)
	if rec := do(t, s, http.MethodGet, "/api/v1"+loc, "", ""); !strings.Contains(rec.Body.String(), `"name":"Theirs"`) {
		t.Errorf("after the refused rename and delete: %s", rec.Body)
	}
	rename.Set("version", "2")
	wantStatus(t, postForm(t, s, loc+"/rename", rename, false), http.StatusSeeOther)
	wantStatus(t, postForm(t, s, loc+"/delete", url.Values{"version": {"3"}}, false), http.StatusSeeOther)
}
