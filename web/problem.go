package web

import (
	"errors"
	"math"
	"net/http"
	"strconv"
	"strings"
	"time"

	"github.com/labstack/echo/v4"

	"capbank/components"
	"capbank/sizing"
	"capbank/web/fault"
)

// problem is an RFC 9457 problem document.
type problem struct {
	Type   string `json:"type"`
	Title  string `json:"title"`
	Status int    `json:"status"`
	Detail string `json:"detail,omitempty"`
	// Errors lists every problem with a field, by its path in the design
	// file.
	Errors []sizing.FieldError `json:"errors,omitempty"`
	// RetryAfter, when set, is sent as the Retry-After header (whole
	// seconds, at least one): the same request may succeed then.
	RetryAfter time.Duration `json:"-"`
}

// Problem types. The type URIs are relative references into this server;
// the OpenAPI document describes each.
const (
	typeMalformed  = "/problems/malformed-design"
	typeInvalid    = "/problems/invalid-design"
	typeUnsizable  = "/problems/unsizable-design"
	typeTooLarge   = "/problems/too-large"
	typeMediaType  = "/problems/unsupported-media-type"
	typeBadForm    = "/problems/unreadable-form"
	typeNoExport   = "/problems/cannot-export"
	typeBadLink    = "/problems/bad-share-link"
	typeDeadline   = "/problems/compute-deadline"
	typeBusy       = "/problems/busy"
	typeNoFit      = "/problems/does-not-fit-form"
	typeStorage    = "/problems/storage"
	typeNotFound   = "/problems/not-found"
	typeConflict   = "/problems/conflict"
	typeBadCell    = "/problems/invalid-cell"
	typeBadQuery   = "/problems/invalid-parameter"
	typeNoStore    = "/problems/no-store"
	typeStale      = "/problems/changed-since-opened"
	typeNeedMatch  = "/problems/if-match-required"
	typeDBDown     = "/problems/database-unavailable"
	typeHTTP       = "about:blank"
	problemJSON    = "application/problem+json"
	problemCharset = problemJSON + "; charset=utf-8"
)

// problemFor is the one place that writes an error as the problem
// document the client sees: classify gives its code and words, and fault's
// table the status.
func problemFor(err error) problem {
	fe := classify(err)
	typ := fe.Type
	if typ == "" {
		typ = typeHTTP
	}
	return problem{Type: typ, Title: fe.Title, Status: fault.HTTPStatus(fe.Code), Detail: fe.Message,
		Errors: fe.Fields, RetryAfter: fe.RetryAfter}
}

// busyRetryAfter is the Retry-After (s) of a write refused as busy: the
// queue of writes before it is seconds long at most.
const busyRetryAfter = 2 * time.Second

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// handleError is echo's error handler: it answers every failed request
// from problemFor, as a problem document for the API and for clients that
// do not ask for HTML, as an HTML page for a browser, and as the results
// status line for an htmx request.
func (s *Server) handleError(err error, c echo.Context) {
	if errors.Is(err, errClientGone) {
		return // nobody to answer
	}
	p := problemFor(err)
	if p.Status >= 500 {
		s.log.Error("request failed", "method", c.Request().Method, "path", c.Request().URL.Path, "error", err.Error())
	}
	if c.Response().Committed {
		return
	}
	if p.RetryAfter > 0 {
		c.Response().Header().Set("Retry-After", strconv.Itoa(max(1, int(math.Ceil(p.RetryAfter.Seconds())))))
	}
	r := c.Request()
	var werr error
	switch {
	case r.Method == http.MethodHead:
		werr = c.NoContent(p.Status)
	case r.Header.Get("HX-Request") == "true":
		werr = s.render(c, p.Status, components.StatusLine(p.Title+": "+p.Detail, false, true))
	case wantsHTML(r):
		werr = s.render(c, p.Status, components.ErrorPage(s.css, p.Title, p.Detail, p.Status))
	default:
		werr = writeProblem(c, p)
	}
	if werr != nil {
		s.log.Error("writing the error response", "error", werr.Error())
	}
}

func writeProblem(c echo.Context, p problem) error {
	return writeJSON(c, p.Status, problemCharset, p)
}

// wantsHTML is true for a page request from a browser.
func wantsHTML(r *http.Request) bool {
	if strings.HasPrefix(r.URL.Path, "/api/") || r.URL.Path == "/healthz" {
		return false
	}
	return strings.Contains(r.Header.Get("Accept"), "text/html")
}
