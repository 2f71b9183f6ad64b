package web

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"net/http"
	"net/http/httptest"
	"net/url"
	"slices"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"

	"capbank/sizing"
	"capbank/web/share"
	"capbank/web/store"
)

// do sends a request with an optional body of the given type.
// do sends a request; a change to a versioned record (PUT, PATCH, DELETE)
// goes with If-Match: *, whatever the version (doMatch names one).
func do(t testing.TB, s http.Handler, method, target, ctype, body string) *httptest.ResponseRecorder {
	t.Helper()
	match := ""
	if method == http.MethodPut || method == http.MethodPatch || method == http.MethodDelete {
		match = "*"
	}
	return doMatch(t, s, method, target, ctype, body, match)
}

// doMatch sends a request with the If-Match header ifMatch (none when "").
func doMatch(t testing.TB, s http.Handler, method, target, ctype, body, ifMatch string) *httptest.ResponseRecorder {
	t.Helper()
	req := httptest.NewRequest(method, target, strings.NewReader(body))
	if ctype != "" {
		req.Header.Set("Content-Type", ctype)
	}
	if ifMatch != "" {
		req.Header.Set("If-Match", ifMatch)
	}
	return serve(s, req)
}

func decodeJSON(t testing.TB, rec *httptest.ResponseRecorder, v any) {
	t.Helper()
	if err := json.Unmarshal(rec.Body.Bytes(), v); err != nil {
		t.Fatalf("not JSON (%v): %s", err, rec.Body)
	}
}

// userCellJSON is an invented cell (demo data for the test, no product).
const userCellJSON = `{"id":"bench-2v7-80f","name":"Bench sample 80 F (invented)","source":"measured","rated_v":2.7,"capacitance_f":80,"esr_ohm":0.011,"leakage_a":0.0002,"mass_kg":0.018,"volume_l":0.014,"unit_price":2.2}`

func TestCellsAPILifecycle(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)

	var list cellList
	rec := do(t, s, http.MethodGet, "/api/v1/cells", "", "")
	wantStatus(t, rec, http.StatusOK)
	decodeJSON(t, rec, &list)
	if list.Count != len(store.DemoCells()) || len(list.Cells) != list.Count {
		t.Fatalf("a fresh library lists %d cells, want the %d demo cells", list.Count, len(store.DemoCells()))
	}
	for _, c := range list.Cells {
		if !c.ReadOnly || c.Cell.Source != "demo" {
			t.Errorf("demo cell %s: read_only %v, source %q", c.Cell.ID, c.ReadOnly, c.Cell.Source)
		}
	}

	rec = do(t, s, http.MethodPost, "/api/v1/cells", "application/json", userCellJSON)
	wantStatus(t, rec, http.StatusCreated)
	if loc := rec.Header().Get("Location"); loc != "/api/v1/cells/bench-2v7-80f" {
		t.Errorf("Location %q", loc)
	}
	var got store.CellRecord
	decodeJSON(t, rec, &got)
	if got.ReadOnly || got.Cell.CapacitanceF != 80 || got.Cell.ESROhm != 0.011 {
		t.Errorf("created %+v", got)
	}

	// The same id again is a conflict; a demo cell cannot be changed.
	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", userCellJSON), http.StatusConflict, "")
	demo := strings.Replace(userCellJSON, "bench-2v7-80f", "demo-2v7-650f", 1)
	wantProblem(t, do(t, s, http.MethodPut, "/api/v1/cells/demo-2v7-650f", "application/json", demo), http.StatusConflict, "")
	wantProblem(t, do(t, s, http.MethodDelete, "/api/v1/cells/demo-2v7-650f", "", ""), http.StatusConflict, "")

	// An invalid cell names its field; a key that is no cell key is a 400;
	// another body type is a 415; an id that differs from the address, 422.
	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", strings.Replace(userCellJSON, `"esr_ohm":0.011`, `"esr_ohm":-1`, 1)), http.StatusUnprocessableEntity, "esr_ohm")
	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", strings.Replace(userCellJSON, `"esr_ohm"`, `"esr"`, 1)), http.StatusBadRequest, "cell")
	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/cells", "text/plain", userCellJSON), http.StatusUnsupportedMediaType, "")
	wantProblem(t, do(t, s, http.MethodPut, "/api/v1/cells/other", "application/json", userCellJSON), http.StatusUnprocessableEntity, "id")

	rec = do(t, s, http.MethodPut, "/api/v1/cells/bench-2v7-80f", "application/json", strings.Replace(userCellJSON, `"capacitance_f":80`, `"capacitance_f":76.5`, 1))
	wantStatus(t, rec, http.StatusOK)
	rec = do(t, s, http.MethodGet, "/api/v1/cells/bench-2v7-80f", "", "")
	wantStatus(t, rec, http.StatusOK)
	decodeJSON(t, rec, &got)
	if got.Cell.CapacitanceF != 76.5 {
		t.Errorf("after PUT the capacitance is %g F, want 76.5", got.Cell.CapacitanceF)
	}

	// Filters: rated voltage from 2.9 V keeps the 3.0 V and 3.8 V demo cells.
	rec = do(t, s, http.MethodGet, "/api/v1/cells?min_v=2.9", "", "")
	wantStatus(t, rec, http.StatusOK)
	decodeJSON(t, rec, &list)
	want := 0
	for _, c := range store.DemoCells() {
		if c.RatedV >= 2.9 {
			want++
		}
	}
	if list.Count != want || want == 0 {
		t.Errorf("min_v=2.9 lists %d cells, want %d", list.Count, want)
	}
	rec = do(t, s, http.MethodGet, "/api/v1/cells?min_f=50&max_f=100&q=bench", "", "")
	decodeJSON(t, rec, &list)
	if list.Count != 1 || list.Cells[0].Cell.ID != "bench-2v7-80f" {
		t.Errorf("min_f=50&max_f=100&q=bench lists %+v", list.Cells)
	}
	wantProblem(t, do(t, s, http.MethodGet, "/api/v1/cells?min_v=abc", "", ""), http.StatusUnprocessableEntity, "min_v")

	rec = do(t, s, http.MethodDelete, "/api/v1/cells/bench-2v7-80f", "", "")
	wantStatus(t, rec, http.StatusNoContent)
	wantProblem(t, do(t, s, http.MethodGet, "/api/v1/cells/bench-2v7-80f", "", ""), http.StatusNotFound, "")
}

// wantProblem checks a problem document's status and, when field is not
// "", that one of its errors names the field.
func wantProblem(t testing.TB, rec *httptest.ResponseRecorder, status int, field string) problem {
	t.Helper()
	wantStatus(t, rec, status)
	p := readProblem(t, rec)
	if p.Status != status || p.Title == "" || p.Detail == "" {
		t.Errorf("problem %+v", p)
	}
	if field != "" {
		found := false
		for _, e := range p.Errors {
			found = found || e.Field == field
		}
		if !found {
			t.Errorf("problem names %+v, want the field %q", p.Errors, field)
		}
	}
	return p
}

func TestCellsImportAPI(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	count := func() int {
		var l cellList
		decodeJSON(t, do(t, s, http.MethodGet, "/api/v1/cells", "", ""), &l)
		return l.Count
	}
	before := count()
	good := "id,rated_v,capacitance_f,esr_ohm,mass_kg\r\nlab-a,2.7,10,0.03,0.006\r\n\"lab-b\",2.7,\"25\",0.02,0.01\r\n"
	bad := good + "lab-c,2.7,abc,0.02,0.01\r\n"

	var rep store.ImportReport
	rec := do(t, s, http.MethodPost, "/api/v1/cells/import", "text/csv", bad)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	decodeJSON(t, rec, &rep)
	if rep.Imported || rep.Accepted != 2 || rep.Rejected != 1 || rep.Rows[2].Line != 4 || !strings.Contains(rep.Rows[2].Reason, "capacitance_f") {
		t.Errorf("report of a file with a bad row: %+v", rep)
	}
	if n := count(); n != before {
		t.Fatalf("a rejected import changed the library: %d cells, was %d", n, before)
	}

	rec = do(t, s, http.MethodPost, "/api/v1/cells/import", "text/csv; charset=utf-8", "\ufeff"+good)
	wantStatus(t, rec, http.StatusOK)
	decodeJSON(t, rec, &rep)
	if !rep.Imported || rep.Accepted != 2 {
		t.Errorf("report %+v", rep)
	}
	if n := count(); n != before+2 {
		t.Errorf("after importing 2 cells the library holds %d, want %d", n, before+2)
	}

	rec = do(t, s, http.MethodPost, "/api/v1/cells/import", "application/json", `[`+strings.Replace(userCellJSON, "bench-2v7-80f", "lab-j", 1)+`]`)
	wantStatus(t, rec, http.StatusOK)
	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/cells/import", "application/xml", "<cells/>"), http.StatusUnsupportedMediaType, "")
}

// The library pages add, show, duplicate, edit and delete a cell without
// JavaScript, each problem beside its field.
func TestLibraryPages(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	rec := get(t, s, "/library")
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	if n := doc.Find(`[data-testid=library-row]`).Length(); n != len(store.DemoCells()) {
		t.Errorf("library lists %d rows, want %d", n, len(store.DemoCells()))
	}

	form := url.Values{"id": {"my-cell"}, "name": {"My cell"}, "rated_v": {"2.7"}, "capacitance_f": {"100"}, "esr_ohm": {"12m"}, "mass_kg": {"21m"}}
	bad := url.Values{}
	for k, v := range form {
		bad[k] = v
	}
	bad.Set("esr_ohm", "twelve")
	rec = postForm(t, s, "/library", bad, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if msg := text(parse(t, rec), "#msg-esr_ohm"); msg == "" {
		t.Errorf("no message beside the ESR field: %s", rec.Body)
	}

	rec = postForm(t, s, "/library", form, false)
	wantStatus(t, rec, http.StatusSeeOther)
	if loc := rec.Header().Get("Location"); loc != "/library/my-cell?done=created" {
		t.Fatalf("Location %q", loc)
	}
	doc = parse(t, get(t, s, "/library/my-cell"))
	if v, _ := doc.Find(`#f-esr_ohm`).Attr("value"); v != "12m" && v != "0.012" {
		t.Errorf("the ESR field reads %q, want 12 mΩ", v)
	}
	// The figures of merit: 2.7 V, 100 F, 21 g gives ½·100·2.7²/3600/0.021
	// = 4.821 Wh/kg (E = ½CV², sizing/REFERENCES.md 3.1).
	if merit := text(doc, "[data-testid=cell-merit]"); !strings.Contains(merit, "4.821 Wh/kg") {
		t.Errorf("figures of merit %q lack 4.821 Wh/kg", merit)
	}

	rec = postForm(t, s, "/library", form, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if msg := text(parse(t, rec), "#msg-id"); !strings.Contains(msg, "already in the library") {
		t.Errorf("a taken id says %q", msg)
	}

	edit := url.Values{}
	for k, v := range form {
		edit[k] = v
	}
	edit.Set("capacitance_f", "110")
	wantStatus(t, postForm(t, s, "/library/my-cell", edit, false), http.StatusSeeOther)
	if v, _ := parse(t, get(t, s, "/library/my-cell")).Find(`#f-capacitance_f`).Attr("value"); v != "110" {
		t.Errorf("after the edit the capacitance reads %q, want 110", v)
	}

	rec = postForm(t, s, "/library/demo-2v7-650f/duplicate", nil, false)
	wantStatus(t, rec, http.StatusSeeOther)
	if loc := rec.Header().Get("Location"); loc != "/library/demo-2v7-650f-copy?done=duplicated" {
		t.Errorf("duplicate goes to %q", loc)
	}
	wantStatus(t, postForm(t, s, "/library/demo-2v7-650f", edit, false), http.StatusConflict)
	wantStatus(t, postForm(t, s, "/library/demo-2v7-650f/delete", nil, false), http.StatusConflict)

	wantStatus(t, postForm(t, s, "/library/my-cell/delete", nil, false), http.StatusSeeOther)
	wantStatus(t, get(t, s, "/library/my-cell"), http.StatusNotFound)

	// A bad filter names its field and still lists the library.
	rec = get(t, s, "/library?min_f=lots")
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if msg := text(parse(t, rec), "#msg-min_f"); msg == "" {
		t.Error("no message beside the capacitance filter")
	}
	rec = get(t, s, "/library?min_f=1k")
	doc = parse(t, rec)
	doc.Find(`[data-testid=library-row]`).Each(func(_ int, r *goquery.Selection) {
		id, _ := r.Attr("data-id")
		if c, ok := store.DemoCell(strings.TrimSuffix(id, "-copy")); !ok || c.CapacitanceF < 1000 {
			t.Errorf("min_f=1k lists %s", id)
		}
	})
}

// A cell the user added is offered by the design page and sizes there.
func TestUserCellSizesOnTheDesignPage(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	wantStatus(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", userCellJSON), http.StatusCreated)
	if parse(t, get(t, s, "/")).Find(`#pick-bench-2v7-80f`).Length() != 1 {
		t.Error("the design page does not offer the user's cell")
	}
	v := designValues()
	v["cells.pick"] = []string{"bench-2v7-80f"}
	rec := postForm(t, s, "/results", v, true)
	wantStatus(t, rec, http.StatusOK)
	if !strings.Contains(rec.Body.String(), "bench-2v7-80f") {
		t.Error("the results do not size the user's cell")
	}
	// And the JSON API sizes a design naming it by id.
	body := `{"window":{"max_v":48,"min_v":24},"load":{"steps":[{"power_w":1500,"duration_s":10}]},"cells":["bench-2v7-80f"]}`
	rec = do(t, s, http.MethodPost, "/api/v1/size", "application/json", body)
	wantStatus(t, rec, http.StatusOK)
	var rep sizing.Report
	decodeJSON(t, rec, &rep)
	if len(rep.Candidates) != 1 || rep.Candidates[0].CellID != "bench-2v7-80f" {
		t.Errorf("candidates %+v", rep.Candidates)
	}
}

// The page saves the design it shows, lists it, opens it, saves over it,
// renames, duplicates and deletes it.
func TestSavedDesignPages(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	page := get(t, s, "/")
	token := pageToken(t, page)
	if parse(t, page).Find(`[data-testid=save-form]`).Length() != 1 {
		t.Fatal("the results offer no save form")
	}
	rec := postForm(t, s, "/designs", url.Values{"d": {token}, "name": {"Cabinet hold-up"}}, false)
	wantStatus(t, rec, http.StatusSeeOther)
	loc := rec.Header().Get("Location")
	if !strings.HasPrefix(loc, "/designs/") {
		t.Fatalf("Location %q", loc)
	}
	// Save as new never overwrites: the same again is a second design.
	wantStatus(t, postForm(t, s, "/designs", url.Values{"d": {token}, "name": {"Cabinet hold-up"}}, false), http.StatusSeeOther)
	doc := parse(t, get(t, s, "/designs"))
	if n := doc.Find(`[data-testid=saved-design]`).Length(); n != 2 {
		t.Fatalf("%d saved designs listed, want 2", n)
	}

	opened := get(t, s, loc)
	wantStatus(t, opened, http.StatusOK)
	doc = parse(t, opened)
	id := strings.TrimSuffix(strings.TrimPrefix(loc, "/designs/"), "?done=saved")
	if v, _ := doc.Find(`input[name=saved_id]`).Attr("value"); v != id {
		t.Errorf("the opened design carries saved_id %q, want %q", v, id)
	}
	if !strings.Contains(text(doc, "[data-testid=notice]"), "Cabinet hold-up") {
		t.Errorf("notice %q", text(doc, "[data-testid=notice]"))
	}
	if doc.Find(`[data-testid=save-over]`).Length() != 1 {
		t.Error("an opened design offers no save over it")
	}
	// It is the same design: the same share token comes back.
	if got := pageToken(t, opened); got != token {
		t.Error("the opened design's token differs from the saved one")
	}

	// Save over it with a changed design; the list still holds two.
	v := designValues()
	changed := postForm(t, s, "/", v, false)
	wantStatus(t, postForm(t, s, "/designs/"+id, url.Values{"d": {pageToken(t, changed)}}, false), http.StatusSeeOther)
	if v, _ := parse(t, get(t, s, "/designs/"+id)).Find(`[name="load.steps[0].value"]`).Attr("value"); v != "1500" {
		t.Errorf("after saving over, step 1 reads %q, want 1500", v)
	}

	wantStatus(t, postForm(t, s, "/designs/"+id+"/rename", url.Values{"name": {"Renamed"}}, false), http.StatusSeeOther)
	rec = postForm(t, s, "/designs/"+id+"/rename", url.Values{"name": {"  "}}, false)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if msg := text(parse(t, rec), "#rename-msg-"+id); !strings.Contains(msg, "name") {
		t.Errorf("an empty name says %q", msg)
	}
	wantStatus(t, postForm(t, s, "/designs/"+id+"/duplicate", nil, false), http.StatusSeeOther)
	doc = parse(t, get(t, s, "/designs"))
	names := doc.Find(`[data-testid=saved-design] th a`).Map(func(_ int, s *goquery.Selection) string { return s.Text() })
	if len(names) != 3 || !strings.Contains(strings.Join(names, "|"), "Renamed (copy)") {
		t.Errorf("designs %q", names)
	}
	wantStatus(t, postForm(t, s, "/designs/"+id+"/delete", nil, false), http.StatusSeeOther)
	wantStatus(t, get(t, s, "/designs/"+id), http.StatusNotFound)
	wantStatus(t, get(t, s, "/designs/nope"), http.StatusNotFound)
}

// A share link opens the same design, sized the same, with no database row.
func TestShareLinkRoundTrip(t *testing.T) {
	t.Parallel()
	a, _ := newTestServer(t)
	b, _ := newTestServer(t) // "another capbank"
	v := designValues()
	v.Set("name", "Shared <b>design</b>")
	page := postForm(t, a, "/", v, false)
	wantStatus(t, page, http.StatusOK)
	href, ok := parse(t, page).Find(`[data-testid=share-link]`).Attr("href")
	if !ok || !strings.HasPrefix(href, "/?d=") {
		t.Fatalf("share link %q", href)
	}
	opened := get(t, b, href)
	wantStatus(t, opened, http.StatusOK)
	doc := parse(t, opened)
	for name, want := range map[string]string{"name": "Shared <b>design</b>", "window.max_v": "48", "window.min_v": "24", "load.steps[0].value": "1500"} {
		if got, _ := doc.Find(`[name="` + name + `"]`).Attr("value"); got != want {
			t.Errorf("%s reads %q, want %q", name, got, want)
		}
	}
	if here, there := text(parse(t, page), "[data-testid=headline]"), text(doc, "[data-testid=headline]"); here == "" || here != there {
		t.Errorf("headline %q, on the other capbank %q", here, there)
	}
	// The token decodes to the design file itself.
	tok, _ := url.QueryUnescape(strings.TrimPrefix(href, "/?d="))
	data, err := share.Decode(tok)
	if err != nil || !bytes.Contains(data, []byte(`"max_v":48`)) {
		t.Errorf("token decodes to %s (%v)", data, err)
	}
	rec := get(t, b, "/?d=not-a-design")
	wantStatus(t, rec, http.StatusBadRequest)
}

func TestDesignsAPI(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	// A design with no library references is kept byte for byte.
	design := `{"name": "API design",  "window": {"max_v": 48, "min_v": 24}, "load": {"steps": [{"power_w": 1500, "duration_s": 10}]}, "cells": [` + userCellJSON + `]}`
	rec := do(t, s, http.MethodPost, "/api/v1/designs", "application/json", `{"name":"From the API","design":`+design+`}`)
	wantStatus(t, rec, http.StatusCreated)
	var sd struct {
		ID     int64           `json:"id"`
		Name   string          `json:"name"`
		Design json.RawMessage `json:"design"`
	}
	decodeJSON(t, rec, &sd)
	if sd.ID <= 0 || sd.Name != "From the API" {
		t.Fatalf("saved %+v", sd)
	}
	rec = do(t, s, http.MethodGet, fmt.Sprintf("/api/v1/designs/%d/file", sd.ID), "", "")
	wantStatus(t, rec, http.StatusOK)
	if rec.Body.String() != design {
		t.Errorf("design file\n%s\nwant byte for byte\n%s", rec.Body, design)
	}

	// Library references are written out in full.
	refs := `{"window":{"max_v":48,"min_v":24},"load":{"steps":[{"power_w":1500,"duration_s":10}]},"cells":["demo-2v7-650f"]}`
	rec = do(t, s, http.MethodPost, "/api/v1/designs", "application/json", `{"name":"Refs","design":`+refs+`}`)
	wantStatus(t, rec, http.StatusCreated)
	decodeJSON(t, rec, &sd)
	d, err := sizing.DecodeDesign(bytes.NewReader(sd.Design))
	if err != nil || len(d.Cells) != 1 || d.Cells[0].IsReference() || d.Cells[0].CapacitanceF != 650 {
		t.Errorf("saved design %s (%v)", sd.Design, err)
	}

	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/designs", "application/json", `{"design":`+refs+`}`), http.StatusUnprocessableEntity, "name")
	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/designs", "application/json", `{"name":"x","design":`+strings.Replace(refs, `"min_v":24`, `"min_v":60`, 1)+`}`), http.StatusUnprocessableEntity, "design.window.min_v")
	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/designs", "application/json", `{"name":"x","plan":{}}`), http.StatusBadRequest, "plan")

	rec = do(t, s, http.MethodPatch, fmt.Sprintf("/api/v1/designs/%d", sd.ID), "application/json", `{"name":"Renamed"}`)
	wantStatus(t, rec, http.StatusOK)
	var list designList
	decodeJSON(t, do(t, s, http.MethodGet, "/api/v1/designs", "", ""), &list)
	if list.Count != 2 || list.Designs[0].Name != "Renamed" {
		t.Errorf("list %+v", list)
	}
	wantStatus(t, do(t, s, http.MethodDelete, fmt.Sprintf("/api/v1/designs/%d", sd.ID), "", ""), http.StatusNoContent)
	wantProblem(t, do(t, s, http.MethodGet, fmt.Sprintf("/api/v1/designs/%d", sd.ID), "", ""), http.StatusNotFound, "")
}

// The comparison sizes each cell for the design and marks the best of
// each row; its figures are those of the sizing engine and of
// sizing.Merit, never its own.
func TestCompare(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	ids := []string{"demo-2v7-650f", "demo-3v0-500f", "demo-2v7-3000f"}
	rec := get(t, s, "/compare?cell="+strings.Join(ids, "&cell="))
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	cols := doc.Find(`[data-testid=compare-table] thead th a`).Map(func(_ int, s *goquery.Selection) string { return s.Text() })
	if strings.Join(cols, ",") != strings.Join(ids, ",") {
		t.Fatalf("columns %q, want %q", cols, ids)
	}

	// The same design sized directly: the example design with these cells.
	d := exampleForm().Decode(store.DemoCell).Design
	d.Cells = nil
	for _, id := range ids {
		c, _ := store.DemoCell(id)
		d.Cells = append(d.Cells, c)
	}
	rep, err := sizing.Size(d)
	if err != nil {
		t.Fatal(err)
	}
	fewest, fewestCol := math.MaxInt, -1
	for i, id := range ids {
		for _, c := range rep.Candidates {
			if c.CellID == id && c.Feasible && c.Cells < fewest {
				fewest, fewestCol = c.Cells, i
			}
		}
	}
	row := rowNamed(doc, "Cells")
	if row == nil {
		t.Fatal("no Cells row")
	}
	best := row.Find("td").Eq(fewestCol)
	if _, ok := best.Attr("data-best"); !ok || !strings.Contains(best.Text(), fmt.Sprint(fewest)) {
		t.Errorf("Cells row: column %d (%d cells) not marked best: %s", fewestCol, fewest, row.Text())
	}
	// The arrangement in the rows' words (figures.Arrangement), never the
	// "s × p" shorthand whose "s" reads as seconds (issue 17).
	if got := rowNamed(doc, "Arrangement").Find("td").Eq(fewestCol).Text(); !strings.Contains(got, " in series × ") || strings.Contains(got, " s × ") {
		t.Errorf("Arrangement row reads %q, want \"N in series × M strings, K cells\"", got)
	}
	// Energy per mass of demo-3v0-500f from sizing.Merit.
	c, _ := store.DemoCell("demo-3v0-500f")
	want := fmt.Sprintf("%.3g", *sizing.Merit(c).EnergyWhPerKg)
	if got := rowNamed(doc, "Energy per mass").Find("td").Eq(1).Text(); !strings.Contains(got, want) {
		t.Errorf("energy per mass of demo-3v0-500f reads %q, want %s Wh/kg", got, want)
	}
	feasible := 0
	for _, c := range rep.Candidates {
		if c.Feasible {
			feasible++
		}
	}
	if n := doc.Find(`[data-testid=chart-energy-power] [data-testid=chart-point]`).Length(); n != feasible {
		t.Errorf("the energy–power chart has %d points, want one per feasible bank (%d)", n, feasible)
	}

	for target, msg := range map[string]string{
		"/compare?cell=demo-2v7-650f":                           "at least 2",
		"/compare?cell=demo-2v7-650f&cell=no-such":              "Not in the library: no-such",
		"/compare?cell=" + strings.Join(allDemoIDs(), "&cell="): "at most 8",
	} {
		rec := get(t, s, target)
		wantStatus(t, rec, http.StatusUnprocessableEntity)
		if got := text(parse(t, rec), "#msg-cell"); !strings.Contains(got, msg) {
			t.Errorf("%s says %q, want %q", target, got, msg)
		}
	}
}

func rowNamed(doc *goquery.Document, label string) *goquery.Selection {
	var found *goquery.Selection
	doc.Find(`[data-testid=compare-row]`).Each(func(_ int, r *goquery.Selection) {
		th := strings.TrimSpace(r.Find("th").Contents().First().Text())
		if found == nil && th == label {
			found = r
		}
	})
	return found
}

func allDemoIDs() []string {
	var ids []string
	for _, c := range store.DemoCells() {
		ids = append(ids, c.ID)
	}
	return ids
}

func TestFigureRowMarksTheBest(t *testing.T) {
	v := func(x float64) *float64 { return &x }
	cases := []struct {
		better string
		vals   []*float64
		best   []bool
	}{
		{"lower", []*float64{v(3), v(1), v(2)}, []bool{false, true, false}},
		{"higher", []*float64{v(3), nil, v(3)}, []bool{true, false, true}}, // ties all marked
		{"lower", []*float64{v(3), nil, nil}, []bool{false, false, false}}, // one value: nothing to beat
		{"", []*float64{v(1), v(2)}, []bool{false, false}},
	}
	for _, tc := range cases {
		row := figureRow("x", tc.better, tc.vals, make([]string, len(tc.vals)))
		for i, c := range row.Cells {
			if c.Best != tc.best[i] {
				t.Errorf("%s %v: cell %d best %v, want %v", tc.better, tc.vals, i, c.Best, tc.best[i])
			}
		}
	}
}

// An id with a slash, a space, a percent sign or markup has its page and
// API address, and its name is shown as text, never as markup.
func TestCellIDsNeedingEscapes(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	for _, id := range []string{"lab cell/2", "50%-cell", "a?b#c", `<b>x</b>`} {
		body := fmt.Sprintf(`{"id":%q,"name":"<script>alert(1)</script>","rated_v":2.7,"capacitance_f":10,"esr_ohm":0.03}`, id)
		rec := do(t, s, http.MethodPost, "/api/v1/cells", "application/json", body)
		wantStatus(t, rec, http.StatusCreated)
		loc := rec.Header().Get("Location")
		wantStatus(t, do(t, s, http.MethodGet, loc, "", ""), http.StatusOK)
		page := get(t, s, libraryPath(id))
		wantStatus(t, page, http.StatusOK)
		if strings.Contains(page.Body.String(), "<script>alert(1)</script>") {
			t.Errorf("%s: the name is written as markup", id)
		}
		if v, _ := parse(t, page).Find("#f-id").Attr("value"); v != id {
			t.Errorf("the page of %q shows the id %q", id, v)
		}
		wantStatus(t, postForm(t, s, libraryPath(id)+"/duplicate", nil, false), http.StatusSeeOther)
		wantStatus(t, do(t, s, http.MethodDelete, loc, "", ""), http.StatusNoContent)
	}
}

// The library page imports a cell file and shows the report row by row; a
// file with a bad row leaves the library as it was.
func TestLibraryPageImport(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	good := "id,rated_v,capacitance_f,esr_ohm\nlab-a,2.7,10,0.03\nlab-b,2.7,25,0.02\n"
	rec := postMultipart(t, s, "/library/import", nil, "cells_file", "cells.csv", good+"lab-c,2.7,,0.02\n")
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	doc := parse(t, rec)
	if rows := doc.Find("[data-testid=import-row]").Length(); rows != 3 {
		t.Errorf("the report has %d rows, want 3", rows)
	}
	if got := text(doc, "[data-testid=import-report]"); !strings.Contains(got, "Nothing was imported") || !strings.Contains(got, "capacitance_f") {
		t.Errorf("report %q", got)
	}
	if doc.Find(`[data-testid=library-row][data-id=lab-a]`).Length() != 0 {
		t.Error("a rejected import added a cell")
	}
	rec = postMultipart(t, s, "/library/import", nil, "cells_file", "cells.csv", good)
	wantStatus(t, rec, http.StatusOK)
	doc = parse(t, rec)
	if got := text(doc, "[data-testid=import-report]"); !strings.Contains(got, "Imported 2 cells") {
		t.Errorf("report %q", got)
	}
	if doc.Find(`[data-testid=library-row][data-id=lab-b]`).Length() != 1 {
		t.Error("the imported cell is not listed")
	}
	// The export gives the same cells back, with units in the column names.
	rec = get(t, s, "/library.csv?q=lab-")
	wantStatus(t, rec, http.StatusOK)
	lines := strings.Split(strings.TrimSpace(rec.Body.String()), "\n")
	if len(lines) != 3 || !strings.Contains(lines[0], "capacitance_f") || !strings.HasPrefix(lines[1], "lab-a,") {
		t.Errorf("export:\n%s", rec.Body)
	}
	rec = postMultipart(t, s, "/library/import", nil, "cells_file", "", "")
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if got := text(parse(t, rec), "[data-testid=import-report]"); !strings.Contains(got, "no file was chosen") {
		t.Errorf("no file: %q", got)
	}
}

// A quantity row of the comparison writes every bank in one unit, so the
// figures read side by side: the ESRs of the 650 F, 500 F and 1200 F demo
// cells (1.7, 2.2 and 0.75 mΩ, as the demo library gives them) are all in
// mΩ, where each on its own would take its own prefix (750 µΩ).
func TestCompareRowsShareAUnit(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	doc := parse(t, get(t, s, "/compare?cell=demo-2v7-650f&cell=demo-3v0-500f&cell=demo-2v7-1200f"))
	var esr []string
	doc.Find("[data-testid=compare-row]").Each(func(_ int, row *goquery.Selection) {
		if strings.HasPrefix(strings.TrimSpace(row.Find("th").First().Text()), "ESR (DC)") {
			row.Find("td").Each(func(_ int, td *goquery.Selection) {
				esr = append(esr, strings.TrimSpace(td.Contents().Not(".sr-only").Text()))
			})
		}
	})
	want := []string{"1.7\u00a0mΩ", "2.2\u00a0mΩ", "0.75\u00a0mΩ"}
	if !slices.Equal(esr, want) {
		t.Errorf("ESR row %q, want %q", esr, want)
	}
}

// The library's own CSV export imports back when the page's choice (or the
// API's ?mode=upsert) says to update the user cells of the same id; a row
// changing a demo cell is refused by id, and an unknown mode is a problem
// naming mode.
func TestLibraryImportUpsert(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	wantStatus(t, postMultipart(t, s, "/library/import", nil, "cells_file", "cells.csv",
		"id,name,rated_v,capacitance_f,esr_ohm\nlab-a,bench A,2.7,10,0.03\n"), http.StatusOK)
	rec := get(t, s, "/library.csv")
	wantStatus(t, rec, http.StatusOK)
	all := rec.Body.String()
	if !strings.Contains(all, "\nlab-a,bench A,") || !strings.Contains(all, ",demo,") {
		t.Fatalf("the export lacks the user cell or the demo cells:\n%.400s", all)
	}

	// As before, the export alone is refused: every id is in the library.
	rec = postMultipart(t, s, "/library/import", nil, "cells_file", "library.csv", all)
	wantStatus(t, rec, http.StatusUnprocessableEntity)

	// The user cell's ESR changed from 30 mΩ to 25 mΩ, imported to update.
	edited := strings.Replace(all, "\nlab-a,bench A,,2.7,,10,,,0.03,", "\nlab-a,bench A,,2.7,,10,,,0.025,", 1)
	if edited == all {
		t.Fatalf("the export's lab-a row is not as expected:\n%.400s", all)
	}
	rec = postMultipart(t, s, "/library/import", url.Values{"mode": {"upsert"}}, "cells_file", "library.csv", edited)
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	if got := text(doc, "[data-testid=import-report]"); !strings.Contains(got, "0 cells added, 1 updated") {
		t.Errorf("upsert report %q, want 0 added and 1 updated", got)
	}
	var cell struct {
		Cell struct {
			ESROhm float64 `json:"esr_ohm"`
		} `json:"cell"`
	}
	decodeJSON(t, get(t, s, "/api/v1/cells/lab-a"), &cell)
	if cell.Cell.ESROhm != 0.025 {
		t.Errorf("lab-a's ESR after the upsert: %g Ω, want 0.025 Ω", cell.Cell.ESROhm)
	}

	// A demo cell's row changed: refused by id, over the API.
	demo := store.DemoCells()[0]
	i := strings.Index(all, "\n"+demo.ID+",")
	j := strings.Index(all[i+1:], "\n")
	row := strings.Split(all[i+1:i+1+j], ",")
	row[2] = "measured" // the source column
	changed := all[:i+1] + strings.Join(row, ",") + all[i+1+j:]
	rec = do(t, s, http.MethodPost, "/api/v1/cells/import?mode=upsert", "text/csv", changed)
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	var rep store.ImportReport
	decodeJSON(t, rec, &rep)
	if rep.Imported || rep.Rejected != 1 {
		t.Errorf("a changed demo row: imported %v, %d rejected; want refused, 1 rejected", rep.Imported, rep.Rejected)
	}
	for _, r := range rep.Rows {
		if r.ID == demo.ID && !strings.Contains(r.Reason, "is a built-in demo cell, which is read-only") {
			t.Errorf("the demo row's reason %q does not say demo cells are read-only", r.Reason)
		}
	}
	wantProblem(t, do(t, s, http.MethodPost, "/api/v1/cells/import?mode=merge", "text/csv", all), http.StatusUnprocessableEntity, "mode")
}
