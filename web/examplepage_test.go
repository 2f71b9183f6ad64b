package web

import (
	"bytes"
	"context"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"capbank/components"
)

// getGzip is GET target as a browser asks for it, the body decoded.
func getGzip(t *testing.T, s http.Handler, target string) (*httptest.ResponseRecorder, []byte) {
	t.Helper()
	req := httptest.NewRequest(http.MethodGet, target, nil)
	req.Header.Set("Accept", "text/html")
	req.Header.Set("Accept-Encoding", "gzip")
	rec := serve(s, req)
	wantStatus(t, rec, http.StatusOK)
	if got := rec.Header().Get("Content-Encoding"); got != "gzip" {
		t.Fatalf("GET %s: Content-Encoding %q, want gzip", target, got)
	}
	body, err := gzipReader(rec.Body.Bytes())
	if err != nil {
		t.Fatalf("GET %s: the gzip body does not decode (compressed twice?): %v", target, err)
	}
	return rec, body
}

// TestExamplePageKept: the first page is the page rendered afresh for the
// example design, byte for byte, whether kept or not, gzipped or not; it
// is kept once rendered, and a change to the library (a cell added, which
// the picker lists) makes a new one.
func TestExamplePageKept(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	fresh := func() []byte {
		req := httptest.NewRequest(http.MethodGet, "/", nil)
		c := s.echo.NewContext(req, httptest.NewRecorder())
		ev := evaluate(context.Background(), exampleForm(), s.lookup(c))
		var buf bytes.Buffer
		if err := components.Page(s.pageProps(ev, s.cellPicks(c, ev.form))).Render(context.Background(), &buf); err != nil {
			t.Fatal(err)
		}
		return buf.Bytes()
	}
	want := fresh()
	plain := get(t, s, "/")
	wantStatus(t, plain, http.StatusOK)
	if !bytes.Equal(plain.Body.Bytes(), want) {
		t.Fatal("GET / differs from the example page rendered afresh")
	}
	if plain.Header().Get("Content-Encoding") != "" {
		t.Error("a client that does not take gzip got it")
	}
	if s.example.html == nil {
		t.Fatal("the first page was not kept")
	}
	for range 2 {
		rec, body := getGzip(t, s, "/")
		if !bytes.Equal(body, want) {
			t.Error("the kept first page, gzipped, differs from the page rendered afresh")
		}
		if !strings.Contains(rec.Header().Get("Vary"), "Accept-Encoding") {
			t.Errorf("Vary %q", rec.Header().Get("Vary"))
		}
	}
	// Another query is rendered each time, and gzipped once.
	if _, body := getGzip(t, s, "/?new"); !bytes.Contains(body, []byte(`id="design-form"`)) {
		t.Error("GET /?new is not the design page")
	}

	wantStatus(t, do(t, s, http.MethodPost, "/api/v1/cells", "application/json", userCellJSON), http.StatusCreated)
	_, body := getGzip(t, s, "/")
	if bytes.Equal(body, want) || !bytes.Contains(body, []byte("bench-2v7-80f")) {
		t.Error("the first page does not list the cell added to the library")
	}
	if !bytes.Equal(body, fresh()) {
		t.Error("the first page after the library changed differs from the page rendered afresh")
	}
}
