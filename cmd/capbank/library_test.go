package main

import (
	"context"
	"encoding/json"
	"io"
	"net/http"
	"strings"
	"testing"

	"capbank/sizing"
)

// An invented cell for the test (no product).
const benchCell = `{"id":"bench-2v7-80f","name":"Bench sample (invented)","rated_v":2.7,"capacitance_f":80,"esr_ohm":0.011,"mass_kg":0.018,"unit_price":2.2}`

func send(t *testing.T, method, url, ctype, body string) (int, string) {
	t.Helper()
	req, err := http.NewRequest(method, url, strings.NewReader(body))
	if err != nil {
		t.Fatal(err)
	}
	if ctype != "" {
		req.Header.Set("Content-Type", ctype)
	}
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, string(b)
}

// A fresh capbank creates its database with the demo cells; a cell and a
// design written to it are there after a restart on the same data
// directory, and capbank size resolves the new cell by its id there.
func TestLibrarySurvivesARestart(t *testing.T) {
	t.Parallel()
	data := t.TempDir()
	url, stop, _ := startServe(t, "serve", "--addr", "127.0.0.1:0", "--data", data)
	status, body := getBody(t, url+"api/v1/cells")
	var list struct {
		Count int `json:"count"`
	}
	if err := json.Unmarshal([]byte(body), &list); status != http.StatusOK || err != nil || list.Count < 15 {
		t.Fatalf("a fresh start lists %d cells (status %d, %v), want the demo cells", list.Count, status, err)
	}
	demoCount := list.Count
	if status, body := send(t, http.MethodPost, url+"api/v1/cells", "application/json", benchCell); status != http.StatusCreated {
		t.Fatalf("adding a cell: %d %s", status, body)
	}
	design := `{"name":"Restart check","window":{"max_v":16,"min_v":8},"load":{"steps":[{"power_w":100,"duration_s":5}]},"cells":["bench-2v7-80f"]}`
	if status, body := send(t, http.MethodPost, url+"api/v1/designs", "application/json", `{"name":"Restart check","design":`+design+`}`); status != http.StatusCreated {
		t.Fatalf("saving a design: %d %s", status, body)
	}
	if err := stop(); err != nil {
		t.Fatal(err)
	}

	url, stop, _ = startServe(t, "serve", "--addr", "127.0.0.1:0", "--data", data)
	defer stop()
	if status, body := getBody(t, url+"api/v1/cells/bench-2v7-80f"); status != http.StatusOK || !strings.Contains(body, `"capacitance_f":80`) {
		t.Errorf("after a restart the cell reads %d %s", status, body)
	}
	_, body = getBody(t, url+"api/v1/cells")
	json.Unmarshal([]byte(body), &list)
	if list.Count != demoCount+1 {
		t.Errorf("after a restart %d cells, want %d (the demo cells are not seeded twice)", list.Count, demoCount+1)
	}
	if status, body := getBody(t, url+"designs"); status != http.StatusOK || !strings.Contains(body, "Restart check") {
		t.Errorf("after a restart the saved designs page reads %d and lacks the design", status)
	}

	// capbank size resolves the id in the same library, and says clearly
	// when --data has no database.
	path := writeFile(t, "design.json", design)
	code, stdout, stderr := runCapbank(t, context.Background(), "size", "--data", data, path)
	if code != 0 {
		t.Fatalf("size --data: status %d, %s", code, stderr)
	}
	var rep sizing.Report
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil || len(rep.Candidates) != 1 || rep.Candidates[0].CellName != "Bench sample (invented)" {
		t.Errorf("size --data sized %+v (%v)", rep.Candidates, err)
	}
	code, _, stderr = runCapbank(t, context.Background(), "size", "--data", t.TempDir(), path)
	if code != 1 || !strings.Contains(stderr, "there is no capbank database") {
		t.Errorf("size --data on an empty directory: status %d, %s", code, stderr)
	}
}

// Without a database, capbank size resolves the built-in demo cells, and an
// unknown id is a field error with exit status 2.
func TestSizeNamesDemoCellsByID(t *testing.T) {
	design := `{"window":{"max_v":48,"min_v":24},"load":{"steps":[{"power_w":1500,"duration_s":10}]},"cells":["demo-2v7-650f"]}`
	t.Chdir(t.TempDir()) // no capbank-data here
	path := writeFile(t, "design.json", design)
	code, stdout, stderr := runCapbank(t, context.Background(), "size", path)
	if code != 0 || !strings.Contains(stdout, `"cell_id": "demo-2v7-650f"`) {
		t.Fatalf("status %d, stderr %s", code, stderr)
	}
	path = writeFile(t, "design.json", strings.Replace(design, "demo-2v7-650f", "no-such-cell", 1))
	code, _, stderr = runCapbank(t, context.Background(), "size", path)
	if code != 2 || !strings.Contains(stderr, "cells[0]") {
		t.Errorf("unknown id: status %d, stderr %s", code, stderr)
	}
}
