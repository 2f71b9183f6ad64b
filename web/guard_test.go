package web

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"strings"
	"sync/atomic"
	"testing"

	"github.com/labstack/echo/v4"
)

// testToken is the access token of the guarded test servers (invented).
const testToken = "bench-7f3a9c2e41d8"

// request builds a request with a body (form-encoded unless ctype says
// otherwise) and headers.
func request(method, target, body, ctype string, headers map[string]string) *http.Request {
	req := httptest.NewRequest(method, target, strings.NewReader(body))
	if body != "" {
		if ctype == "" {
			ctype = "application/x-www-form-urlencoded"
		}
		req.Header.Set("Content-Type", ctype)
	}
	for k, v := range headers {
		req.Header.Set(k, v)
	}
	return req
}

// writeRoutes adds write routes to s as later issues add them (the cell
// library, saved designs), each counting its calls: the guards cover
// routes they were never told about.
func writeRoutes(s *Server) *atomic.Int64 {
	var calls atomic.Int64
	h := func(c echo.Context) error {
		calls.Add(1)
		return c.NoContent(http.StatusCreated)
	}
	s.echo.POST("/api/v1/cells", h)
	s.echo.DELETE("/api/v1/cells/:id", h)
	s.echo.PUT("/api/v1/designs/:id", h)
	s.echo.POST("/library/cells", h)
	return &calls
}

func decodeProblem(t *testing.T, rec *httptest.ResponseRecorder) problem {
	t.Helper()
	if ct := rec.Header().Get("Content-Type"); ct != problemCharset {
		t.Fatalf("Content-Type %q, want %q; body %s", ct, problemCharset, rec.Body)
	}
	var p problem
	if err := json.Unmarshal(rec.Body.Bytes(), &p); err != nil {
		t.Fatal(err)
	}
	return p
}

// A state-changing request a browser sends from another site is refused
// with 403 and says why (net/http.CrossOriginProtection: Sec-Fetch-Site,
// else Origin against Host); the same request from capbank's own page, or
// from a client that sends neither header, goes through. Without the
// check every one of the refused requests below would be served.
func TestCrossSiteWritesAreRefused(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	calls := writeRoutes(s)
	form := designValues().Encode()
	designJSON, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	routes := []struct{ method, path, body, ctype string }{
		{"POST", "/", form, ""},
		{"POST", "/results", form, ""},
		{"POST", "/workspace", form, ""},
		{"POST", "/export/boq-csv", string(designJSON), "application/json"},
		{"POST", "/measure", "method=timed", ""},
		{"POST", "/api/v1/size", string(designJSON), "application/json"},
		{"POST", "/api/v1/measure", "method=timed", ""},
		{"POST", "/unlock", "token=x", ""},
		{"POST", "/api/v1/cells", `{}`, "application/json"},
		{"DELETE", "/api/v1/cells/a", "", ""},
		{"PUT", "/api/v1/designs/1", `{}`, "application/json"},
		{"PATCH", "/no/such/route", "", ""},
	}
	foreign := []struct {
		name    string
		headers map[string]string
	}{
		// Sec-Fetch-Site is sent by every current browser (Fetch Metadata).
		{"Sec-Fetch-Site cross-site", map[string]string{"Sec-Fetch-Site": "cross-site"}},
		{"Sec-Fetch-Site same-site", map[string]string{"Sec-Fetch-Site": "same-site", "Origin": "http://other.example.com"}},
		// An older browser sends only Origin.
		{"foreign Origin", map[string]string{"Origin": "http://attacker.example"}},
	}
	for _, r := range routes {
		for _, f := range foreign {
			t.Run(r.method+" "+r.path+" "+f.name, func(t *testing.T) {
				rec := serve(s, request(r.method, r.path, r.body, r.ctype, f.headers))
				wantStatus(t, rec, http.StatusForbidden)
				p := decodeProblem(t, rec)
				if p.Type != typeCrossOrigin || !strings.Contains(p.Detail, "another site") {
					t.Errorf("problem %+v", p)
				}
			})
		}
	}
	if n := calls.Load(); n != 0 {
		t.Errorf("%d refused writes reached their handler", n)
	}

	// A browser is shown the reason on a page.
	rec := serve(s, request("POST", "/", form, "", map[string]string{"Sec-Fetch-Site": "cross-site", "Accept": "text/html"}))
	wantStatus(t, rec, http.StatusForbidden)
	if got := text(parse(t, rec), "[data-testid=error-page] h1"); got != "Cross-site request refused" {
		t.Errorf("page heading %q", got)
	}

	// Same origin, a typed address (none), a matching Origin, or no browser
	// headers at all: served.
	allowed := []map[string]string{
		{"Sec-Fetch-Site": "same-origin", "Origin": "http://example.com"},
		{"Sec-Fetch-Site": "none"},
		{"Origin": "http://example.com"}, // httptest's Host is example.com
		nil,
	}
	for _, h := range allowed {
		rec := serve(s, request("POST", "/api/v1/size", string(designJSON), "application/json", h))
		wantStatus(t, rec, http.StatusOK)
		rec = serve(s, request("POST", "/api/v1/cells", `{}`, "application/json", h))
		wantStatus(t, rec, http.StatusCreated)
	}
	// Reading is never refused: a cross-site link to the page works.
	rec = serve(s, request("GET", "/", "", "", map[string]string{"Sec-Fetch-Site": "cross-site"}))
	wantStatus(t, rec, http.StatusOK)
}

// Without a token nothing is asked: writes go through, and the unlock page
// says the server is open.
func TestNoTokenLeavesWritesOpen(t *testing.T) {
	t.Parallel()
	s, _ := newTestServer(t)
	calls := writeRoutes(s)
	for _, r := range []struct{ method, path string }{{"POST", "/api/v1/cells"}, {"DELETE", "/api/v1/cells/a"}, {"POST", "/library/cells"}} {
		rec := serve(s, request(r.method, r.path, "", "", nil))
		wantStatus(t, rec, http.StatusCreated)
		if rec.Header().Get("WWW-Authenticate") != "" {
			t.Errorf("%s %s: a challenge without a token", r.method, r.path)
		}
	}
	if calls.Load() != 3 {
		t.Errorf("%d writes served, want 3", calls.Load())
	}
	rec := get(t, s, "/unlock")
	wantStatus(t, rec, http.StatusOK)
	if parse(t, rec).Find("[data-testid=unlock-open]").Length() != 1 {
		t.Errorf("the unlock page does not say the server is open:\n%s", rec.Body)
	}
	if len(rec.Result().Cookies()) != 0 {
		t.Error("a cookie without a token")
	}
}

// With a token, the API's writes need Authorization: Bearer TOKEN: missing
// or wrong gives 401 with a Bearer challenge (RFC 6750 §3) and a problem
// document, and the handler is never reached. The compute-only routes
// need no token.
func TestTokenGuardsAPIWrites(t *testing.T) {
	t.Parallel()
	s, _ := newServerWith(t, Config{Token: testToken})
	calls := writeRoutes(s)
	cases := []struct {
		name, auth, challenge, title string
	}{
		{"missing", "", `Bearer realm="capbank"`, "Access token required"},
		{"wrong", "Bearer " + testToken + "x", `Bearer realm="capbank", error="invalid_token"`, "Access token not accepted"},
		{"prefix of the token", "Bearer " + testToken[:6], `Bearer realm="capbank", error="invalid_token"`, "Access token not accepted"},
		{"other scheme", "Basic " + testToken, `Bearer realm="capbank", error="invalid_token"`, "Access token not accepted"},
	}
	for _, c := range cases {
		for _, r := range []struct{ method, path string }{{"POST", "/api/v1/cells"}, {"DELETE", "/api/v1/cells/a"}, {"PUT", "/api/v1/designs/1"}} {
			t.Run(c.name+" "+r.method+" "+r.path, func(t *testing.T) {
				h := map[string]string{}
				if c.auth != "" {
					h["Authorization"] = c.auth
				}
				rec := serve(s, request(r.method, r.path, `{}`, "application/json", h))
				wantStatus(t, rec, http.StatusUnauthorized)
				if got := rec.Header().Get("WWW-Authenticate"); got != c.challenge {
					t.Errorf("WWW-Authenticate %q, want %q", got, c.challenge)
				}
				p := decodeProblem(t, rec)
				if p.Type != typeTokenRequired || p.Title != c.title || !strings.Contains(p.Detail, "Authorization: Bearer TOKEN") {
					t.Errorf("problem %+v", p)
				}
			})
		}
	}
	// An unknown route is a write too (deny by default).
	rec := serve(s, request("DELETE", "/api/v1/anything", "", "", nil))
	wantStatus(t, rec, http.StatusUnauthorized)
	if n := calls.Load(); n != 0 {
		t.Fatalf("%d writes without the token reached their handler", n)
	}

	for _, auth := range []string{"Bearer " + testToken, "bearer " + testToken} {
		rec := serve(s, request("POST", "/api/v1/cells", `{}`, "application/json", map[string]string{"Authorization": auth}))
		wantStatus(t, rec, http.StatusCreated)
	}
	if calls.Load() != 2 {
		t.Errorf("%d writes with the token served, want 2", calls.Load())
	}

	// Sizing, exports and measuring change nothing and need no token.
	designJSON, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range []struct {
		path, body, ctype string
		status            int
	}{
		{"/api/v1/size", string(designJSON), "application/json", http.StatusOK},
		{"/export/boq-json", string(designJSON), "application/json", http.StatusOK},
		{"/", designValues().Encode(), "", http.StatusOK},
		{"/results", designValues().Encode(), "", http.StatusOK},
		{"/workspace", designValues().Encode(), "", http.StatusOK},
		{"/measure", "method=timed&v0_v=2.7&v1_v=2.2&duration_s=60&resistor_ohm=10", "", http.StatusOK},
		{"/api/v1/measure", "method=timed&v0_v=2.7&v1_v=2.2&duration_s=60&resistor_ohm=10", "", http.StatusOK},
	} {
		rec := serve(s, request("POST", r.path, r.body, r.ctype, nil))
		if rec.Code != r.status {
			t.Errorf("POST %s without a token: status %d, want %d", r.path, rec.Code, r.status)
		}
	}
}

// A browser without the token is shown the unlock page (a plain form
// post) or sent to it (htmx); entering the token there sets an HttpOnly,
// SameSite=Strict cookie, after which its writes go through.
func TestTokenUnlocksABrowser(t *testing.T) {
	t.Parallel()
	s, logs := newServerWith(t, Config{Token: testToken})
	calls := writeRoutes(s)
	page := map[string]string{"Accept": "text/html", "Referer": "http://example.com/library?sort=name"}

	rec := serve(s, request("POST", "/library/cells", "name=x", "", page))
	wantStatus(t, rec, http.StatusUnauthorized)
	doc := parse(t, rec)
	if doc.Find("[data-testid=unlock] input[name=token][type=password]").Length() != 1 {
		t.Fatalf("no token field on the 401 page:\n%s", rec.Body)
	}
	if next, _ := doc.Find("input[name=next]").Attr("value"); next != "/library?sort=name" {
		t.Errorf("next %q, want the page the post came from", next)
	}
	if !strings.Contains(text(doc, "[data-testid=unlock-notice]"), "access token") {
		t.Errorf("notice %q", text(doc, "[data-testid=unlock-notice]"))
	}

	hx := map[string]string{"HX-Request": "true", "HX-Current-URL": "http://example.com/library", "Accept": "text/html"}
	rec = serve(s, request("POST", "/library/cells", "name=x", "", hx))
	wantStatus(t, rec, http.StatusUnauthorized)
	if got := rec.Header().Get("HX-Redirect"); got != "/unlock?next=%2Flibrary" {
		t.Errorf("HX-Redirect %q", got)
	}

	// A wrong token: 401 again, the reason beside the field, no cookie.
	rec = serve(s, request("POST", "/unlock", url.Values{"token": {"guess"}, "next": {"/library"}}.Encode(), "", map[string]string{"Accept": "text/html"}))
	wantStatus(t, rec, http.StatusUnauthorized)
	if got := text(parse(t, rec), "[data-testid=unlock-error]"); !strings.Contains(got, "not this server's access token") {
		t.Errorf("error %q", got)
	}
	if len(rec.Result().Cookies()) != 0 {
		t.Error("a cookie for a wrong token")
	}
	if !strings.Contains(logs.String(), "wrong access token") {
		t.Error("the wrong token is not logged")
	}

	// The right token: a cookie, and back to the page.
	rec = serve(s, request("POST", "/unlock", url.Values{"token": {testToken}, "next": {"/library"}}.Encode(), "", nil))
	wantStatus(t, rec, http.StatusSeeOther)
	if loc := rec.Header().Get("Location"); loc != "/library" {
		t.Errorf("Location %q", loc)
	}
	cookies := rec.Result().Cookies()
	if len(cookies) != 1 {
		t.Fatalf("%d cookies, want 1", len(cookies))
	}
	ck := cookies[0]
	// OWASP session-cookie advice: HttpOnly, SameSite, Path; Secure only
	// over TLS (a plain-HTTP bench server could not send it back).
	if ck.Name != AccessCookie || !ck.HttpOnly || ck.SameSite != http.SameSiteStrictMode || ck.Path != "/" || ck.Secure || ck.MaxAge <= 0 {
		t.Errorf("cookie %+v", ck)
	}
	if strings.Contains(ck.Value, testToken) {
		t.Error("the cookie carries the token itself")
	}
	rec = serve(s, request("POST", "/library/cells", "name=x", "", map[string]string{"Cookie": ck.String()}))
	wantStatus(t, rec, http.StatusCreated)
	if calls.Load() != 1 {
		t.Errorf("%d writes served, want 1", calls.Load())
	}
	req := request("GET", "/unlock", "", "", map[string]string{"Accept": "text/html"})
	req.AddCookie(&http.Cookie{Name: AccessCookie, Value: ck.Value})
	rec = serve(s, req)
	if parse(t, rec).Find("[data-testid=unlock-done]").Length() != 1 {
		t.Errorf("the unlock page does not say this browser is unlocked:\n%s", rec.Body)
	}

	// A forged cookie is refused.
	forged := &http.Cookie{Name: AccessCookie, Value: strings.Repeat("0", len(ck.Value))}
	rec = serve(s, request("POST", "/api/v1/cells", "", "", map[string]string{"Cookie": forged.String()}))
	wantStatus(t, rec, http.StatusUnauthorized)

	// Locking removes the cookie.
	rec = serve(s, request("POST", "/unlock", "action=lock", "", nil))
	wantStatus(t, rec, http.StatusSeeOther)
	if c := rec.Result().Cookies(); len(c) != 1 || c[0].MaxAge >= 0 || !c[0].HttpOnly || c[0].SameSite != http.SameSiteStrictMode {
		t.Errorf("lock cookies %+v, want the access cookie expired", c)
	}
}

// Over TLS the cookie is Secure.
func TestAccessCookieSecureOverTLS(t *testing.T) {
	t.Parallel()
	s, _ := newServerWith(t, Config{Token: testToken})
	req := request("POST", "https://example.com/unlock", url.Values{"token": {testToken}}.Encode(), "", nil)
	rec := serve(s, req)
	wantStatus(t, rec, http.StatusSeeOther)
	if c := rec.Result().Cookies(); len(c) != 1 || !c[0].Secure || !c[0].HttpOnly {
		t.Errorf("cookies %+v, want one Secure HttpOnly cookie", c)
	}
}

// The page to return to is always on this server: the unlock page is no
// open redirect.
func TestUnlockRedirectStaysLocal(t *testing.T) {
	t.Parallel()
	s, _ := newServerWith(t, Config{Token: testToken})
	for _, next := range []string{"//attacker.example/x", "https://attacker.example/", "/\\attacker.example", "javascript:alert(1)", "", "library", "/x\r\nSet-Cookie: a=b"} {
		rec := serve(s, request("POST", "/unlock", url.Values{"token": {testToken}, "next": {next}}.Encode(), "", nil))
		wantStatus(t, rec, http.StatusSeeOther)
		if loc := rec.Header().Get("Location"); loc != "/" {
			t.Errorf("next %q: Location %q, want /", next, loc)
		}
		rec = get(t, s, "/unlock?next="+url.QueryEscape(next))
		if href, _ := parse(t, rec).Find(".hint a").Attr("href"); href != "/" {
			t.Errorf("next %q: back link %q, want /", next, href)
		}
	}
	// A Referer from another host is not used either.
	rec := serve(s, request("POST", "/library/x", "", "", map[string]string{"Accept": "text/html", "Referer": "http://attacker.example/page"}))
	wantStatus(t, rec, http.StatusUnauthorized)
	if next, _ := parse(t, rec).Find("input[name=next]").Attr("value"); next != "/" {
		t.Errorf("next %q from a foreign Referer, want /", next)
	}
}

// Every cookie the server sets, on any page, is HttpOnly and SameSite.
func TestEveryCookieIsHttpOnlySameSite(t *testing.T) {
	t.Parallel()
	s, _ := newServerWith(t, Config{Token: testToken})
	reqs := []*http.Request{
		request("GET", "/", "", "", nil),
		request("POST", "/", designValues().Encode(), "", nil),
		request("GET", "/measure", "", "", nil),
		request("GET", "/unlock", "", "", nil),
		request("POST", "/unlock", "token="+testToken, "", nil),
		request("POST", "/unlock", "token=wrong", "", nil),
		request("POST", "/unlock", "action=lock", "", nil),
		request("POST", "/api/v1/cells", "", "", nil),
	}
	seen := 0
	for _, req := range reqs {
		rec := serve(s, req)
		io.Copy(io.Discard, rec.Body)
		for _, c := range rec.Result().Cookies() {
			seen++
			if !c.HttpOnly || c.SameSite == http.SameSiteDefaultMode || c.SameSite == 0 {
				t.Errorf("%s %s sets cookie %s without HttpOnly and SameSite", req.Method, req.URL, c.Name)
			}
		}
	}
	if seen < 2 {
		t.Errorf("only %d cookies seen; the unlock and lock answers set one each", seen)
	}
}

// The library's and the saved designs' own routes are guarded: without
// the token nothing is stored or deleted, with it the write goes through.
func TestTokenGuardsTheLibraryAndDesigns(t *testing.T) {
	t.Parallel()
	s, _ := newServerWith(t, Config{Token: testToken})
	ctx := context.Background()
	cell := `{"id":"guard-test-cell","name":"Invented test cell","rated_v":2.7,"capacitance_f":100,"esr_ohm":0.009}`
	design, err := os.ReadFile("../testdata/ups-ride-through.json")
	if err != nil {
		t.Fatal(err)
	}
	saved := `{"name":"guarded","design":` + string(design) + `}`
	bearer := map[string]string{"Authorization": "Bearer " + testToken}

	rec := serve(s, request("POST", "/api/v1/cells", cell, "application/json", nil))
	wantStatus(t, rec, http.StatusUnauthorized)
	if _, err := s.store.GetCell(ctx, "guard-test-cell"); err == nil {
		t.Fatal("a cell was stored without the token")
	}
	rec = serve(s, request("POST", "/api/v1/designs", saved, "application/json", nil))
	wantStatus(t, rec, http.StatusUnauthorized)
	if list, err := s.store.ListDesigns(ctx); err != nil || len(list) != 0 {
		t.Fatalf("designs stored without the token: %d, %v", len(list), err)
	}

	rec = serve(s, request("POST", "/api/v1/cells", cell, "application/json", bearer))
	wantStatus(t, rec, http.StatusCreated)
	rec = serve(s, request("POST", "/api/v1/designs", saved, "application/json", bearer))
	wantStatus(t, rec, http.StatusCreated)

	// The browser's delete button without the cookie: the unlock page, and
	// the cell stays.
	rec = serve(s, request("POST", "/library/guard-test-cell/delete", "", "", map[string]string{"Accept": "text/html"}))
	wantStatus(t, rec, http.StatusUnauthorized)
	if parse(t, rec).Find("[data-testid=unlock]").Length() != 1 {
		t.Errorf("no unlock page:\n%s", rec.Body)
	}
	if _, err := s.store.GetCell(ctx, "guard-test-cell"); err != nil {
		t.Fatalf("the cell went without the token: %v", err)
	}
	rec = serve(s, request("DELETE", "/api/v1/cells/guard-test-cell", "", "", map[string]string{"Authorization": bearer["Authorization"], "If-Match": "*"}))
	wantStatus(t, rec, http.StatusNoContent)
}

// Forwarding headers are believed only with Config.TrustProxy: without it
// a client's X-Forwarded-Proto cannot make the cookie Secure (a cookie the
// browser then never sends over the plain HTTP it really uses) and its
// X-Forwarded-For cannot put another address in the log; behind a trusted
// proxy both are taken (from a proxy on a private address, echo's
// default trust ranges).
func TestForwardingHeadersNeedTrustProxy(t *testing.T) {
	t.Parallel()
	fwd := map[string]string{"X-Forwarded-Proto": "https", "X-Forwarded-For": "203.0.113.7"}
	for _, trust := range []bool{false, true} {
		t.Run(fmt.Sprint("trust=", trust), func(t *testing.T) {
			t.Parallel()
			s, logs := newServerWith(t, Config{Token: testToken, TrustProxy: trust})
			req := request("POST", "/unlock", url.Values{"token": {testToken}}.Encode(), "", fwd)
			req.RemoteAddr = "10.0.0.2:40000"
			rec := serve(s, req)
			wantStatus(t, rec, http.StatusSeeOther)
			if c := rec.Result().Cookies(); len(c) != 1 || c[0].Secure != trust {
				t.Errorf("cookies %+v, want one cookie with Secure %v", c, trust)
			}
			req = request("POST", "/unlock", url.Values{"token": {"wrong-token-guess"}}.Encode(), "", fwd)
			req.RemoteAddr = "10.0.0.2:40000"
			wantStatus(t, serve(s, req), http.StatusUnauthorized)
			want, not := "remote=10.0.0.2", "remote=203.0.113.7"
			if trust {
				want, not = not, want
			}
			if !strings.Contains(logs.String(), want) || strings.Contains(logs.String(), not) {
				t.Errorf("log names the wrong client (want %s):\n%s", want, logs)
			}
		})
	}
}
