package web

import (
	"net/http"
	"net/url"
	"regexp"
	"strings"
	"testing"

	"capbank/web/store"
)

// goTypeWords match encoding/json's own wording, which names Go types.
var goTypeWords = regexp.MustCompile(`Go (value|struct)|of type|json\.|sizing\.|float64|\[\]|unmarshal`)

// Cell JSON of the wrong shape, through every route that reads it, is
// refused with what the shape should be in plain words, never a Go type:
// the import API and the library page's import take a list or
// {"cells": […]}; the cells API and the measured-cell draft take one cell.
func TestCellJSONShapeMessages(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)

	for _, body := range []string{`{"id":"x"}`, `{"cells": {"a": 1}}`} {
		rec := do(t, s, http.MethodPost, "/api/v1/cells/import", "application/json", body)
		wantStatus(t, rec, http.StatusUnprocessableEntity)
		var rep store.ImportReport
		decodeJSON(t, rec, &rep)
		if !strings.Contains(rep.Error, store.CellsFileShape) || goTypeWords.MatchString(rep.Error) {
			t.Errorf("API import of %s: %q, want the expected shape in words", body, rep.Error)
		}

		rec = postMultipart(t, s, "/library/import", nil, "cells_file", "cells.json", body)
		wantStatus(t, rec, http.StatusUnprocessableEntity)
		report := text(parse(t, rec), "[data-testid=import-report]")
		if !strings.Contains(report, store.CellsFileShape) || goTypeWords.MatchString(report) {
			t.Errorf("page import of %s: %q, want the expected shape in words", body, report)
		}
	}

	for body, want := range map[string]string{
		`[` + userCellJSON + `]`:                   "must be a cell, an object",
		`{"id":"a","rated_v":"2.7"}`:               "rated_v: must be a number, not a JSON string",
		`{"id":"a","capacitance_tolerance_pct":5}`: "capacitance_tolerance_pct: must be a list, not a JSON number",
	} {
		for _, method := range []string{http.MethodPost, http.MethodPut} {
			target := "/api/v1/cells"
			if method == http.MethodPut {
				target += "/a"
			}
			p := wantProblem(t, do(t, s, method, target, "application/json", body), http.StatusBadRequest, "cell")
			if msg := p.Errors[0].Message; !strings.Contains(msg, want) || goTypeWords.MatchString(msg) {
				t.Errorf("%s %s %s: %q, want %q without a Go type", method, target, body, msg, want)
			}
		}
	}

	rec := postForm(t, s, "/library/new", url.Values{"cell_json": {`[1]`}}, false)
	wantStatus(t, rec, http.StatusBadRequest)
	if body := rec.Body.String(); !strings.Contains(body, "cell_json: must be a cell") || goTypeWords.MatchString(body) {
		t.Errorf("measured-cell draft of a list: %.1500s", body)
	}
}

// A cell sent to the API, imported or saved with a design obeys the design
// file's key rules (sizing.DecodeStrict): a key in the wrong case or given
// twice is refused by name, never read case-insensitively or last-wins.
// Before, the cells API and the import took both.
func TestCellKeysAreStrict(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	for body, want := range map[string]string{
		`{"id":"k1","rated_v":2.7,"capacitance_f":10,"ESR_OHM":0.1}`:               "ESR_OHM: is not a cell key",
		`{"id":"k2","rated_v":2.7,"capacitance_f":10,"esr_ohm":0.1,"esr_ohm":0.2}`: "esr_ohm",
	} {
		p := wantProblem(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", body), http.StatusBadRequest, "cell")
		if msg := p.Errors[0].Message; !strings.Contains(msg, want) {
			t.Errorf("POST %s: %q, want %q", body, msg, want)
		}
		rec := do(t, s, http.MethodPost, "/api/v1/cells/import", "application/json", "["+body+"]")
		var rep store.ImportReport
		decodeJSON(t, rec, &rep)
		if rep.Imported || len(rep.Rows) != 1 || !strings.Contains(rep.Rows[0].Reason, want) {
			t.Errorf("import of %s: %+v, want the row refused naming %q", body, rep, want)
		}
	}
	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/designs", "application/json", `{"name":"a","NAME":"b","design":{}}`), http.StatusBadRequest, "NAME")
}
