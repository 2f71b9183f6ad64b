package web

import (
	"bytes"
	"context"
	"io"
	"log/slog"
	"mime/multipart"
	"net/http"
	"net/http/httptest"
	"net/url"
	"strings"
	"sync"
	"testing"

	"github.com/PuerkitoBio/goquery"
)

// newTestServer is a server on a fresh database in a temporary data
// directory, as capbank serve starts on first run, with its log kept for
// the test to read.
func newTestServer(t testing.TB) (*Server, *syncBuffer) {
	t.Helper()
	var logs syncBuffer
	dir := t.TempDir()
	st, err := OpenStore(context.Background(), dir)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	return New(Config{DataDir: dir, Store: st, Logger: slog.New(slog.NewTextHandler(&logs, nil))}), &logs
}

// syncBuffer is a bytes.Buffer safe for the server's goroutines.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

func serve(s http.Handler, req *http.Request) *httptest.ResponseRecorder {
	rec := httptest.NewRecorder()
	s.ServeHTTP(rec, req)
	return rec
}

func get(t testing.TB, s http.Handler, target string) *httptest.ResponseRecorder {
	t.Helper()
	req := httptest.NewRequest(http.MethodGet, target, nil)
	req.Header.Set("Accept", "text/html")
	return serve(s, req)
}

// postForm posts vals URL-encoded, as a browser without JavaScript does
// when the form has no file.
func postForm(t testing.TB, s http.Handler, target string, vals url.Values, htmx bool) *httptest.ResponseRecorder {
	t.Helper()
	req := httptest.NewRequest(http.MethodPost, target, strings.NewReader(vals.Encode()))
	req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	req.Header.Set("Accept", "text/html")
	if htmx {
		req.Header.Set("HX-Request", "true")
	}
	return serve(s, req)
}

// postMultipart posts vals and one file as multipart/form-data.
func postMultipart(t testing.TB, s http.Handler, target string, vals url.Values, fileField, fileName, content string) *httptest.ResponseRecorder {
	t.Helper()
	var body bytes.Buffer
	w := multipart.NewWriter(&body)
	for k, vs := range vals {
		for _, v := range vs {
			w.WriteField(k, v)
		}
	}
	if fileField != "" {
		fw, err := w.CreateFormFile(fileField, fileName)
		if err != nil {
			t.Fatal(err)
		}
		io.WriteString(fw, content)
	}
	w.Close()
	req := httptest.NewRequest(http.MethodPost, target, &body)
	req.Header.Set("Content-Type", w.FormDataContentType())
	req.Header.Set("Accept", "text/html")
	return serve(s, req)
}

func parse(t testing.TB, rec *httptest.ResponseRecorder) *goquery.Document {
	t.Helper()
	doc, err := goquery.NewDocumentFromReader(bytes.NewReader(rec.Body.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	return doc
}

func wantStatus(t testing.TB, rec *httptest.ResponseRecorder, want int) {
	t.Helper()
	if rec.Code != want {
		body := rec.Body.String()
		if len(body) > 2000 {
			body = body[:2000] + "…"
		}
		t.Fatalf("status %d, want %d; body:\n%s", rec.Code, want, body)
	}
}

// text is the trimmed text of the first match of sel.
func text(doc *goquery.Document, sel string) string {
	return strings.Join(strings.Fields(doc.Find(sel).First().Text()), " ")
}

// designValues is a small valid design as the form sends it: a 48 V to
// 24 V window, one power step and two demo cells.
func designValues() url.Values {
	return url.Values{
		"window.max_v":             {"48"},
		"window.min_v":             {"24"},
		"load.steps[0].kind":       {"power"},
		"load.steps[0].value":      {"1.5k"},
		"load.steps[0].duration_s": {"10"},
		"cells.pick":               {"demo-2v7-650f", "demo-3v0-500f"},
	}
}

func clone(v url.Values) url.Values {
	out := url.Values{}
	for k, vs := range v {
		out[k] = append([]string(nil), vs...)
	}
	return out
}
