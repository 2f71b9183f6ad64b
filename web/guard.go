package web

import (
	"crypto/hmac"
	"crypto/sha256"
	"crypto/subtle"
	"encoding/hex"
	"net/http"
	"net/url"
	"strings"
	"time"

	"github.com/labstack/echo/v4"

	"capbank/components"
)

// Who may change what: cross-site requests are refused (CSRF), and with
// an access token (Config.Token) every write needs it.

// AccessCookie is the cookie the unlock page sets in a browser that gave
// the access token.
const AccessCookie = "capbank_access"

// accessCookieAge is how long a browser stays unlocked.
const accessCookieAge = 30 * 24 * time.Hour

// Problem types of the guards.
const (
	typeCrossOrigin   = "/problems/cross-origin"
	typeTokenRequired = "/problems/token-required"
)

// guard is the server's write protection.
type guard struct {
	csrf *http.CrossOriginProtection
	// tokenSum is the SHA-256 of the access token, nil when there is none;
	// cookie the value of the access cookie, derived from the token.
	tokenSum []byte
	cookie   string
}

func newGuard(token string) *guard {
	g := &guard{csrf: http.NewCrossOriginProtection()}
	if token != "" {
		sum := sha256.Sum256([]byte(token))
		g.tokenSum = sum[:]
		// The cookie holds an HMAC of a fixed label under the token, not the
		// token itself: a copied cookie does not give the token for the API,
		// and a new token locks every browser again.
		mac := hmac.New(sha256.New, []byte(token))
		mac.Write([]byte("capbank browser write access v1"))
		g.cookie = hex.EncodeToString(mac.Sum(nil))
	}
	return g
}

// useGuards installs the cross-origin check and the access token on every
// route, and the unlock page.
func (s *Server) useGuards(e *echo.Echo, cfg Config) {
	s.guard = newGuard(cfg.Token)
	e.Use(s.refuseCrossOrigin, s.requireToken)
	e.GET("/unlock", s.getUnlock)
	e.POST("/unlock", s.postUnlock)
}

// refuseCrossOrigin refuses a POST, PUT, PATCH or DELETE that a browser
// sent from another site (Sec-Fetch-Site, or an Origin that is not this
// host), with net/http's CrossOriginProtection: a page elsewhere cannot
// make a visitor's browser change this server. Requests without those
// headers (command-line and API clients) pass.
func (s *Server) refuseCrossOrigin(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		if err := s.guard.csrf.Check(c.Request()); err != nil {
			return crossOrigin(err)
		}
		return next(c)
	}
}

// computeOnly are the POST routes that change nothing: they size, export
// or measure what the request carries, and need no token. Every other
// request that is not GET, HEAD or OPTIONS is a write.
var computeOnly = map[string]bool{
	"/": true, "/results": true, "/results/candidate": true, "/workspace": true, "/export/:format": true, "/measure": true,
	"/api/v1/size": true, "/api/v1/measure": true, "/unlock": true,
	// The add-cell form filled from a measured cell's JSON; the add itself
	// is POST /library.
	"/library/new": true,
}

// isWrite reports whether the request needs the access token: deny by
// default, so that a route added later is covered without a change here.
func isWrite(c echo.Context) bool {
	switch c.Request().Method {
	case http.MethodGet, http.MethodHead, http.MethodOptions:
		return false
	case http.MethodPost:
		return !computeOnly[c.Path()]
	}
	return true
}

// tokenState is what a request carries of the access token.
type tokenState int

const (
	tokenMissing tokenState = iota
	tokenWrong
	tokenGood
)

// check reads the token from an Authorization: Bearer header or the access
// cookie. The comparisons take the same time whatever the input.
func (g *guard) check(r *http.Request) tokenState {
	st := tokenMissing
	if auth := r.Header.Get(echo.HeaderAuthorization); auth != "" {
		scheme, tok, _ := strings.Cut(auth, " ")
		sum := sha256.Sum256([]byte(strings.TrimSpace(tok)))
		if strings.EqualFold(scheme, "Bearer") && subtle.ConstantTimeCompare(sum[:], g.tokenSum) == 1 {
			return tokenGood
		}
		st = tokenWrong
	}
	if ck, err := r.Cookie(AccessCookie); err == nil {
		if subtle.ConstantTimeCompare([]byte(ck.Value), []byte(g.cookie)) == 1 {
			return tokenGood
		}
		st = tokenWrong
	}
	return st
}

// requireToken lets a write through only with the access token, when the
// server has one.
func (s *Server) requireToken(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		g := s.guard
		if g.tokenSum == nil || !isWrite(c) {
			return next(c)
		}
		st := g.check(c.Request())
		if st == tokenGood {
			return next(c)
		}
		return s.refuseWrite(c, st)
	}
}

// refuseWrite answers a write without the token: 401 with a problem
// document and a WWW-Authenticate challenge (RFC 6750) for the API and
// other clients; the unlock page for a browser; for an htmx request, a
// redirect of the whole page to it.
func (s *Server) refuseWrite(c echo.Context, st tokenState) error {
	r := c.Request()
	next := returnPath(r)
	notice := "This server takes changes only from those who know its access token. Enter it, then do again what you did."
	switch {
	case r.Header.Get("HX-Request") == "true" && !strings.HasPrefix(r.URL.Path, "/api/"):
		c.Response().Header().Set("HX-Redirect", "/unlock?next="+url.QueryEscape(next))
		return s.render(c, http.StatusUnauthorized, components.StatusLine("Access token required: "+notice, false, true))
	case wantsHTML(r):
		return s.render(c, http.StatusUnauthorized, components.UnlockPage(components.UnlockProps{
			CSS: s.css, Next: next, Required: true, Notice: notice}))
	}
	challenge := `Bearer realm="capbank"`
	p := problem{Type: typeTokenRequired, Title: "Access token required", Status: http.StatusUnauthorized,
		Detail: "This server takes changes only with its access token: send it as Authorization: Bearer TOKEN, " +
			"the token capbank serve was started with (--token or CAPBANK_TOKEN)."}
	if st == tokenWrong {
		challenge += `, error="invalid_token"`
		p.Title = "Access token not accepted"
		p.Detail = "The access token sent is not this server's. Send the token capbank serve was started with " +
			"(--token or CAPBANK_TOKEN) as Authorization: Bearer TOKEN."
	}
	c.Response().Header().Set(echo.HeaderWWWAuthenticate, challenge)
	return writeProblem(c, p)
}

// returnPath is the local page to return to after unlocking: the page the
// request came from when it is on this server, else the design page.
func returnPath(r *http.Request) string {
	for _, ref := range []string{r.Header.Get("HX-Current-URL"), r.Referer()} {
		u, err := url.Parse(ref)
		if err != nil || ref == "" || (u.Host != "" && u.Host != r.Host) {
			continue
		}
		if p := localPath(u.RequestURI()); p != "" {
			return p
		}
	}
	return "/"
}

// localPath is p when it is a path on this server ("/library?x=1"), else
// "": never another host ("//elsewhere", "/\elsewhere", "https://…"),
// which would make the unlock page an open redirect.
func localPath(p string) string {
	if !strings.HasPrefix(p, "/") || strings.HasPrefix(p, "//") || strings.HasPrefix(p, "/\\") ||
		strings.ContainsAny(p, "\r\n\t") {
		return ""
	}
	return p
}

// canWrite reports whether the request may write: the server has no
// token, or the request carries it. Pages use it to offer the unlock page
// before a change rather than after.
func (s *Server) canWrite(c echo.Context) bool {
	return s.guard.tokenSum == nil || s.guard.check(c.Request()) == tokenGood
}

// getUnlock is GET /unlock: the token form, or what this browser holds.
func (s *Server) getUnlock(c echo.Context) error {
	next := localPath(c.QueryParam("next"))
	if next == "" {
		next = "/"
	}
	g := s.guard
	p := components.UnlockProps{CSS: s.css, Next: next, Required: g.tokenSum != nil}
	p.Unlocked = p.Required && s.canWrite(c)
	c.Response().Header().Set("Cache-Control", "no-store")
	return s.render(c, http.StatusOK, components.UnlockPage(p))
}

// postUnlock is POST /unlock: with the right token, the access cookie and
// a redirect to the page to return to; action=lock removes the cookie.
func (s *Server) postUnlock(c echo.Context) error {
	g := s.guard
	if err := formParseError(c.Request()); err != nil {
		return err
	}
	next := localPath(c.FormValue("next"))
	if next == "" {
		next = "/"
	}
	if c.FormValue("action") == "lock" {
		c.SetCookie(s.accessCookie(c, "", -1))
		return c.Redirect(http.StatusSeeOther, "/unlock")
	}
	if g.tokenSum == nil {
		return c.Redirect(http.StatusSeeOther, "/unlock")
	}
	sum := sha256.Sum256([]byte(strings.TrimSpace(c.FormValue("token"))))
	if subtle.ConstantTimeCompare(sum[:], g.tokenSum) != 1 {
		s.log.Warn("wrong access token on the unlock page", "remote", c.RealIP())
		return s.render(c, http.StatusUnauthorized, components.UnlockPage(components.UnlockProps{
			CSS: s.css, Next: next, Required: true,
			Error: "That is not this server's access token. Ask whoever started it for the token."}))
	}
	c.SetCookie(s.accessCookie(c, g.cookie, int(accessCookieAge/time.Second)))
	return c.Redirect(http.StatusSeeOther, next)
}

// accessCookie is the access cookie: HttpOnly (page scripts cannot read
// it), SameSite=Strict (no other site's page sends it), for every path,
// Secure when the request came over TLS (or, with Config.TrustProxy, the
// proxy in front says it did). maxAge < 0 deletes it.
func (s *Server) accessCookie(c echo.Context, value string, maxAge int) *http.Cookie {
	return &http.Cookie{Name: AccessCookie, Value: value, Path: "/", MaxAge: maxAge,
		HttpOnly: true, SameSite: http.SameSiteStrictMode,
		Secure: c.Request().TLS != nil || (s.trustProxy && c.Scheme() == "https")}
}
