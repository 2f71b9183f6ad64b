package web

import (
	"bytes"
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"os"
	"reflect"
	"regexp"
	"strings"
	"testing"

	"github.com/labstack/echo/v4"

	"capbank/sizing"
)

func postJSON(t testing.TB, s http.Handler, body []byte, ctype string) *httptest.ResponseRecorder {
	t.Helper()
	req := httptest.NewRequest(http.MethodPost, "/api/v1/size", bytes.NewReader(body))
	if ctype != "" {
		req.Header.Set("Content-Type", ctype)
	}
	return serve(s, req)
}

// The API returns the same report as the command line for a demo design.
func TestAPISizeReturnsTheReport(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	for _, name := range []string{"ups-ride-through.json", "actuator-pulses.json", "logger-hold-up.json"} {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			data, err := os.ReadFile("../testdata/" + name)
			if err != nil {
				t.Fatal(err)
			}
			rec := postJSON(t, s, data, "application/json")
			wantStatus(t, rec, http.StatusOK)
			if ct := rec.Header().Get("Content-Type"); !strings.HasPrefix(ct, "application/json") {
				t.Errorf("Content-Type %q", ct)
			}
			d, err := sizing.DecodeDesign(bytes.NewReader(data))
			if err != nil {
				t.Fatal(err)
			}
			rep, err := sizing.Size(d)
			if err != nil {
				t.Fatal(err)
			}
			var want bytes.Buffer
			if err := jsonEncode(&want, rep, false); err != nil {
				t.Fatal(err)
			}
			if rec.Body.String() != want.String() {
				t.Errorf("the API report differs from sizing.Size's")
			}
		})
	}
}

func TestAPIProblems(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	valid, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	invalid := strings.Replace(string(valid), `"min_v": 21.0`, `"min_v": 50`, 1)
	invalid = strings.Replace(invalid, `"duration_s": 11`, `"duration_s": -1`, 1)
	cases := []struct {
		name, body, ctype string
		status            int
		typ               string
		fields            []string // the errors' field paths, in order
	}{
		{"not JSON", "{", "application/json", 400, typeMalformed, []string{"design"}},
		{"empty", "", "application/json", 400, typeMalformed, []string{"design"}},
		{"unknown key", `{"window":{"max_v":1,"min_v":0.5},"colour":"red"}`, "application/json", 400, typeMalformed, []string{"colour"}},
		{"wrong type", `{"window":{"max_v":"high"}}`, "", 400, typeMalformed, []string{"window.max_v"}},
		{"invalid", invalid, "application/json; charset=utf-8", 422, typeInvalid, []string{"load.steps[0].duration_s", "window.min_v"}},
		{"no cells", `{"window":{"max_v":48,"min_v":24},"load":{"steps":[{"rest":true,"duration_s":1}]},"cells":[]}`, "application/json", 422, typeInvalid, []string{"cells"}},
		{"form body", "window.max_v=48", "application/x-www-form-urlencoded", 415, typeMediaType, nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			rec := postJSON(t, s, []byte(c.body), c.ctype)
			wantStatus(t, rec, c.status)
			p := readProblem(t, rec)
			if p.Type != c.typ || p.Status != c.status || p.Title == "" || p.Detail == "" {
				t.Errorf("problem %+v", p)
			}
			var fields []string
			for _, e := range p.Errors {
				fields = append(fields, e.Field)
				if e.Message == "" || e.Rule == "" {
					t.Errorf("error without message or rule: %+v", e)
				}
			}
			if !reflect.DeepEqual(fields, c.fields) {
				t.Errorf("error fields %q, want %q", fields, c.fields)
			}
		})
	}
}

func readProblem(t testing.TB, rec *httptest.ResponseRecorder) problem {
	t.Helper()
	if ct := rec.Header().Get("Content-Type"); !strings.HasPrefix(ct, "application/problem+json") {
		t.Fatalf("Content-Type %q, want application/problem+json; body %s", ct, rec.Body)
	}
	var p problem
	dec := json.NewDecoder(rec.Body)
	dec.DisallowUnknownFields()
	if err := dec.Decode(&p); err != nil {
		t.Fatalf("problem document: %v", err)
	}
	return p
}

func TestAPITooLarge(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	body := append([]byte(`{"name":"`), bytes.Repeat([]byte("x"), MaxBodyBytes)...)
	rec := postJSON(t, s, append(body, `"}`...), "application/json")
	wantStatus(t, rec, http.StatusRequestEntityTooLarge)
	if p := readProblem(t, rec); p.Type != typeTooLarge || !strings.Contains(p.Detail, "16 MiB") {
		t.Errorf("problem %+v", p)
	}

	// Without a length up front the limit holds while reading.
	req := httptest.NewRequest(http.MethodPost, "/api/v1/size", struct{ *bytes.Reader }{bytes.NewReader(body)})
	req.ContentLength = -1
	req.Header.Set("Content-Type", "application/json")
	rec = serve(s, req)
	wantStatus(t, rec, http.StatusRequestEntityTooLarge)
}

func TestHTTPErrorsAreProblems(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	rec := serve(s, httptest.NewRequest(http.MethodGet, "/api/v1/size", nil))
	wantStatus(t, rec, http.StatusMethodNotAllowed)
	if p := readProblem(t, rec); p.Status != 405 {
		t.Errorf("problem %+v", p)
	}
	rec = serve(s, httptest.NewRequest(http.MethodGet, "/api/v1/nothing", nil))
	wantStatus(t, rec, http.StatusNotFound)
	readProblem(t, rec)

	// A browser gets a page for the same error.
	rec = get(t, s, "/nothing-here")
	wantStatus(t, rec, http.StatusNotFound)
	if doc := parse(t, rec); text(doc, "[data-testid=error-page] h1") != "Not Found" {
		t.Errorf("error page %q", text(doc, "[data-testid=error-page]"))
	}
}

// A panic becomes a 500 problem that says nothing of what happened; the
// log has it.
func TestPanicIsAnInternalError(t *testing.T) {
	t.Parallel()
	s, logs := newTestServer(t)
	s.echo.GET("/api/v1/boom", func(echo.Context) error { panic("secret detail of the crash") })
	rec := serve(s, httptest.NewRequest(http.MethodGet, "/api/v1/boom", nil))
	wantStatus(t, rec, http.StatusInternalServerError)
	p := readProblem(t, rec)
	if p.Status != 500 || strings.Contains(rec.Body.String(), "secret") {
		t.Errorf("problem %+v leaks or is wrong", p)
	}
	if !strings.Contains(logs.String(), "secret detail of the crash") {
		t.Errorf("the log does not have the panic:\n%s", logs)
	}
}

func TestOpenAPIDocument(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	rec := get(t, s, "/api/v1/openapi.json")
	wantStatus(t, rec, http.StatusOK)
	var doc struct {
		OpenAPI string                           `json:"openapi"`
		Paths   map[string]map[string]any        `json:"paths"`
		Comps   struct{ Schemas map[string]any } `json:"components"`
	}
	if err := json.Unmarshal(rec.Body.Bytes(), &doc); err != nil {
		t.Fatalf("not JSON: %v", err)
	}
	if !strings.HasPrefix(doc.OpenAPI, "3.1") {
		t.Errorf("openapi %q, want 3.1.x", doc.OpenAPI)
	}
	if _, ok := doc.Paths["/api/v1/size"]["post"]; !ok {
		t.Error("no POST /api/v1/size")
	}
	if _, ok := doc.Paths["/healthz"]["get"]; !ok {
		t.Error("no GET /healthz")
	}
	// Every API route the server answers is described, with its method.
	for _, r := range s.echo.Routes() {
		if !strings.HasPrefix(r.Path, "/api/") {
			continue
		}
		path := regexpParam.ReplaceAllString(r.Path, "{$1}")
		if _, ok := doc.Paths[path][strings.ToLower(r.Method)]; !ok {
			t.Errorf("%s %s is not in the OpenAPI document", r.Method, path)
		}
	}
	for _, name := range []string{"Design", "Report", "Problem", "FieldError"} {
		if doc.Comps.Schemas[name] == nil {
			t.Errorf("no schema %s", name)
		}
	}
	// Every $ref names a schema that exists.
	for _, m := range regexpRefs.FindAllStringSubmatch(rec.Body.String(), -1) {
		if doc.Comps.Schemas[m[1]] == nil {
			t.Errorf("$ref to missing schema %s", m[1])
		}
	}
	// The Design and Cell schemas list every key of the design file.
	for name, typ := range map[string]reflect.Type{"Design": reflect.TypeOf(sizing.Design{}), "Cell": reflect.TypeOf(sizing.Cell{})} {
		props := doc.Comps.Schemas[name].(map[string]any)["properties"].(map[string]any)
		for i := range typ.NumField() {
			if !typ.Field(i).IsExported() {
				continue
			}
			key, _, _ := strings.Cut(typ.Field(i).Tag.Get("json"), ",")
			if props[key] == nil {
				t.Errorf("%s schema lacks %q", name, key)
			}
		}
	}
	// Every problem type the server sends is described.
	for _, typ := range []string{typeMalformed, typeInvalid, typeUnsizable, typeTooLarge, typeMediaType, typeBadForm, typeNoExport, typeBadLink,
		typeNotFound, typeConflict, typeBadCell, typeBadQuery, typeNoStore} {
		if !strings.Contains(rec.Body.String(), typ) {
			t.Errorf("problem type %s not described", typ)
		}
	}
}

var regexpParam = regexp.MustCompile(`:([a-z_]+)`)

var regexpRefs = regexp.MustCompile(`"\$ref": "#/components/schemas/([A-Za-z]+)"`)

// A design may name a built-in demo cell by id instead of giving it.
func TestAPIDemoCellByID(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	body := `{"window":{"max_v":48,"min_v":24},"load":{"steps":[{"power_w":1500,"duration_s":10}]},"cells":["demo-2v7-650f"]}`
	rec := postJSON(t, s, []byte(body), "application/json")
	wantStatus(t, rec, http.StatusOK)
	var rep sizing.Report
	if err := json.Unmarshal(rec.Body.Bytes(), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Recommended == nil || *rep.Recommended != "demo-2v7-650f" || rep.Candidates[0].CellName == "" {
		t.Errorf("report %+v", rep.Candidates)
	}

	rec = postJSON(t, s, []byte(strings.Replace(body, "demo-2v7-650f", "no-such-cell", 1)), "application/json")
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if p := readProblem(t, rec); len(p.Errors) != 1 || p.Errors[0].Field != "cells[0]" {
		t.Errorf("problem %+v", p)
	}
}
