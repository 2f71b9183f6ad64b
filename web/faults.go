package web

import (
	"errors"
	"fmt"
	"net/http"
	"strings"
	"time"

	"github.com/labstack/echo/v4"

	"capbank/sizing"
	"capbank/web/fault"
	"capbank/web/store"
)

// The web's failures: each constructor below is one problem type, with
// its code (fault's table gives the status), title and words. Handlers
// return these; classify turns the errors of the store, sizing, echo and
// net/http into them; problemFor writes any of them as the answer.

// malformed is a body or file that is not a design file (400), with the
// JSON problems named by field.
func malformed(errs sizing.ValidationError) *fault.Error {
	return &fault.Error{Code: fault.Malformed, Type: typeMalformed, Title: "The design file could not be read",
		Message: "The body is not a design file: fix the JSON named in errors.", Fields: errs}
}

// formUnreadable is a form body the server could not read (400).
func formUnreadable(err error) *fault.Error {
	return &fault.Error{Code: fault.Malformed, Type: typeBadForm, Title: "The form could not be read",
		Message: "The request body is not a readable form; reload the page and try again.", Err: err}
}

// exportRefused is an export that cannot be made from its design: a cell
// that is not a feasible candidate, a bad paper size, a bill of quantities
// when no bank carries the load (422).
func exportRefused(field, msg string) *fault.Error {
	return &fault.Error{Code: fault.Invalid, Type: typeNoExport, Title: "This export cannot be made",
		Message: field + ": " + msg, Fields: sizing.ValidationError{{Field: field, Rule: "export", Message: msg}}}
}

// badLink is a share token that does not decode, or whose design does
// not read (400).
func badLink(err error) *fault.Error {
	return &fault.Error{Code: fault.Malformed, Type: typeBadLink, Title: "The design link could not be read",
		Message: strings.TrimPrefix(err.Error(), "share link: ") + ".", Err: err}
}

// pastDeadline is a computation that ran past the compute deadline (503),
// with what to make smaller; measurement is the analysis of a measurement
// log, whose message asks for a shorter log.
func pastDeadline(limit time.Duration, measurement bool) *fault.Error {
	msg := "Sizing this design took longer than " + seconds(limit) + ", the most this server spends on one request. " +
		"Make it smaller: a shorter load profile (fewer steps or a smaller repeat) or fewer candidate cells; " +
		"or size it on the command line with capbank size, which sets no deadline."
	if measurement {
		msg = "Analysing this measurement log took longer than " + seconds(limit) + ", the most this server spends on one request. " +
			"Make the log shorter: trim it to the test itself or resample it to fewer rows; " +
			"or analyse it on the command line with capbank measure, which sets no deadline."
	}
	return &fault.Error{Code: fault.Unavailable, Type: typeDeadline, Title: "The computation took too long", Message: msg}
}

// computeBusy is a computation refused because every compute slot stayed
// taken for the queue wait (503, Retry-After).
func computeBusy(wait time.Duration) *fault.Error {
	return &fault.Error{Code: fault.Unavailable, Type: typeBusy, Title: "The server is busy", RetryAfter: wait,
		Message: "The server is already computing as many designs as it runs at once, and none finished within " + seconds(wait) +
			". Nothing is wrong with the request: send it again in a moment."}
}

// noFit is a design the form cannot show without losing part of it; the
// design file itself is fine for capbank size and the API (422). msg
// completes "the design …".
func noFit(msg string) *fault.Error {
	return &fault.Error{Code: fault.Invalid, Type: typeNoFit, Title: "This design does not fit the form",
		Message: "The design page cannot show this design without losing part of it: the design " + msg + ".",
		Fields:  sizing.ValidationError{{Field: "design", Rule: "form", Message: msg}}}
}

// badCellJSON is a cell body that is not one cell's JSON (400).
func badCellJSON(msg string) *fault.Error {
	return &fault.Error{Code: fault.Malformed, Type: typeMalformed, Title: "The cell could not be read",
		Message: "The body is not one cell's JSON: " + msg + ".",
		Fields:  sizing.ValidationError{{Field: "cell", Rule: "decode", Message: msg}}}
}

// badParams are parameters (query or body fields) that are not valid (422).
func badParams(errs sizing.ValidationError) *fault.Error {
	return &fault.Error{Code: fault.Invalid, Type: typeBadQuery, Title: "A parameter is invalid", Fields: errs,
		Message: fmt.Sprintf("%d %s to fix, each named in errors.", len(errs), plural(len(errs), "problem", "problems"))}
}

// unsupportedMedia is a body of a type the route does not take (415); what
// names what was sent and to which route, want what the route takes.
func unsupportedMedia(r *http.Request, want string) *fault.Error {
	sent := r.Header.Get(echo.HeaderContentType)
	if sent == "" {
		sent = "no Content-Type"
	}
	return &fault.Error{Code: fault.MediaType, Type: typeMediaType, Title: "Unsupported Media Type",
		Message: fmt.Sprintf("%s %s takes %s, and this request sent %s. Send the body as %s.", r.Method, r.URL.Path, want, sent, want)}
}

// crossOrigin is a write that a browser sent from another site's page (403).
func crossOrigin(err error) *fault.Error {
	return &fault.Error{Code: fault.Forbidden, Type: typeCrossOrigin, Title: "Cross-site request refused", Err: err,
		Message: "This request came from a page on another site, and capbank takes no changes from other sites' pages. " +
			"Use the form on capbank's own page; scripts and command-line clients that send no Origin header are not affected."}
}

// errPanic is what a recovered panic becomes.
var errPanic = errors.New("panic in handler")

// classify is the one place that turns any error into a *fault.Error: the
// web's own as they are; the store's, sizing's, echo's and net/http's by
// their kind; anything else Internal, with no details (the log has them).
func classify(err error) *fault.Error {
	if fe := fault.As(err); fe != nil {
		return fe
	}
	var (
		mbe *http.MaxBytesError
		ve  sizing.ValidationError
		he  *echo.HTTPError

		stale *store.StaleError
	)
	mibs := fmt.Sprintf("%d MiB", MaxBodyBytes>>20)
	switch {
	case store.StorageFault(err) != "":
		return &fault.Error{Code: fault.Unavailable, Type: typeStorage, Title: "Nothing was saved", Err: err,
			Message: "The database could not be written: " + store.StorageFault(err) + ". Nothing of this change was kept, " +
				"and what was saved before is intact. Free space on the disk or fix the data directory's permissions, then try again."}
	case store.Unavailable(err):
		return &fault.Error{Code: fault.Unavailable, Type: typeDBDown, Title: "Nothing was saved", RetryAfter: busyRetryAfter, Err: err,
			Message: "The database cannot be reached just now. Nothing of this change was kept; send it again in a few seconds, " +
				"and tell whoever runs capbank if it goes on."}
	case errors.As(err, &stale):
		return &fault.Error{Code: fault.Stale, Type: typeStale, Title: "Changed by someone else since you opened it", Err: err,
			Message: fmt.Sprintf("This %s was changed by someone else since you opened it; it is at version %d now (ETag \"%d\"). "+
				"Nothing was saved: load it again and redo the change, or save yours as a new one.", staleWhat(stale.What), stale.Current, stale.Current)}
	case store.Busy(err):
		return &fault.Error{Code: fault.Unavailable, Type: typeBusy, Title: "The database is busy; retry", RetryAfter: busyRetryAfter, Err: err,
			Message: "The database was busy with other changes for longer than capbank waits. Nothing of this change was kept; " +
				"send it again in a few seconds."}
	case errors.Is(err, store.ErrNotFound):
		return &fault.Error{Code: fault.NotFound, Type: typeNotFound, Title: "Not found", Err: err,
			Message: "There is no " + strings.TrimSuffix(err.Error(), ": "+store.ErrNotFound.Error()) + " here; the list pages show what there is."}
	case errors.Is(err, store.ErrExists):
		return &fault.Error{Code: fault.Conflict, Type: typeConflict, Title: "Already exists", Err: err,
			Message: strings.TrimSuffix(err.Error(), ": "+store.ErrExists.Error()) + " is already in the library: choose another id, or edit the one there."}
	case errors.Is(err, store.ErrReadOnly):
		return &fault.Error{Code: fault.Conflict, Type: typeConflict, Title: "Read-only", Err: err,
			Message: strings.TrimSuffix(err.Error(), ": "+store.ErrReadOnly.Error()) + "."}
	case errors.Is(err, store.ErrInvalid) && errors.As(err, &ve):
		return &fault.Error{Code: fault.Invalid, Type: typeBadCell, Title: "The cell is invalid", Fields: ve, Err: err,
			Message: fmt.Sprintf("%d %s to fix, each named by its field.", len(ve), plural(len(ve), "problem", "problems"))}
	case errors.Is(err, store.ErrInvalid):
		return &fault.Error{Code: fault.Invalid, Type: typeBadQuery, Title: "Not accepted", Err: err,
			Message: strings.TrimPrefix(err.Error(), store.ErrInvalid.Error()+": ") + "."}
	case errors.Is(err, errNoStore):
		return &fault.Error{Code: fault.Unavailable, Type: typeNoStore, Title: "No database", Err: err,
			Message: errNoStore.Error() + "; run it with a data directory (capbank serve --data DIR)."}
	case errors.As(err, &mbe):
		return &fault.Error{Code: fault.TooLarge, Type: typeTooLarge, Title: "Request too large", Err: err,
			Message: "The request body is larger than " + mibs + ", the most capbank reads; send a smaller design or profile file."}
	case errors.As(err, &ve):
		return &fault.Error{Code: fault.Invalid, Type: typeInvalid, Title: "The design is invalid", Fields: ve, Err: err,
			Message: fmt.Sprintf("%d %s to fix, each named by its field path.", len(ve), plural(len(ve), "problem", "problems"))}
	case errors.Is(err, sizing.ErrNotFinite):
		return &fault.Error{Code: fault.Invalid, Type: typeUnsizable, Title: "The design could not be sized", Err: err,
			Message: "The arithmetic for this design went beyond the range of numbers capbank computes with; check for extreme values. " + err.Error()}
	case errors.As(err, &he) && he.Code < 500:
		return httpFault(he.Code, mibs)
	}
	return &fault.Error{Code: fault.Internal, Title: "Internal server error", Err: err,
		Message: "capbank met an error it did not expect. It has been logged; please report what you did."}
}

// httpFault is echo's own refusal of a request (no route, a method the
// route does not take, a body too large for it).
func httpFault(code int, mibs string) *fault.Error {
	title := http.StatusText(code)
	if title == "" {
		title = "Request not accepted"
	}
	fe := &fault.Error{Code: fault.Malformed, Title: title}
	switch code {
	case http.StatusNotFound:
		fe.Code, fe.Message = fault.NotFound, "There is nothing at this address."
	case http.StatusMethodNotAllowed:
		fe.Code, fe.Message = fault.MethodNotAllowed, "This address does not take that method."
	case http.StatusUnsupportedMediaType:
		fe.Code, fe.Type, fe.Message = fault.MediaType, typeMediaType, "Send the design file as application/json."
	case http.StatusRequestEntityTooLarge:
		fe.Code, fe.Type, fe.Message = fault.TooLarge, typeTooLarge, "The request body is larger than "+mibs+"."
	case http.StatusUnauthorized:
		fe.Code = fault.Unauthorized
	case http.StatusForbidden:
		fe.Code = fault.Forbidden
	}
	return fe
}

// staleWhat is the record a StaleError names, without its key ("cell",
// "design").
func staleWhat(what string) string {
	kind, _, _ := strings.Cut(what, " ")
	return kind
}

// ifMatchRequired is a change to a versioned record sent without If-Match
// (428).
func ifMatchRequired(what string) *fault.Error {
	return &fault.Error{Code: fault.PreconditionRequired, Type: typeNeedMatch, Title: "If-Match required",
		Message: "A change to a " + what + " needs the version it was made on: send the ETag of your last GET in an If-Match header " +
			"(If-Match: \"3\"), so that a change made meanwhile by someone else is never overwritten."}
}

// badIfMatch is an If-Match header that names no version (400).
func badIfMatch(got string) *fault.Error {
	return &fault.Error{Code: fault.Malformed, Type: typeNeedMatch, Title: "Unreadable If-Match",
		Message: fmt.Sprintf("The If-Match header %q names no version; send the ETag of your last GET as it was given, such as \"3\".", got)}
}
