package web

import (
	"errors"
	"fmt"
	"math"
	"net/http"
	"strconv"
	"strings"
	"time"

	"github.com/labstack/echo/v4"

	"capbank/components"
	"capbank/sizing"
	"capbank/web/store"
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
	typeHTTP       = "about:blank"
	problemJSON    = "application/problem+json"
	problemCharset = problemJSON + "; charset=utf-8"
)

// malformedError is a design file that could not be decoded: not JSON, a
// key that is not a design key, a value of the wrong type.
type malformedError struct{ errs sizing.ValidationError }

func (e *malformedError) Error() string { return e.errs.Error() }

// formError is a form body the server could not read.
type formError struct{ err error }

func (e *formError) Error() string { return "the form could not be read: " + e.err.Error() }
func (e *formError) Unwrap() error { return e.err }

// errPanic is what a recovered panic becomes.
var errPanic = errors.New("panic in handler")

// problemFor is the one place that maps an error to its HTTP status and
// the problem document the client sees. Anything it does not know is a
// 500 with no details: the log has them.
func problemFor(err error) problem {
	var (
		mbe  *http.MaxBytesError
		mal  *malformedError
		ve   sizing.ValidationError
		fe   *formError
		xe   *exportError
		te   *tokenError
		he   *echo.HTTPError
		de   *deadlineError
		coe  *crossOriginError
		mibs = fmt.Sprintf("%d MiB", MaxBodyBytes>>20)
	)
	var (
		be  *busyError
		fse *formShowError
		cje *cellJSONError
		qe  *queryError
		mte *mediaTypeError
	)
	switch {
	case store.StorageFault(err) != "":
		return problem{Type: typeStorage, Title: "Nothing was saved", Status: http.StatusServiceUnavailable,
			Detail: "The database could not be written: " + store.StorageFault(err) + ". Nothing of this change was kept, " +
				"and what was saved before is intact. Free space on the disk or fix the data directory's permissions, then try again."}
	case store.Busy(err):
		return problem{Type: typeBusy, Title: "The database is busy; retry", Status: http.StatusServiceUnavailable, RetryAfter: busyRetryAfter,
			Detail: "The database was busy with other changes for longer than capbank waits. Nothing of this change was kept; " +
				"send it again in a few seconds."}
	case errors.Is(err, store.ErrNotFound):
		return problem{Type: typeNotFound, Title: "Not found", Status: http.StatusNotFound,
			Detail: "There is no " + strings.TrimSuffix(err.Error(), ": "+store.ErrNotFound.Error()) + " here; the list pages show what there is."}
	case errors.Is(err, store.ErrExists):
		return problem{Type: typeConflict, Title: "Already exists", Status: http.StatusConflict,
			Detail: strings.TrimSuffix(err.Error(), ": "+store.ErrExists.Error()) + " is already in the library: choose another id, or edit the one there."}
	case errors.Is(err, store.ErrReadOnly):
		return problem{Type: typeConflict, Title: "Read-only", Status: http.StatusConflict,
			Detail: strings.TrimSuffix(err.Error(), ": "+store.ErrReadOnly.Error()) + "."}
	case errors.Is(err, store.ErrInvalid) && errors.As(err, &ve):
		return problem{Type: typeBadCell, Title: "The cell is invalid", Status: http.StatusUnprocessableEntity,
			Detail: fmt.Sprintf("%d %s to fix, each named by its field.", len(ve), plural(len(ve), "problem", "problems")), Errors: ve}
	case errors.Is(err, store.ErrInvalid):
		return problem{Type: typeBadQuery, Title: "Not accepted", Status: http.StatusUnprocessableEntity,
			Detail: strings.TrimPrefix(err.Error(), store.ErrInvalid.Error()+": ") + "."}
	case errors.Is(err, errNoStore):
		return problem{Type: typeNoStore, Title: "No database", Status: http.StatusServiceUnavailable,
			Detail: errNoStore.Error() + "; run it with a data directory (capbank serve --data DIR)."}
	case errors.As(err, &cje):
		return problem{Type: typeMalformed, Title: "The cell could not be read", Status: http.StatusBadRequest,
			Detail: "The body is not one cell's JSON: " + cje.msg + ".",
			Errors: []sizing.FieldError{{Field: "cell", Rule: "decode", Message: cje.msg}}}
	case errors.As(err, &qe):
		return problem{Type: typeBadQuery, Title: "A parameter is invalid", Status: http.StatusUnprocessableEntity,
			Detail: fmt.Sprintf("%d %s to fix, each named in errors.", len(qe.errs), plural(len(qe.errs), "problem", "problems")), Errors: qe.errs}
	case errors.As(err, &mte):
		return problem{Type: typeMediaType, Title: "Unsupported Media Type", Status: http.StatusUnsupportedMediaType,
			Detail: "Send the body as " + mte.want + "."}
	case errors.As(err, &mbe):
		return problem{Type: typeTooLarge, Title: "Request too large", Status: http.StatusRequestEntityTooLarge,
			Detail: "The request body is larger than " + mibs + ", the most capbank reads; send a smaller design or profile file."}
	case errors.As(err, &mal):
		return problem{Type: typeMalformed, Title: "The design file could not be read", Status: http.StatusBadRequest,
			Detail: "The body is not a design file: fix the JSON named in errors.", Errors: mal.errs}
	case errors.As(err, &ve):
		return problem{Type: typeInvalid, Title: "The design is invalid", Status: http.StatusUnprocessableEntity,
			Detail: fmt.Sprintf("%d %s to fix, each named by its field path.", len(ve), plural(len(ve), "problem", "problems")), Errors: ve}
	case errors.Is(err, sizing.ErrNotFinite):
		return problem{Type: typeUnsizable, Title: "The design could not be sized", Status: http.StatusUnprocessableEntity,
			Detail: "The arithmetic for this design went beyond the range of numbers capbank computes with; check for extreme values. " + err.Error()}
	case errors.As(err, &xe):
		return problem{Type: typeNoExport, Title: "This export cannot be made", Status: http.StatusUnprocessableEntity,
			Detail: xe.Error(), Errors: []sizing.FieldError{{Field: xe.field, Rule: "export", Message: xe.msg}}}
	case errors.As(err, &te):
		return problem{Type: typeBadLink, Title: "The design link could not be read", Status: http.StatusBadRequest,
			Detail: strings.TrimPrefix(te.Error(), "share link: ") + "."}
	case errors.As(err, &coe):
		return problem{Type: typeCrossOrigin, Title: "Cross-site request refused", Status: http.StatusForbidden,
			Detail: "This request came from a page on another site, and capbank takes no changes from other sites' pages. " +
				"Use the form on capbank's own page; scripts and command-line clients that send no Origin header are not affected."}
	case errors.As(err, &de):
		detail := "Sizing this design took longer than " + seconds(de.limit) + ", the most this server spends on one request. " +
			"Make it smaller: a shorter load profile (fewer steps or a smaller repeat) or fewer candidate cells; " +
			"or size it on the command line with capbank size, which sets no deadline."
		if de.measurement {
			detail = "Analysing this measurement log took longer than " + seconds(de.limit) + ", the most this server spends on one request. " +
				"Make the log shorter: trim it to the test itself or resample it to fewer rows; " +
				"or analyse it on the command line with capbank measure, which sets no deadline."
		}
		return problem{Type: typeDeadline, Title: "The computation took too long", Status: http.StatusServiceUnavailable, Detail: detail}
	case errors.As(err, &fse):
		return problem{Type: typeNoFit, Title: "This design does not fit the form", Status: http.StatusUnprocessableEntity,
			Detail: "The design page cannot show this design without losing part of it: the design " + fse.msg + ".",
			Errors: []sizing.FieldError{{Field: "design", Rule: "form", Message: fse.msg}}}
	case errors.As(err, &be):
		return problem{Type: typeBusy, Title: "The server is busy", Status: http.StatusServiceUnavailable, RetryAfter: be.retryAfter,
			Detail: "The server is already computing as many designs as it runs at once, and none finished within " + seconds(be.retryAfter) +
				". Nothing is wrong with the request: send it again in a moment."}
	case errors.As(err, &fe):
		return problem{Type: typeBadForm, Title: "The form could not be read", Status: http.StatusBadRequest,
			Detail: "The request body is not a readable form; reload the page and try again."}
	case errors.As(err, &he) && he.Code < 500:
		p := problem{Type: typeHTTP, Title: http.StatusText(he.Code), Status: he.Code}
		switch he.Code {
		case http.StatusNotFound:
			p.Detail = "There is nothing at this address."
		case http.StatusMethodNotAllowed:
			p.Detail = "This address does not take that method."
		case http.StatusUnsupportedMediaType:
			p.Type = typeMediaType
			p.Detail = "Send the design file as application/json."
		case http.StatusRequestEntityTooLarge:
			p.Type = typeTooLarge
			p.Detail = "The request body is larger than " + mibs + "."
		}
		if p.Title == "" {
			p.Title = "Request not accepted"
		}
		return p
	}
	return problem{Type: typeHTTP, Title: "Internal server error", Status: http.StatusInternalServerError,
		Detail: "capbank met an error it did not expect. It has been logged; please report what you did."}
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
	c.Response().Header().Set(echo.HeaderContentType, problemCharset)
	c.Response().WriteHeader(p.Status)
	return jsonEncode(c.Response(), p)
}

// wantsHTML is true for a page request from a browser.
func wantsHTML(r *http.Request) bool {
	if strings.HasPrefix(r.URL.Path, "/api/") || r.URL.Path == "/healthz" {
		return false
	}
	return strings.Contains(r.Header.Get("Accept"), "text/html")
}
