package web

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"mime/multipart"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"
)

// writersFor is how long TestConcurrentWriters keeps its writers going: long
// enough for many writes to overlap. The test asserts what was answered and
// kept, never how long anything took.
const writersFor = 3 * time.Second

// writerLog is what the server acknowledged, kept by one writer.
type writerLog struct {
	// cells: id → the capacitance (F) of its last acknowledged write, or
	// -1 once its deletion was acknowledged.
	cells map[string]float64
	// contested: ids that several writers try to take; each may be
	// acknowledged to one of them only.
	contested map[string]float64
	// designs: id → name of every acknowledged design save.
	designs map[int64]string
	// failures are answers other than the one the write should get.
	failures []string
	// serverErrors are the 5xx answers among them.
	serverErrors int
	writes       int
}

// writerClient drives a running server as one user would, without
// following redirects (a page post's 303 is its acknowledgement).
type writerClient struct {
	base string
	hc   *http.Client
	log  *writerLog
}

// send makes one request and checks its status: want is the answer of an
// acknowledged write, refused lists answers that refuse it correctly (an id
// someone else took first). It returns the body, and whether the write was
// acknowledged.
func (w *writerClient) send(method, path, ctype string, body []byte, want int, refused ...int) ([]byte, bool) {
	req, err := http.NewRequest(method, w.base+path, bytes.NewReader(body))
	if err != nil {
		w.log.failures = append(w.log.failures, err.Error())
		return nil, false
	}
	if ctype != "" {
		req.Header.Set("Content-Type", ctype)
	}
	if !strings.HasPrefix(path, "/api/") {
		req.Header.Set("Accept", "text/html")
	} else if method == http.MethodPut || method == http.MethodDelete {
		req.Header.Set("If-Match", "*") // each writer owns its records
	}
	res, err := w.hc.Do(req)
	if err != nil {
		w.log.failures = append(w.log.failures, fmt.Sprintf("%s %s: %v", method, path, err))
		return nil, false
	}
	defer res.Body.Close()
	got, _ := io.ReadAll(res.Body)
	w.log.writes++
	if slices.Contains(refused, res.StatusCode) {
		return got, false
	}
	if res.StatusCode != want {
		if res.StatusCode >= 500 {
			w.log.serverErrors++
		}
		msg := string(got)
		if len(msg) > 300 {
			msg = msg[:300] + "…"
		}
		w.log.failures = append(w.log.failures, fmt.Sprintf("%s %s: %d, want %d: %s", method, path, res.StatusCode, want, msg))
		return got, false
	}
	return got, true
}

func writerCellJSON(id string, capF float64) []byte {
	return fmt.Appendf(nil, `{"id":%q,"name":"Writer test cell (invented)","rated_v":2.7,"capacitance_f":%g,"esr_ohm":0.012}`, id, capF)
}

func writerCellForm(id string, capF float64) []byte {
	return []byte(url.Values{"id": {id}, "name": {"Writer test cell (invented)"}, "rated_v": {"2.7"},
		"capacitance_f": {strconv.FormatFloat(capF, 'g', -1, 64)}, "esr_ohm": {"12m"}}.Encode())
}

// TestConcurrentWriters: twelve clients write the library and the saved
// designs of one database file at once, through every write path a team
// uses (the cells API's create, update, delete and import; the library
// page's add, edit, delete and import forms; the designs API), some of
// them racing for the same new ids. No answer is a 5xx; every write is
// acknowledged but those that lose a race for an id, which are refused as
// taken (409, or 422 for an import). Afterwards every acknowledged write is
// there: each cell with the values of its last acknowledged write, each
// deleted cell gone, each saved design present, and each raced-for id held
// by the one writer it was acknowledged to.
func TestConcurrentWriters(t *testing.T) {
	if testing.Short() {
		t.Skip("drives the server for a few seconds")
	}
	s, logs := newTestServer(t)
	ts := httptest.NewServer(s)
	defer ts.Close()
	designFile, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}

	roles := []struct {
		name string
		step func(w *writerClient, prefix string, n int)
	}{
		{"cells API create, update, delete", func(w *writerClient, prefix string, n int) {
			id := fmt.Sprintf("%s-%d", prefix, n)
			if _, ok := w.send(http.MethodPost, "/api/v1/cells", "application/json", writerCellJSON(id, 100), http.StatusCreated); !ok {
				return
			}
			w.log.cells[id] = 100
			if _, ok := w.send(http.MethodPut, "/api/v1/cells/"+id, "application/json", writerCellJSON(id, 150+float64(n)), http.StatusOK); ok {
				w.log.cells[id] = 150 + float64(n)
			}
			if n%3 == 0 {
				if _, ok := w.send(http.MethodDelete, "/api/v1/cells/"+id, "", nil, http.StatusNoContent); ok {
					w.log.cells[id] = -1
				}
			}
		}},
		{"library page add, edit, delete", func(w *writerClient, prefix string, n int) {
			id := fmt.Sprintf("%s-%d", prefix, n)
			form := "application/x-www-form-urlencoded"
			if _, ok := w.send(http.MethodPost, "/library", form, writerCellForm(id, 200), http.StatusSeeOther); !ok {
				return
			}
			w.log.cells[id] = 200
			if _, ok := w.send(http.MethodPost, "/library/"+id, form, writerCellForm(id, 250+float64(n)), http.StatusSeeOther); ok {
				w.log.cells[id] = 250 + float64(n)
			}
			if n%3 == 1 {
				if _, ok := w.send(http.MethodPost, "/library/"+id+"/delete", form, nil, http.StatusSeeOther); ok {
					w.log.cells[id] = -1
				}
			}
		}},
		{"designs API save", func(w *writerClient, prefix string, n int) {
			name := fmt.Sprintf("%s-%d", prefix, n)
			body := fmt.Appendf(nil, `{"name":%q,"design":%s}`, name, designFile)
			got, ok := w.send(http.MethodPost, "/api/v1/designs", "application/json", body, http.StatusCreated)
			if !ok {
				return
			}
			var rec struct {
				ID int64 `json:"id"`
			}
			if err := json.Unmarshal(got, &rec); err != nil || rec.ID == 0 {
				w.log.failures = append(w.log.failures, fmt.Sprintf("design save answer without an id: %s", got))
				return
			}
			w.log.designs[rec.ID] = name
		}},
		{"cells API import", func(w *writerClient, prefix string, n int) {
			a, b := fmt.Sprintf("%s-%d-a", prefix, n), fmt.Sprintf("%s-%d-b", prefix, n)
			if n%2 == 0 {
				body := "id,rated_v,capacitance_f,esr_ohm\n" + a + ",2.7,300,0.01\n" + b + ",2.7,301,0.01\n"
				if _, ok := w.send(http.MethodPost, "/api/v1/cells/import", "text/csv", []byte(body), http.StatusOK); ok {
					w.log.cells[a], w.log.cells[b] = 300, 301
				}
				return
			}
			body := "[" + string(writerCellJSON(a, 300)) + "," + string(writerCellJSON(b, 301)) + "]"
			if _, ok := w.send(http.MethodPost, "/api/v1/cells/import", "application/json", []byte(body), http.StatusOK); ok {
				w.log.cells[a], w.log.cells[b] = 300, 301
			}
		}},
		{"library page import", func(w *writerClient, prefix string, n int) {
			a := fmt.Sprintf("%s-%d", prefix, n)
			var body bytes.Buffer
			mw := multipart.NewWriter(&body)
			fw, _ := mw.CreateFormFile("cells_file", "cells.csv")
			io.WriteString(fw, "id,rated_v,capacitance_f,esr_ohm\n"+a+",2.7,400,0.01\n")
			mw.Close()
			if _, ok := w.send(http.MethodPost, "/library/import", mw.FormDataContentType(), body.Bytes(), http.StatusOK); ok {
				w.log.cells[a] = 400
			}
		}},
		{"cells API create, racing imports for ids", func(w *writerClient, _ string, n int) {
			id := fmt.Sprintf("contested-%d", n)
			if _, ok := w.send(http.MethodPost, "/api/v1/cells", "application/json", writerCellJSON(id, 500), http.StatusCreated, http.StatusConflict); ok {
				w.log.contested[id] = 500
			}
		}},
		{"cells API import, racing creates for ids", func(w *writerClient, _ string, n int) {
			id := fmt.Sprintf("contested-%d", n)
			body := "id,rated_v,capacitance_f,esr_ohm\n" + id + ",2.7,600,0.01\n"
			if _, ok := w.send(http.MethodPost, "/api/v1/cells/import", "text/csv", []byte(body), http.StatusOK, http.StatusUnprocessableEntity); ok {
				w.log.contested[id] = 600
			}
		}},
	}

	const writers = 12
	hc := &http.Client{
		Transport:     &http.Transport{MaxIdleConnsPerHost: writers},
		CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse },
	}
	defer hc.CloseIdleConnections()
	wlogs := make([]*writerLog, writers)
	stop := time.Now().Add(writersFor)
	var wg sync.WaitGroup
	for i := range writers {
		wlogs[i] = &writerLog{cells: map[string]float64{}, contested: map[string]float64{}, designs: map[int64]string{}}
		role := roles[i%len(roles)]
		w := &writerClient{base: ts.URL, hc: hc, log: wlogs[i]}
		wg.Go(func() {
			for n := 0; time.Now().Before(stop); n++ {
				role.step(w, fmt.Sprintf("writer%d", i), n)
			}
		})
	}
	wg.Wait()

	writes, serverErrors := 0, 0
	for i, l := range wlogs {
		writes += l.writes
		serverErrors += l.serverErrors
		for j, f := range l.failures {
			if j == 5 {
				t.Errorf("writer %d (%s): %d more", i, roles[i%len(roles)].name, len(l.failures)-j)
				break
			}
			t.Errorf("writer %d (%s): %s", i, roles[i%len(roles)].name, f)
		}
	}
	t.Logf("%d writes by %d writers, %d answered 5xx", writes, writers, serverErrors)
	if serverErrors > 0 {
		t.Errorf("%d of %d writes answered 5xx; server log:\n%.2000s", serverErrors, writes, logs.String())
	}

	checked := 0
	contested := map[string]float64{}
	for _, l := range wlogs {
		for id, capF := range l.contested {
			if other, twice := contested[id]; twice {
				t.Errorf("cell %s: acknowledged to two writers (%g F and %g F); one of them was lost", id, other, capF)
			}
			contested[id] = capF
			l.cells[id] = capF
		}
		for id, capF := range l.cells {
			rec := do(t, s, http.MethodGet, "/api/v1/cells/"+id, "", "")
			if capF < 0 {
				if rec.Code != http.StatusNotFound {
					t.Errorf("cell %s: deletion was acknowledged, but GET answers %d", id, rec.Code)
				}
				continue
			}
			if rec.Code != http.StatusOK {
				t.Errorf("cell %s: acknowledged with %g F, but GET answers %d", id, capF, rec.Code)
				continue
			}
			var got struct {
				Cell struct {
					CapacitanceF float64 `json:"capacitance_f"`
				} `json:"cell"`
			}
			decodeJSON(t, rec, &got)
			if got.Cell.CapacitanceF != capF {
				t.Errorf("cell %s: %g F, want %g F, its last acknowledged write", id, got.Cell.CapacitanceF, capF)
			}
			checked++
		}
		for id, name := range l.designs {
			rec := do(t, s, http.MethodGet, "/api/v1/designs/"+strconv.FormatInt(id, 10), "", "")
			var got struct {
				Name string `json:"name"`
			}
			if rec.Code != http.StatusOK {
				t.Errorf("design %d (%s): save was acknowledged, but GET answers %d", id, name, rec.Code)
				continue
			}
			decodeJSON(t, rec, &got)
			if got.Name != name {
				t.Errorf("design %d: named %q, want %q", id, got.Name, name)
			}
			checked++
		}
	}
	if checked == 0 {
		t.Fatal("no write was acknowledged")
	}
	if err := s.store.(interface{ IntegrityCheck(context.Context) error }).IntegrityCheck(t.Context()); err != nil {
		t.Error(err)
	}
}
