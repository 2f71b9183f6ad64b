package web

import (
	"net/http"
	"strings"
	"testing"
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
