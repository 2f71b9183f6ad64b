package web

import (
	"bytes"
	"encoding/json"
	"io"
	"mime/multipart"
	"net/http"
	"net/http/httptest"
	"net/url"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"

	"capbank/sizing"
	"capbank/web/share"
)

// postParts posts parts (name, file name — "" for a plain field —,
// content) to the API as multipart/form-data.
func postParts(t testing.TB, s http.Handler, parts ...[3]string) *httptest.ResponseRecorder {
	t.Helper()
	var body bytes.Buffer
	w := multipart.NewWriter(&body)
	for _, p := range parts {
		var fw io.Writer
		var err error
		if p[1] == "" {
			fw, err = w.CreateFormField(p[0])
		} else {
			fw, err = w.CreateFormFile(p[0], p[1])
		}
		if err != nil {
			t.Fatal(err)
		}
		io.WriteString(fw, p[2])
	}
	w.Close()
	req := httptest.NewRequest(http.MethodPost, "/api/v1/size", &body)
	req.Header.Set("Content-Type", w.FormDataContentType())
	return serve(s, req)
}

// smallDesign is a design file of one 1.5 kW step and one demo cell.
const smallDesign = `{"window":{"max_v":48,"min_v":24},"load":{"steps":[{"power_w":1500,"duration_s":10}]},"cells":["demo-2v7-650f"]}`

// The API takes the design and a logged profile as multipart parts, each a
// file or a plain field; the profile replaces the design's steps. A part
// it does not know, a part sent twice or no design part is refused by name.
func TestAPISizeMultipart(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	// 1.5 kW for 10 s as a log: rows at 0 and 5 s, the last held 5 s
	// (ParseProfileCSV's zero-order hold): the very steps of smallDesign.
	profile := "time_s,power_w\n0,1500\n5,1500\n"
	want := postJSON(t, s, []byte(smallDesign), "application/json")
	wantStatus(t, want, http.StatusOK)
	var wantRep sizing.Report
	if err := json.Unmarshal(want.Body.Bytes(), &wantRep); err != nil {
		t.Fatal(err)
	}
	// A profile of 1 kW for 10 s in place of the steps: a different bank
	// load, so the report must differ from the steps' (it is not ignored).
	other := "time_s,power_w\n0,1000\n5,1000\n"
	cases := []struct {
		name   string
		parts  [][3]string
		status int
		same   bool
		field  string
	}{
		{"files", [][3]string{{"design", "d.json", smallDesign}, {"profile", "p.csv", profile}}, 200, true, ""},
		{"plain fields", [][3]string{{"design", "", smallDesign}, {"profile", "", profile}}, 200, true, ""},
		{"design alone", [][3]string{{"design", "d.json", smallDesign}}, 200, true, ""},
		{"the profile replaces the steps", [][3]string{{"design", "", smallDesign}, {"profile", "", other}}, 200, false, ""},
		{"no design", [][3]string{{"profile", "p.csv", profile}}, 400, false, "design"},
		{"unknown part", [][3]string{{"design", "", smallDesign}, {"log", "", profile}}, 400, false, "log"},
		{"profile twice", [][3]string{{"design", "", smallDesign}, {"profile", "", profile}, {"profile", "", profile}}, 400, false, "profile"},
		{"bad row", [][3]string{{"design", "", smallDesign}, {"profile", "p.csv", "time_s,power_w\n0,1\n1,abc\n"}}, 422, false, "profile"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rec := postParts(t, s, tc.parts...)
			wantStatus(t, rec, tc.status)
			if tc.status == 200 {
				if got := bytes.Equal(rec.Body.Bytes(), want.Body.Bytes()); got != tc.same {
					t.Errorf("report equal to the steps' = %v, want %v", got, tc.same)
				}
				return
			}
			if !strings.Contains(rec.Body.String(), `"field":"`+tc.field+`"`) {
				t.Errorf("problem does not name %s: %s", tc.field, rec.Body.String())
			}
		})
	}
}

// A design with a long logged profile is too large for a link: the page
// says so plainly and offers no link, but still saves it, and the saved
// design opens again with its profile.
func TestLongProfileSavesWithoutLink(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	day := loggedDayCSV(86_400)
	v := designValues()
	v.Set("window.max_v", "5")
	v.Set("window.min_v", "3")
	v.Set("action", "load-csv")
	rec := postMultipart(t, s, "/", v, "profile_csv", "day.csv", day)
	wantStatus(t, rec, http.StatusOK)
	doc := parse(t, rec)
	note := text(doc, "[data-testid=link-note]")
	if !strings.Contains(note, "logged profile makes it too large for a link") || !strings.Contains(note, "at most 65536") {
		t.Errorf("link note %q, want it to say the profile is too large for a link", note)
	}
	if doc.Find("[data-testid=share-link]").Length() != 0 {
		t.Error("a link is offered for a design too large for one")
	}
	tok, ok := doc.Find("[data-testid=save-form] input[name=d]").Attr("value")
	if !ok || len(tok) <= share.MaxTokenBytes {
		t.Fatalf("the save form carries a token of %d characters, want one longer than a link's %d", len(tok), share.MaxTokenBytes)
	}
	save := postForm(t, s, "/designs", url.Values{"d": {tok}, "name": {"Logged day"}}, false)
	wantStatus(t, save, http.StatusSeeOther)
	loc := save.Header().Get("Location")
	opened := get(t, s, strings.TrimSuffix(loc, "?done=saved"))
	wantStatus(t, opened, http.StatusOK)
	odoc := parse(t, opened)
	if got := text(odoc, "[data-testid=profile-rows]"); got != "86400 (power_w)" {
		t.Errorf("the saved design opens with profile rows %q, want 86400 (power_w)", got)
	}
	if got, want := text(odoc, "[data-testid=bank]"), text(doc, "[data-testid=bank]"); got != want {
		t.Errorf("the saved design sizes to %q, want %q", got, want)
	}
}

// BenchmarkPageProfileUpload is the post of "Load the profile" with a
// logged profile of 10⁶ rows (the most ParseProfileCSV reads) into the
// design page, answered with the whole workspace: parsing, sizing two
// candidates, the summary, the chart and the tokens. It reports the server
// time per upload and the size of the page.
func BenchmarkPageProfileUpload(b *testing.B) {
	s, _ := newTestServer(b)
	log := loggedDayCSV(1_000_000)
	v := designValues()
	v.Set("window.max_v", "5")
	v.Set("window.min_v", "3")
	v.Set("action", "load-csv")
	rec := postMultipart(b, s, "/", v, "profile_csv", "million.csv", log)
	wantStatus(b, rec, http.StatusOK)
	if !strings.Contains(rec.Body.String(), "1000000 (power_w)") {
		b.Fatal("the page does not show the profile of 10⁶ rows")
	}
	if !strings.Contains(rec.Body.String(), "too large to carry in a link, a download or a save from this page") {
		b.Fatal("the page does not say that a design of 10⁶ rows is too large to carry")
	}
	// Two logs that differ in a comment line, in turn, so that every
	// upload is a text capbank has not read before.
	logs := []string{log, "# the other log\n" + log}
	i := 0
	for b.Loop() {
		i++
		if rec := postMultipart(b, s, "/", v, "profile_csv", "million.csv", logs[i%2]); rec.Code != http.StatusOK {
			b.Fatalf("status %d", rec.Code)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Milliseconds())/float64(b.N), "ms/upload")
	b.ReportMetric(float64(len(rec.Body.String()))/1e6, "page_MB")
}

// A design file whose profile has a bad row opens with the profile kept
// and the row's line and column beside the profile file input, under its
// label; one that names a profile file the page cannot read is refused.
func TestOpenDesignWithProfileProblems(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	open := func(design string) *goquery.Document {
		t.Helper()
		v := url.Values{"action": {"open-design"}}
		rec := postMultipart(t, s, "/", v, "design_file", "logged.json", design)
		if rec.Code != http.StatusOK && rec.Code != http.StatusUnprocessableEntity {
			t.Fatalf("status %d", rec.Code)
		}
		return parse(t, rec)
	}
	bad := `{"window":{"max_v":48,"min_v":24},"load":{"profile_csv_text":"time_s,power_w\n0,100\n1,x\n"},"cells":["demo-2v7-650f"]}`
	doc := open(bad)
	if doc.Find("[data-testid=profile-summary]").Length() != 1 {
		t.Error("the opened design's profile is not shown as a profile")
	}
	// The page writes the column in words (the power), as it does every key.
	if got := text(doc, "#msg-profile_csv"); !strings.Contains(got, `line 3, the power: "x" is not a number`) {
		t.Errorf("profile message %q, want the bad row's line and column", got)
	}
	if got := text(doc, "[data-testid=problems]"); !strings.Contains(got, "Profile file: line 3") {
		t.Errorf("problem summary %q, want it under the label Profile file", got)
	}

	named := `{"window":{"max_v":48,"min_v":24},"load":{"profile_csv":"day.csv"},"cells":["demo-2v7-650f"]}`
	doc = open(named)
	if got := text(doc, "#msg-design_file"); !strings.Contains(got, `names the profile file "day.csv", which this page cannot read`) {
		t.Errorf("design file message %q, want the profile file refused", got)
	}
}
