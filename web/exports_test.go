package web

import (
	"bytes"
	"capbank/web/store"
	"context"
	"encoding/csv"
	"encoding/json"
	"mime"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/PuerkitoBio/goquery"
	"github.com/xuri/excelize/v2"

	"capbank/components/export"
	"capbank/sizing"
	"capbank/web/share"
)

// pageToken is the design token the page's download form carries.
func pageToken(t testing.TB, rec *httptest.ResponseRecorder) string {
	t.Helper()
	tok, ok := parse(t, rec).Find(`#export-form input[name=d]`).Attr("value")
	if !ok || tok == "" {
		t.Fatal("the page has no export form with the design")
	}
	return tok
}

// postExport posts the page's export form as a browser does.
func postExport(t testing.TB, s http.Handler, target, token, cell string) *httptest.ResponseRecorder {
	t.Helper()
	v := url.Values{"d": {token}}
	if cell != "" {
		v.Set("cell", cell)
	}
	return postForm(t, s, target, v, false)
}

// exampleReport is the example design as the engine sizes it.
func exampleReport(t testing.TB) (*sizing.Design, *sizing.Report) {
	t.Helper()
	ev := evaluate(context.Background(), exampleForm(), store.DemoCell)
	if ev.report == nil || ev.report.Recommended == nil {
		t.Fatalf("the example does not size: %v", ev.problems)
	}
	return ev.sized, ev.report
}

func filename(t testing.TB, rec *httptest.ResponseRecorder) string {
	t.Helper()
	_, params, err := mime.ParseMediaType(rec.Header().Get("Content-Disposition"))
	if err != nil || !strings.HasPrefix(rec.Header().Get("Content-Disposition"), "attachment") {
		t.Fatalf("Content-Disposition %q: %v", rec.Header().Get("Content-Disposition"), err)
	}
	return params["filename"]
}

// Every download button of the page's recommended bank gives its file:
// the right type and name, and a file that reads back as that type with
// the engine's figures in it.
func TestExportFormats(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	s.now = func() time.Time { return time.Date(2026, 3, 14, 9, 0, 0, 0, time.UTC) }
	page := get(t, s, "/")
	wantStatus(t, page, http.StatusOK)
	token := pageToken(t, page)
	d, rep := exampleReport(t)
	rec0 := rep.Candidates[0] // the recommended bank: candidates are in rank order
	boq, err := sizing.BillOfQuantities(d, rep, "")
	if err != nil {
		t.Fatal(err)
	}
	mediaBox := regexp.MustCompile(`/MediaBox \[0 0 ([0-9.]+) ([0-9.]+)\]`)

	cases := []struct {
		name, target, ctype, file string
		check                     func(t *testing.T, body []byte)
	}{
		{"boq-csv", "/export/boq-csv", "text/csv; charset=utf-8", "example-48-v-controller-hold-up-invented-boq.csv", func(t *testing.T, body []byte) {
			// The UTF-8 byte-order mark, then the CSV (Unicode 15 §23.8).
			rest, ok := bytes.CutPrefix(body, []byte{0xEF, 0xBB, 0xBF})
			if !ok {
				t.Fatalf("the CSV does not start with the UTF-8 byte-order mark: %.12q", body)
			}
			rows, err := csv.NewReader(bytes.NewReader(rest)).ReadAll()
			if err != nil {
				t.Fatalf("the CSV does not parse: %v", err)
			}
			if got := strings.Join(rows[0], ","); got != "item,description,quantity,unit,unit_price,extended_price,currency" {
				t.Errorf("header %q", got)
			}
			// The cell line's quantity is the engine's cell count.
			if rows[1][0] != "cell" || rows[1][2] != strconv.Itoa(rec0.Cells) {
				t.Errorf("cell line %q, want %d cells", rows[1], rec0.Cells)
			}
			last := rows[len(rows)-2]
			if last[0] != "total" || last[5] != strconv.FormatFloat(boq.Total, 'f', -1, 64) {
				t.Errorf("total line %q, want the engine's %v", last, boq.Total)
			}
		}},
		{"boq-xlsx", "/export/boq-xlsx", "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet", "example-48-v-controller-hold-up-invented-boq.xlsx", func(t *testing.T, body []byte) {
			f, err := excelize.OpenReader(bytes.NewReader(body))
			if err != nil {
				t.Fatalf("excelize cannot open it: %v", err)
			}
			defer f.Close()
			if got := strings.Join(f.GetSheetList(), ","); got != "BOQ,Inputs,Results" {
				t.Errorf("sheets %q", got)
			}
			q, err := f.GetCellValue("BOQ", "C"+strconv.Itoa(export.BOQFirstLineRow))
			if err != nil || q != strconv.Itoa(rec0.Cells) {
				t.Errorf("cell quantity %q (%v), want %d", q, err, rec0.Cells)
			}
		}},
		{"boq-json", "/export/boq-json", "application/json", "example-48-v-controller-hold-up-invented-boq.json", func(t *testing.T, body []byte) {
			var got struct {
				CellID   string  `json:"cell_id"`
				Series   int     `json:"series"`
				Parallel int     `json:"parallel"`
				Total    float64 `json:"total"`
			}
			if err := json.Unmarshal(body, &got); err != nil {
				t.Fatalf("not JSON: %v", err)
			}
			if got.CellID != rec0.CellID || got.Series != rec0.Series || got.Parallel != rec0.Parallel || got.Total != boq.Total {
				t.Errorf("BOQ %+v, want %s %d s × %d p total %v", got, rec0.CellID, rec0.Series, rec0.Parallel, boq.Total)
			}
		}},
		{"pdf a4", "/export/pdf?paper=a4", "application/pdf", "example-48-v-controller-hold-up-invented-report-a4.pdf", func(t *testing.T, body []byte) {
			if !bytes.HasPrefix(body, []byte("%PDF-")) {
				t.Fatalf("not a PDF: %q", body[:min(len(body), 20)])
			}
			// A4 is 595.28 pt × 841.89 pt (ISO 216, 210 mm × 297 mm).
			if m := mediaBox.FindSubmatch(body); m == nil || string(m[1]) != "595.28" || string(m[2]) != "841.89" {
				t.Errorf("MediaBox %q, want A4", m)
			}
		}},
		{"pdf letter", "/export/pdf?paper=letter", "application/pdf", "example-48-v-controller-hold-up-invented-report-letter.pdf", func(t *testing.T, body []byte) {
			if !bytes.HasPrefix(body, []byte("%PDF-")) {
				t.Fatal("not a PDF")
			}
			// Letter is 8.5 in × 11 in = 612 pt × 792 pt.
			if m := mediaBox.FindSubmatch(body); m == nil || string(m[1]) != "612.00" || string(m[2]) != "792.00" {
				t.Errorf("MediaBox %q, want Letter", m)
			}
		}},
		{"design", "/export/design", "application/json", "example-48-v-controller-hold-up-invented-design.json", func(t *testing.T, body []byte) {
			got, err := sizing.DecodeDesign(bytes.NewReader(body))
			if err != nil {
				t.Fatalf("capbank size would not read it: %v", err)
			}
			a, _ := json.Marshal(got)
			b, _ := json.Marshal(d)
			if !bytes.Equal(a, b) {
				t.Errorf("design file\n%s\nwant the page's design\n%s", a, b)
			}
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rec := postExport(t, s, c.target, token, rec0.CellID)
			wantStatus(t, rec, http.StatusOK)
			if ct := rec.Header().Get("Content-Type"); ct != c.ctype {
				t.Errorf("Content-Type %q, want %q", ct, c.ctype)
			}
			if got := filename(t, rec); got != c.file {
				t.Errorf("file name %q, want %q", got, c.file)
			}
			c.check(t, rec.Body.Bytes())
		})
	}
}

// Another feasible candidate has its own downloads; its file names say
// which cell.
func TestExportOtherCandidate(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	page := get(t, s, "/")
	token := pageToken(t, page)
	_, rep := exampleReport(t)
	var other *sizing.Candidate
	for i := range rep.Candidates {
		if c := &rep.Candidates[i]; c.Feasible && c.CellID != *rep.Recommended {
			other = c
			break
		}
	}
	if other == nil {
		t.Fatal("the example needs a second feasible candidate")
	}
	// The recommended bank has its figures above, not again among the
	// others (a templ "continue" once printed the word and the bank).
	doc := parse(t, page)
	if doc.Find("#cand-"+*rep.Recommended).Length() != 0 || strings.Contains(text(doc, ".details-list"), "continue") {
		t.Error("the recommended bank is listed among the other candidates")
	}
	// Its card, once opened (it loads then), offers a download bar for it.
	card := postExport(t, s, "/results/candidate?cell="+other.CellID, token, "")
	wantStatus(t, card, http.StatusOK)
	if n := parse(t, card).Find(`details.cand[open] [data-testid=download-bar][data-cell="` + other.CellID + `"] button`).Length(); n != 5 {
		t.Errorf("%d download buttons for %s, want 5", n, other.CellID)
	}
	rec := postExport(t, s, "/export/boq-json", token, other.CellID)
	wantStatus(t, rec, http.StatusOK)
	var got struct {
		CellID   string `json:"cell_id"`
		Series   int    `json:"series"`
		Parallel int    `json:"parallel"`
	}
	if err := json.Unmarshal(rec.Body.Bytes(), &got); err != nil {
		t.Fatal(err)
	}
	if got.CellID != other.CellID || got.Series != other.Series || got.Parallel != other.Parallel {
		t.Errorf("BOQ of %+v, want %s %d × %d", got, other.CellID, other.Series, other.Parallel)
	}
	if name := filename(t, rec); !strings.Contains(name, other.CellID+"-boq") {
		t.Errorf("file name %q does not name %s", name, other.CellID)
	}
	rec = postExport(t, s, "/export/pdf", token, other.CellID)
	wantStatus(t, rec, http.StatusOK)
	if !bytes.HasPrefix(rec.Body.Bytes(), []byte("%PDF-")) {
		t.Error("not a PDF")
	}
}

// A download that cannot be made says why, with the status for it.
func TestExportRefusals(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	token := pageToken(t, get(t, s, "/"))
	_, rep := exampleReport(t)
	infeasible := ""
	for _, c := range rep.Candidates {
		if !c.Feasible {
			infeasible = c.CellID
		}
	}
	none, err := share.Encode([]byte(`{"window":{"max_v":48,"min_v":24},"load":{"steps":[{"power_w":1e6,"duration_s":100}]},"cells":["demo-2v5-1f5"]}`))
	if err != nil {
		t.Fatal(err)
	}
	ups, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name, target, token, cell string
		want                      int
		detail                    string
	}{
		{"unknown format", "/export/docx", token, "", http.StatusNotFound, ""},
		{"damaged token", "/export/boq-csv", token[:len(token)/2] + "!", "", http.StatusBadRequest, "damaged"},
		{"no token", "/export/boq-csv", "", "", http.StatusBadRequest, "carries no design"},
		{"unknown cell", "/export/boq-csv", token, "no-such-cell", http.StatusUnprocessableEntity, "not a candidate"},
		{"bad paper", "/export/pdf?paper=a3", token, "", http.StatusUnprocessableEntity, "a4 or letter"},
		{"boq with nothing feasible", "/export/boq-xlsx", none, "", http.StatusUnprocessableEntity, "no candidate carries the load"},
	}
	if infeasible != "" {
		cases = append(cases, struct {
			name, target, token, cell string
			want                      int
			detail                    string
		}{"infeasible cell", "/export/boq-csv", token, infeasible, http.StatusUnprocessableEntity, "cannot carry the load"})
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			req := httptest.NewRequest(http.MethodPost, c.target, strings.NewReader(url.Values{"d": {c.token}, "cell": {c.cell}}.Encode()))
			req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
			rec := serve(s, req)
			wantStatus(t, rec, c.want)
			p := readProblem(t, rec)
			if !strings.Contains(p.Detail, c.detail) {
				t.Errorf("detail %q, want it to say %q", p.Detail, c.detail)
			}
		})
	}
	// The report is still written when nothing is feasible: it says why.
	rec := postExport(t, s, "/export/pdf", none, "")
	wantStatus(t, rec, http.StatusOK)
	if !bytes.HasPrefix(rec.Body.Bytes(), []byte("%PDF-")) {
		t.Error("not a PDF")
	}

	// The design file itself may be posted; a bad one gets its field paths.
	post := func(target string, body []byte, ctype string) *httptest.ResponseRecorder {
		req := httptest.NewRequest(http.MethodPost, target, bytes.NewReader(body))
		req.Header.Set("Content-Type", ctype)
		return serve(s, req)
	}
	rec = post("/export/boq-csv", ups, "application/json")
	wantStatus(t, rec, http.StatusOK)
	rec = post("/export/boq-csv", bytes.Replace(ups, []byte(`"min_v": 21.0`), []byte(`"min_v": 60`), 1), "application/json")
	wantStatus(t, rec, http.StatusUnprocessableEntity)
	if p := readProblem(t, rec); len(p.Errors) == 0 || p.Errors[0].Field != "window.min_v" {
		t.Errorf("problem %+v, want window.min_v", p)
	}
	wantStatus(t, post("/export/boq-csv", ups, "text/plain"), http.StatusUnsupportedMediaType)

	// A browser gets the reason as a page, not a 500.
	req := httptest.NewRequest(http.MethodPost, "/export/pdf", strings.NewReader("d=xyz"))
	req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	req.Header.Set("Accept", "text/html")
	rec = serve(s, req)
	wantStatus(t, rec, http.StatusBadRequest)
	if got := text(parse(t, rec), "[data-testid=error-page]"); !strings.Contains(got, "could not be read") {
		t.Errorf("error page %q", got)
	}
}

// The design downloaded from the page opens again into the same page:
// the same form values, the same design, the same bank.
func TestDesignFileRoundTrip(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	page := get(t, s, "/")
	wantStatus(t, page, http.StatusOK)
	rec := postExport(t, s, "/export/design", pageToken(t, page), "")
	wantStatus(t, rec, http.StatusOK)
	file := rec.Body.Bytes()

	// Opened into a new, empty design form.
	opened := postMultipart(t, s, "/", url.Values{"action": {"open-design"}, "load.steps[0].kind": {"power"}}, "design_file", "hold-up.json", string(file))
	wantStatus(t, opened, http.StatusOK)
	before, after := parse(t, page), parse(t, opened)
	if b, a := text(before, "[data-testid=bank]"), text(after, "[data-testid=bank]"); a != b {
		t.Errorf("bank %q after the round trip, want %q", a, b)
	}
	if got := text(after, "[data-testid=notice]"); !strings.Contains(got, "Opened hold-up.json") {
		t.Errorf("notice %q", got)
	}
	// Each field shows the design file's number: what was typed with a
	// prefix (1.5k, 92 %) comes back as the plain value.
	for sel, want := range map[string]string{
		"#f-name": "Example: 48 V controller hold-up (invented)", "#f-window-max_v": "48", "#f-window-min_v": "24",
		"#f-load-steps-1-value": "1500", "#f-load-efficiency": "0.92", "#f-cold_c": "-20", "#f-life_years": "10",
	} {
		if got, _ := after.Find(sel).Attr("value"); got != want {
			t.Errorf("%s = %q, want %q", sel, got, want)
		}
	}
	bp := before.Find(`input[name="cells.pick"][checked]`).Map(attrValue)
	ap := after.Find(`input[name="cells.pick"][checked]`).Map(attrValue)
	if strings.Join(ap, ",") != strings.Join(bp, ",") {
		t.Errorf("picked %q, want %q", ap, bp)
	}
	// And the design it carries is the very design downloaded.
	again := postExport(t, s, "/export/design", pageToken(t, opened), "")
	wantStatus(t, again, http.StatusOK)
	if !bytes.Equal(again.Body.Bytes(), file) {
		t.Errorf("design after the round trip\n%s\nwant\n%s", again.Body.Bytes(), file)
	}
}

func attrValue(_ int, s *goquery.Selection) string {
	v, _ := s.Attr("value")
	return v
}
