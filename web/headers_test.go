package web

import (
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/PuerkitoBio/goquery"
	"github.com/labstack/echo/v4"
)

// wantSecurityHeaders checks the headers every answer carries: a
// Content-Security-Policy that runs only the site's own scripts and styles
// and forbids framing (CSP Level 3, W3C: script-src, style-src,
// frame-ancestors), X-Content-Type-Options nosniff (WHATWG Fetch) and a
// referrer policy that sends no address to other sites (W3C Referrer
// Policy, same-origin).
func wantSecurityHeaders(t *testing.T, rec *httptest.ResponseRecorder) {
	t.Helper()
	h := rec.Header()
	csp := h.Get("Content-Security-Policy")
	for _, want := range []string{"default-src 'self'", "script-src 'self'", "style-src 'self'", "frame-ancestors 'none'", "base-uri 'none'", "object-src 'none'"} {
		if !strings.Contains(csp, want) {
			t.Errorf("Content-Security-Policy %q lacks %q", csp, want)
		}
	}
	for _, never := range []string{"unsafe-inline", "unsafe-eval", "*"} {
		if strings.Contains(csp, never) {
			t.Errorf("Content-Security-Policy %q allows %q", csp, never)
		}
	}
	if got := h.Get("X-Content-Type-Options"); got != "nosniff" {
		t.Errorf("X-Content-Type-Options %q, want nosniff", got)
	}
	if got := h.Get("Referrer-Policy"); got != "same-origin" {
		t.Errorf("Referrer-Policy %q, want same-origin", got)
	}
}

// Every kind of answer carries the security headers: pages, fragments,
// API answers, static files, exports, the errors (404, 405, 413, 422, the
// cross-site 403, a recovered panic's 500).
func TestSecurityHeadersOnEveryAnswer(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	s.echo.GET("/api/v1/boom", func(echo.Context) error { panic("boom") })
	huge := strings.NewReader(strings.Repeat("x", MaxBodyBytes+1))
	crossSite := httptest.NewRequest(http.MethodPost, "/api/v1/cells", strings.NewReader(`{}`))
	crossSite.Header.Set("Content-Type", "application/json")
	crossSite.Header.Set("Sec-Fetch-Site", "cross-site")
	cases := []struct {
		name   string
		req    *http.Request
		status int
	}{
		{"page", httptest.NewRequest(http.MethodGet, "/", nil), http.StatusOK},
		{"library", httptest.NewRequest(http.MethodGet, "/library", nil), http.StatusOK},
		{"measure page", httptest.NewRequest(http.MethodGet, "/measure", nil), http.StatusOK},
		{"stylesheet", httptest.NewRequest(http.MethodGet, "/static/capbank.css", nil), http.StatusOK},
		{"health", httptest.NewRequest(http.MethodGet, "/healthz", nil), http.StatusOK},
		{"cells API", httptest.NewRequest(http.MethodGet, "/api/v1/cells", nil), http.StatusOK},
		{"no such page", httptest.NewRequest(http.MethodGet, "/no-such-page", nil), http.StatusNotFound},
		{"wrong method", httptest.NewRequest(http.MethodDelete, "/healthz", nil), http.StatusMethodNotAllowed},
		{"too large", httptest.NewRequest(http.MethodPost, "/api/v1/size", huge), http.StatusRequestEntityTooLarge},
		{"invalid design", httptest.NewRequest(http.MethodPost, "/api/v1/size", strings.NewReader(`{"window":{"max_v":-1}}`)), http.StatusUnprocessableEntity},
		{"cross-site write", crossSite, http.StatusForbidden},
		{"panic", httptest.NewRequest(http.MethodGet, "/api/v1/boom", nil), http.StatusInternalServerError},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if c.req.Method == http.MethodPost && c.req.Header.Get("Content-Type") == "" {
				c.req.Header.Set("Content-Type", "application/json")
			}
			rec := serve(s, c.req)
			wantStatus(t, rec, c.status)
			wantSecurityHeaders(t, rec)
		})
	}
}

// The pages live within that policy: no inline script, no event-handler
// attribute, no style attribute (each of which the policy above would
// block, leaving a page that silently does not work), every script from
// the site itself.
func TestPagesNeedNoInlineCode(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	for _, path := range []string{"/", "/library", "/library/new", "/library/demo-2v7-650f", "/designs", "/measure",
		"/compare?cells=demo-2v7-650f&cells=demo-3v0-500f", "/unlock"} {
		t.Run(path, func(t *testing.T) {
			rec := get(t, s, path)
			if rec.Code != http.StatusOK {
				t.Skipf("status %d", rec.Code) // a page this server does not offer (/unlock without a token)
			}
			doc := parse(t, rec)
			doc.Find("script").Each(func(_ int, sel *goquery.Selection) {
				src, ok := sel.Attr("src")
				if !ok || strings.TrimSpace(sel.Text()) != "" {
					html, _ := goquery.OuterHtml(sel)
					t.Errorf("inline script: %s", html)
				} else if !strings.HasPrefix(src, "/static/") {
					t.Errorf("script from %q, want the site's own /static/", src)
				}
			})
			doc.Find("*").Each(func(_ int, sel *goquery.Selection) {
				for _, a := range sel.Nodes[0].Attr {
					if strings.HasPrefix(strings.ToLower(a.Key), "on") || strings.EqualFold(a.Key, "style") || strings.HasPrefix(a.Key, "hx-on") {
						t.Errorf("<%s %s=%q>: inline code the policy blocks", goquery.NodeName(sel), a.Key, a.Val)
					}
				}
			})
			if doc.Find("style").Length() > 0 {
				t.Errorf("an inline <style> element, which the policy blocks")
			}
		})
	}
}
