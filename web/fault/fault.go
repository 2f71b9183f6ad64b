// Package fault is capbank's one error vocabulary for its edges: a failure
// carries a Code, and one table maps each code to the HTTP status the web
// answers with and to the exit status of the command line. Handlers and
// commands return a *Error (or an error that the web's problem mapping
// turns into one); nothing else chooses a status.
package fault

import (
	"errors"
	"time"

	"capbank/sizing"
)

// Code is the kind of a failure, the key of the status table.
type Code string

// The codes. Each is in table; TestTable walks them all.
const (
	// Malformed: the request or file could not be read as what it claims
	// to be (not JSON, a form that does not parse, a bad share link).
	Malformed Code = "malformed"
	// Invalid: it was read, and a field breaks a rule; Fields say which.
	Invalid Code = "invalid"
	// TooLarge: the body is larger than capbank reads.
	TooLarge Code = "too_large"
	// MediaType: the body is of a type this route does not take.
	MediaType Code = "media_type"
	// NotFound: nothing at this address or with this id.
	NotFound Code = "not_found"
	// MethodNotAllowed: the address does not take that method.
	MethodNotAllowed Code = "method_not_allowed"
	// Conflict: the change clashes with what is stored (an id taken, a
	// read-only cell).
	Conflict Code = "conflict"
	// Stale: the change was made on a version of the record that is no
	// longer the current one (If-Match).
	Stale Code = "stale"
	// PreconditionRequired: a change to a versioned record without the
	// version it was made on (If-Match).
	PreconditionRequired Code = "precondition_required"
	// Unauthorized: a write without the access token.
	Unauthorized Code = "unauthorized"
	// Forbidden: a write from another site's page.
	Forbidden Code = "forbidden"
	// Unavailable: nothing is wrong with the request, but the server
	// cannot do it now (a deadline, busy, a full disk, no database).
	Unavailable Code = "unavailable"
	// Internal: a failure capbank did not expect; details go to the log.
	Internal Code = "internal"
)

// status is one row of the table: the HTTP status and the exit status.
type status struct{ http, exit int }

// table is the one map from a code to its statuses. The command line
// exits 2 for anything the user can fix in what they gave (the usage
// convention of most Unix tools), 1 for the rest.
var table = map[Code]status{
	Malformed:            {400, 2},
	Invalid:              {422, 2},
	TooLarge:             {413, 2},
	MediaType:            {415, 2},
	NotFound:             {404, 1},
	MethodNotAllowed:     {405, 1},
	Conflict:             {409, 1},
	Stale:                {412, 1},
	PreconditionRequired: {428, 1},
	Unauthorized:         {401, 1},
	Forbidden:            {403, 1},
	Unavailable:          {503, 1},
	Internal:             {500, 1},
}

// Codes lists every code, in no particular order.
func Codes() []Code {
	out := make([]Code, 0, len(table))
	for c := range table {
		out = append(out, c)
	}
	return out
}

// HTTPStatus is the status the web answers a failure of code c with; an
// unknown code is 500.
func HTTPStatus(c Code) int {
	if s, ok := table[c]; ok {
		return s.http
	}
	return 500
}

// ExitStatus is the command line's exit status for a failure of code c;
// an unknown code is 1.
func ExitStatus(c Code) int {
	if s, ok := table[c]; ok {
		return s.exit
	}
	return 1
}

// Error is a failure with its code and what the user is told: a title, a
// message that says what to do, the fields at fault, and, for a failure
// that may pass if sent again, how long to wait.
type Error struct {
	Code Code
	// Type is the problem type URI of the web's answer (RFC 9457), as
	// "/problems/busy"; empty is "about:blank".
	Type string
	// Title is short, the same for every failure of its type.
	Title string
	// Message says what went wrong and what to do, in whole sentences.
	Message string
	// Fields lists the fields at fault, by their path or form name.
	Fields sizing.ValidationError
	// RetryAfter, when set, is how long to wait before sending it again.
	RetryAfter time.Duration
	// Err is the cause, for the log and for errors.Is; never shown.
	Err error
}

func (e *Error) Error() string {
	if e.Message != "" {
		return e.Message
	}
	if e.Err != nil {
		return e.Err.Error()
	}
	return e.Title
}

func (e *Error) Unwrap() error { return e.Err }

// As returns the *Error in err's chain, or nil.
func As(err error) *Error {
	var fe *Error
	if errors.As(err, &fe) {
		return fe
	}
	return nil
}
