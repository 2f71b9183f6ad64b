package main

// A logged profile sizes the same from every edge: the command line
// (--profile and a design naming load.profile_csv), the JSON API (as a
// multipart part and inline) and the design page (an uploaded CSV), each
// against the same profile written out as steps.

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"mime/multipart"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"

	"capbank/components/figures"
	"capbank/sizing"
	"capbank/sizing/sizingtest"
	"capbank/web"
	"capbank/web/form"
)

const loggerDesign = "../../testdata/logger-hold-up.json"

// loggedDayCSV is the shared invented logged day (sizingtest.LoggedDayCSV).
var loggedDayCSV = sizingtest.LoggedDayCSV

// loggerWith is the logger hold-up demo design with its load changed by
// load, as a design file.
func loggerWith(t *testing.T, load func(*sizing.Load)) (*sizing.Design, []byte) {
	t.Helper()
	data, err := os.ReadFile(loggerDesign)
	if err != nil {
		t.Fatal(err)
	}
	d, err := sizing.DecodeDesign(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	load(&d.Load)
	out, err := json.MarshalIndent(d, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	return d, out
}

func writeFileIn(t *testing.T, path string, data []byte) string {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// postDesign posts body to the API with its content type and returns the
// status and the answer.
func postDesign(t *testing.T, url, contentType string, body []byte) (int, string) {
	t.Helper()
	// ?pretty=1: the report indented as the command line writes it, so
	// that the two compare byte for byte.
	resp, err := http.Post(url+"/api/v1/size?pretty=1", contentType, bytes.NewReader(body))
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, err := io.ReadAll(resp.Body)
	if err != nil {
		t.Fatal(err)
	}
	return resp.StatusCode, string(b)
}

// multipartBody writes parts (name, file name, content) as
// multipart/form-data.
func multipartBody(t *testing.T, parts ...[3]string) ([]byte, string) {
	t.Helper()
	var body bytes.Buffer
	w := multipart.NewWriter(&body)
	for _, p := range parts {
		fw, err := w.CreateFormFile(p[0], p[1])
		if err != nil {
			t.Fatal(err)
		}
		io.WriteString(fw, p[2])
	}
	w.Close()
	return body.Bytes(), w.FormDataContentType()
}

// A logged day of 86 400 one-second rows gives the very same report from
// the command line, the API and the page as the same profile given as
// steps (the steps are ParseProfileCSV's, so the figures are the same
// numbers: compared byte for byte, rel = 0).
func TestLoggedDaySizesAlikeEverywhere(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	day := loggedDayCSV(86_400)
	parsed, err := sizing.ParseProfileCSV(strings.NewReader(day))
	if err != nil {
		t.Fatal(err)
	}
	// The design as steps: the reference every edge is compared with.
	_, stepsJSON := loggerWith(t, func(l *sizing.Load) { l.Steps = parsed.Steps })
	want := sizeOK(t, writeFileIn(t, filepath.Join(dir, "steps.json"), stepsJSON))
	wantRep := decodeReport(t, want)
	if wantRep.Recommended == nil {
		t.Fatal("the logged day as steps has no recommended bank; the comparison would show nothing")
	}
	// 86 400 rows a second apart, the last held 1 s: 86 400 s (own arithmetic).
	if wantRep.ProfileDurationS != 86_400 {
		t.Fatalf("profile of %g s, want 86 400 s", wantRep.ProfileDurationS)
	}

	// Command line: --profile, and a design that names the file beside it
	// (the path resolves against the design file's folder, not the
	// working folder).
	logPath := writeFileIn(t, filepath.Join(dir, "logs", "day.csv"), []byte(day))
	_, named := loggerWith(t, func(l *sizing.Load) { l.Steps = nil; l.ProfileCSV = "logs/day.csv" })
	namedPath := writeFileIn(t, filepath.Join(dir, "named.json"), named)
	for name, args := range map[string][]string{
		"capbank size --profile":          {"--profile", logPath, loggerDesign},
		"capbank size, load.profile_csv":  {namedPath},
		"--profile over load.profile_csv": {"--profile", logPath, namedPath},
	} {
		if got := sizeOK(t, args...); got != want {
			t.Errorf("%s: the report differs from the one of the same profile as steps", name)
		}
	}

	srv := httptest.NewServer(web.New(web.Config{DataDir: t.TempDir()}))
	t.Cleanup(srv.Close)

	// API: multipart (design and profile parts), and the CSV inline.
	original, err := os.ReadFile(loggerDesign)
	if err != nil {
		t.Fatal(err)
	}
	body, ct := multipartBody(t, [3]string{"design", "design.json", string(original)}, [3]string{"profile", "day.csv", day})
	if status, got := postDesign(t, srv.URL, ct, body); status != http.StatusOK || got != want {
		t.Errorf("API, multipart: status %d, and the report differs from the steps' (%.200s)", status, got)
	}
	_, inline := loggerWith(t, func(l *sizing.Load) { l.Steps = nil; l.ProfileCSVText = day })
	if status, got := postDesign(t, srv.URL, "application/json", inline); status != http.StatusOK || got != want {
		t.Errorf("API, load.profile_csv_text: status %d, and the report differs from the steps' (%.200s)", status, got)
	}

	// Page: the demo design as the form holds it, then the CSV uploaded
	// with "Load the profile". Its figures table is the steps report's.
	orig, _ := loggerWith(t, func(*sizing.Load) {})
	f, err := form.FromDesign(orig, nil)
	if err != nil {
		t.Fatal(err)
	}
	vals := f.Vals
	vals.Set("action", "load-csv")
	var page bytes.Buffer
	w := multipart.NewWriter(&page)
	for k, vs := range vals {
		for _, v := range vs {
			w.WriteField(k, v)
		}
	}
	fw, _ := w.CreateFormFile("profile_csv", "day.csv")
	io.WriteString(fw, day)
	w.Close()
	req, _ := http.NewRequest(http.MethodPost, srv.URL+"/", &page)
	req.Header.Set("Content-Type", w.FormDataContentType())
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	if resp.StatusCode != http.StatusOK {
		t.Fatalf("page: status %d", resp.StatusCode)
	}
	doc, err := goquery.NewDocumentFromReader(resp.Body)
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.TrimSpace(doc.Find("[data-testid=profile-rows]").Text()); got != "86400 (power_w)" {
		t.Errorf("page: profile rows %q, want 86400 (power_w)", got)
	}
	var rec *sizing.Candidate
	for i := range wantRep.Candidates {
		if wantRep.Candidates[i].CellID == *wantRep.Recommended {
			rec = &wantRep.Candidates[i]
		}
	}
	shown := map[string]string{}
	doc.Find("[data-testid=figures] tr").Each(func(_ int, tr *goquery.Selection) {
		td := tr.Find("td").First()
		td.Find(".words-note").Remove() // a worded figure carries its note in its own cell
		shown[strings.TrimSpace(tr.Find("th").Text())] = strings.TrimSpace(td.Text())
	})
	n := 0
	for _, g := range figures.Candidate(rec, wantRep) {
		for _, r := range g.Rows {
			n++
			if got, ok := shown[r.Label]; !ok || got != r.Text() {
				t.Errorf("page: %s shows %q, want %q as the steps report gives it", r.Label, got, r.Text())
			}
		}
	}
	if n < 10 {
		t.Errorf("only %d figures compared", n)
	}
}

// A design naming load.profile_csv is refused by the API by that field
// (the server reads no file a client names), and a bad row of a profile
// names its line and column from every edge.
func TestProfileProblemsByField(t *testing.T) {
	t.Parallel()
	srv := httptest.NewServer(web.New(web.Config{DataDir: t.TempDir()}))
	t.Cleanup(srv.Close)
	_, named := loggerWith(t, func(l *sizing.Load) { l.Steps = nil; l.ProfileCSV = "day.csv" })
	status, got := postDesign(t, srv.URL, "application/json", named)
	if status != http.StatusUnprocessableEntity || !strings.Contains(got, `"field": "load.profile_csv"`) ||
		!strings.Contains(got, "as its own part of a multipart request") {
		t.Errorf("API with load.profile_csv: status %d, %s; want 422 naming load.profile_csv and the multipart part", status, got)
	}

	bad := "time_s,power_w\n0,1\n1,2\n2,x\n"
	original, err := os.ReadFile(loggerDesign)
	if err != nil {
		t.Fatal(err)
	}
	body, ct := multipartBody(t, [3]string{"design", "d.json", string(original)}, [3]string{"profile", "bad.csv", bad})
	status, got = postDesign(t, srv.URL, ct, body)
	if status != http.StatusUnprocessableEntity || !strings.Contains(got, `"field": "profile"`) || !strings.Contains(got, `line 4, power_w: \"x\" is not a number`) {
		t.Errorf("API with a bad profile part: status %d, %s", status, got)
	}

	dir := t.TempDir()
	badPath := writeFileIn(t, filepath.Join(dir, "bad.csv"), []byte(bad))
	status2, stdout, stderr := runCapbank(t, context.Background(), "size", "--profile", badPath, loggerDesign)
	if status2 != 2 || stdout != "" || !strings.Contains(stderr, `--profile: line 4, power_w: "x" is not a number`) {
		t.Errorf("capbank size --profile bad.csv: exit %d, stdout %q, stderr %q", status2, stdout, stderr)
	}
	_, both := loggerWith(t, func(l *sizing.Load) { l.ProfileCSV = "bad.csv" })
	status2, _, stderr = runCapbank(t, context.Background(), "size", writeFileIn(t, filepath.Join(dir, "both.json"), both))
	if status2 != 2 || !strings.Contains(stderr, "load.profile_csv: cannot be given with load.steps") {
		t.Errorf("steps and load.profile_csv: exit %d, stderr %q", status2, stderr)
	}
	_, missing := loggerWith(t, func(l *sizing.Load) { l.Steps = nil; l.ProfileCSV = "none.csv" })
	status2, _, stderr = runCapbank(t, context.Background(), "size", writeFileIn(t, filepath.Join(dir, "missing.json"), missing))
	if status2 != 2 || !strings.Contains(stderr, "load.profile_csv: cannot read the profile file") || !strings.Contains(stderr, filepath.Join(dir, "none.csv")) {
		t.Errorf("a missing profile file: exit %d, stderr %q", status2, stderr)
	}
}
