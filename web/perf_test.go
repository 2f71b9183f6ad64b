package web

import (
	"bytes"
	"compress/gzip"
	"context"
	"io"
	"net"
	"net/http"
	"net/http/httptest"
	"net/url"
	"strings"
	"sync/atomic"
	"testing"

	"github.com/PuerkitoBio/goquery"
)

// The page's speed and weight (go test ./web -run '^$' -bench .): the
// results fragment htmx swaps in for a 10-cell comparison, and the first
// page with its stylesheet, scripts and icons as a browser fetches them.
// The figures are written in the README's Performance section.

// firstPageBudget is the target for the first page with its CSS
// and scripts, in bytes as sent (kB = 1000 bytes).
const firstPageBudget = 150_000

// countingConn counts the bytes read from a connection.
type countingConn struct {
	net.Conn
	n *atomic.Int64
}

func (c countingConn) Read(p []byte) (int, error) {
	n, err := c.Conn.Read(p)
	c.n.Add(int64(n))
	return n, err
}

// pageFetch is one response of the first page load.
type pageFetch struct {
	path     string
	wire     int64  // bytes read off the connection: status line, headers and body as sent
	body     int    // the body after decoding
	encoding string // Content-Encoding as served
}

// firstPageLoad fetches the first page of a real server on a loopback port
// as a browser does on a first visit (asking for gzip, nothing cached),
// then every stylesheet, script, icon and image it references, and returns
// what each response weighed on the wire.
func firstPageLoad(tb testing.TB) []pageFetch {
	tb.Helper()
	s, _ := newTestServer(tb)
	srv := httptest.NewServer(s)
	defer srv.Close()
	var read atomic.Int64
	dialer := &net.Dialer{}
	client := &http.Client{Transport: &http.Transport{
		// The request asks for gzip itself, so the body read is the one sent.
		DisableCompression: true,
		DisableKeepAlives:  true,
		DialContext: func(ctx context.Context, network, addr string) (net.Conn, error) {
			c, err := dialer.DialContext(ctx, network, addr)
			return countingConn{c, &read}, err
		},
	}}
	fetch := func(path string) (pageFetch, []byte) {
		req, err := http.NewRequest(http.MethodGet, srv.URL+path, nil)
		if err != nil {
			tb.Fatal(err)
		}
		req.Header.Set("Accept", "text/html,*/*")
		req.Header.Set("Accept-Encoding", "gzip")
		before := read.Load()
		resp, err := client.Do(req)
		if err != nil {
			tb.Fatal(err)
		}
		raw, err := io.ReadAll(resp.Body)
		resp.Body.Close()
		if err != nil {
			tb.Fatal(err)
		}
		if resp.StatusCode != http.StatusOK {
			tb.Fatalf("GET %s: status %d", path, resp.StatusCode)
		}
		f := pageFetch{path: path, wire: read.Load() - before, encoding: resp.Header.Get("Content-Encoding")}
		body := raw
		if f.encoding == "gzip" {
			zr, err := gzipReader(raw)
			if err != nil {
				tb.Fatalf("GET %s: gzip body does not decode: %v", path, err)
			}
			body = zr
		}
		f.body = len(body)
		return f, body
	}
	page, html := fetch("/")
	out := []pageFetch{page}
	doc, err := goquery.NewDocumentFromReader(bytes.NewReader(html))
	if err != nil {
		tb.Fatal(err)
	}
	seen := map[string]bool{}
	doc.Find(`link[rel~="stylesheet"][href], link[rel~="icon"][href], script[src], img[src]`).Each(func(_ int, sel *goquery.Selection) {
		ref, ok := sel.Attr("href")
		if !ok {
			ref, _ = sel.Attr("src")
		}
		u, err := url.Parse(ref)
		if err != nil || strings.HasPrefix(ref, "data:") || u.Host != "" || seen[ref] {
			return // inline data, another site, or fetched already
		}
		seen[ref] = true
		f, _ := fetch(u.RequestURI())
		out = append(out, f)
	})
	return out
}

func gzipReader(b []byte) ([]byte, error) {
	zr, err := gzip.NewReader(bytes.NewReader(b))
	if err != nil {
		return nil, err
	}
	return io.ReadAll(zr)
}

// TestFirstPageWeightOnTheWire: the first page, with every stylesheet,
// script and icon it references, weighs at most 150 kB (the issue's
// target) counted as bytes off a real connection, headers included; and
// every text response of gzipMinBytes or more is gzipped as the server
// promises (compressAnswers in server.go). TestFirstPageWeight
// checks the bodies alone against a tighter budget.
func TestFirstPageWeightOnTheWire(t *testing.T) {
	t.Parallel()
	fetches := firstPageLoad(t)
	var css, js bool
	total := int64(0)
	for _, f := range fetches {
		total += f.wire
		t.Logf("%-40s %7d bytes sent (%s), %7d bytes decoded", f.path, f.wire, or(f.encoding, "identity"), f.body)
		text := f.path == "/" || strings.Contains(f.path, ".css") || strings.Contains(f.path, ".js")
		if text && f.body >= gzipMinBytes && f.encoding != "gzip" {
			t.Errorf("%s: %d bytes sent without gzip", f.path, f.body)
		}
		css = css || strings.Contains(f.path, ".css")
		js = js || strings.Contains(f.path, ".js")
	}
	if !css || !js {
		t.Errorf("the first page loads no stylesheet (%v) or no script (%v): the weight would leave them out", css, js)
	}
	t.Logf("first page: %d bytes sent in %d responses", total, len(fetches))
	if total > firstPageBudget {
		t.Errorf("the first page weighs %d bytes as sent, over the %d-byte budget", total, firstPageBudget)
	}
}

func or(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

// BenchmarkFirstPage renders GET / (server time, no network) and reports
// the first page's weight as sent: the page alone and with its
// stylesheet, scripts and icons (kB = 1000 bytes).
func BenchmarkFirstPage(b *testing.B) {
	s, _ := newTestServer(b)
	for b.Loop() {
		if rec := get(b, s, "/"); rec.Code != http.StatusOK {
			b.Fatalf("status %d", rec.Code)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Microseconds())/1000/float64(b.N), "ms/page")
	fetches := firstPageLoad(b)
	total := int64(0)
	for _, f := range fetches {
		total += f.wire
	}
	b.ReportMetric(float64(fetches[0].wire)/1000, "html_kB")
	b.ReportMetric(float64(total)/1000, "first_page_kB")
}

// tenCells are ten demo cells for a 48 V → 24 V comparison.
var tenCells = []string{"demo-2v7-60f", "demo-2v7-120f", "demo-2v7-350f", "demo-2v7-650f", "demo-2v7-1200f",
	"demo-2v7-3000f", "demo-3v0-150f", "demo-3v0-500f", "demo-3v0-1500f", "demo-3v0-3400f"}

// BenchmarkResultsFragment10Cells is the request htmx sends while the
// engineer types: POST /results with the design form, ten demo cells
// picked, answered with the results fragment. It reports the server time
// per fragment (ms) and the size of its HTML before gzip (kB).
func BenchmarkResultsFragment10Cells(b *testing.B) {
	s, _ := newTestServer(b)
	v := designValues()
	v["cells.pick"] = tenCells
	// The answer must be the fragment with every cell compared.
	rec := postForm(b, s, "/results", v, true)
	wantStatus(b, rec, http.StatusOK)
	body := rec.Body.String()
	if strings.Contains(body, "<html") {
		b.Fatal("POST /results answered a whole page, not the fragment")
	}
	for _, id := range tenCells {
		if !strings.Contains(body, id) {
			b.Fatalf("the fragment does not compare %s", id)
		}
	}
	for b.Loop() {
		if rec := postForm(b, s, "/results", v, true); rec.Code != http.StatusOK {
			b.Fatalf("status %d", rec.Code)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Microseconds())/1000/float64(b.N), "ms/fragment")
	b.ReportMetric(float64(len(body))/1000, "fragment_html_kB")
}

// BenchmarkCandidateCard is what opening a folded candidate card of the
// 10-cell results costs: POST /results/candidate?cell=ID from htmx with
// the results' token, answered with the card's body (server time, and its
// HTML in kB). The design is sized again for it.
func BenchmarkCandidateCard(b *testing.B) {
	s, _ := newTestServer(b)
	v := designValues()
	v["cells.pick"] = tenCells
	token := pageToken(b, postForm(b, s, "/results", v, true))
	card := url.Values{"d": {token}}
	target := "/results/candidate?cell=" + tenCells[0]
	rec := postForm(b, s, target, card, true)
	wantStatus(b, rec, http.StatusOK)
	for b.Loop() {
		if rec := postForm(b, s, target, card, true); rec.Code != http.StatusOK {
			b.Fatalf("status %d", rec.Code)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Microseconds())/1000/float64(b.N), "ms/card")
	b.ReportMetric(float64(rec.Body.Len())/1000, "card_html_kB")
}

// discardWriter is a ResponseWriter that counts the body and keeps none of
// it, so that a benchmark's allocations are the server's.
type discardWriter struct {
	h      http.Header
	status int
	n      int
}

func (w *discardWriter) Header() http.Header         { return w.h }
func (w *discardWriter) WriteHeader(status int)      { w.status = status }
func (w *discardWriter) Write(p []byte) (int, error) { w.n += len(p); return len(p), nil }

// BenchmarkPageRender is GET / as a browser asks for it (Accept-Encoding
// gzip), answered into a writer that keeps nothing: the server's time
// and allocations per page, and the page's bytes as sent (kB = 1000 bytes).
func BenchmarkPageRender(b *testing.B) {
	s, _ := newTestServer(b)
	req := httptest.NewRequest(http.MethodGet, "/", nil)
	req.Header.Set("Accept", "text/html")
	req.Header.Set("Accept-Encoding", "gzip")
	var sent int
	for b.Loop() {
		w := &discardWriter{h: http.Header{}}
		s.ServeHTTP(w, req)
		if w.status != http.StatusOK {
			b.Fatalf("status %d", w.status)
		}
		sent = w.n
	}
	b.ReportMetric(float64(b.Elapsed().Microseconds())/1000/float64(b.N), "ms/page")
	b.ReportMetric(float64(sent)/1000, "sent_kB")
}
