package web

import (
	"errors"
	"fmt"
	"net/http"
	"net/http/httptest"
	"testing"
	"time"

	"github.com/labstack/echo/v4"

	"capbank/sizing"
	"capbank/web/fault"
	"capbank/web/store"
)

// The error table, walked: every failure the web answers — its own
// constructors and the store's, sizing's, echo's and net/http's errors —
// classifies to a code whose HTTP status (fault's one table) the answer
// carries, with a problem type, a title and words; and every code of the
// table is reached by at least one of them (a storage fault needs a real
// disk error: TestFullDiskIsAClearErrorAtWrite in cmd/capbank). An error
// nobody classified is 500 with nothing of its text shown.
func TestErrorTable(t *testing.T) {
	t.Parallel()
	req := httptest.NewRequest(http.MethodPost, "/api/v1/cells", nil)
	req.Header.Set("Content-Type", "text/plain")
	ve := sizing.ValidationError{{Field: "window.max_v", Rule: "gt", Message: "must be more than 0"}}
	cases := []struct {
		name string
		err  error
		code fault.Code
		typ  string
	}{
		{"malformed", malformed(ve), fault.Malformed, typeMalformed},
		{"form", formUnreadable(errors.New("bad boundary")), fault.Malformed, typeBadForm},
		{"export", exportRefused("cell", "is not a candidate"), fault.Invalid, typeNoExport},
		{"link", badLink(errors.New("share link: not base64")), fault.Malformed, typeBadLink},
		{"deadline", pastDeadline(time.Second, false), fault.Unavailable, typeDeadline},
		{"compute busy", computeBusy(2 * time.Second), fault.Unavailable, typeBusy},
		{"no fit", noFit("has 501 load steps"), fault.Invalid, typeNoFit},
		{"cell JSON", badCellJSON("unexpected end"), fault.Malformed, typeMalformed},
		{"params", badParams(ve), fault.Invalid, typeBadQuery},
		{"media type", unsupportedMedia(req, "application/json"), fault.MediaType, typeMediaType},
		{"cross origin", crossOrigin(errors.New("origin mismatch")), fault.Forbidden, typeCrossOrigin},
		{"store busy", fmt.Errorf("save: %w", store.ErrBusy), fault.Unavailable, typeBusy},
		{"not found", fmt.Errorf("cell x: %w", store.ErrNotFound), fault.NotFound, typeNotFound},
		{"exists", fmt.Errorf("cell x: %w", store.ErrExists), fault.Conflict, typeConflict},
		{"read-only", fmt.Errorf("cell x: %w", store.ErrReadOnly), fault.Conflict, typeConflict},
		{"bad cell", fmt.Errorf("%w: %w", store.ErrInvalid, ve), fault.Invalid, typeBadCell},
		{"bad query", fmt.Errorf("%w: q is too long", store.ErrInvalid), fault.Invalid, typeBadQuery},
		{"no store", errNoStore, fault.Unavailable, typeNoStore},
		{"database down", fmt.Errorf("save: %w: connection refused", store.ErrUnavailable), fault.Unavailable, typeDBDown},
		{"stale", fmt.Errorf("save: %w", &store.StaleError{What: "design 4", Current: 7}), fault.Stale, typeStale},
		{"no If-Match", ifMatchRequired("design"), fault.PreconditionRequired, typeNeedMatch},
		{"too large", &http.MaxBytesError{Limit: MaxBodyBytes}, fault.TooLarge, typeTooLarge},
		{"invalid design", ve, fault.Invalid, typeInvalid},
		{"not finite", fmt.Errorf("%w: usable energy", sizing.ErrNotFinite), fault.Invalid, typeUnsizable},
		{"no route", echo.ErrNotFound, fault.NotFound, typeHTTP},
		{"method", echo.ErrMethodNotAllowed, fault.MethodNotAllowed, typeHTTP},
		{"echo 415", echo.ErrUnsupportedMediaType, fault.MediaType, typeMediaType},
		{"echo 413", echo.ErrStatusRequestEntityTooLarge, fault.TooLarge, typeTooLarge},
		{"echo 401", echo.ErrUnauthorized, fault.Unauthorized, typeHTTP},
		{"panic", errPanic, fault.Internal, typeHTTP},
		{"unknown", errors.New("secret detail"), fault.Internal, typeHTTP},
	}
	reached := map[fault.Code]bool{}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			fe := classify(c.err)
			p := problemFor(c.err)
			reached[fe.Code] = true
			if fe.Code != c.code || p.Status != fault.HTTPStatus(c.code) || p.Type != c.typ {
				t.Errorf("code %s, status %d, type %s; want %s, %d, %s", fe.Code, p.Status, p.Type, c.code, fault.HTTPStatus(c.code), c.typ)
			}
			if p.Title == "" || p.Detail == "" && c.code != fault.Unauthorized {
				t.Errorf("problem %+v lacks a title or words", p)
			}
		})
	}
	for _, code := range fault.Codes() {
		if !reached[code] {
			t.Errorf("no failure of the web classifies to %s", code)
		}
	}
	if p := problemFor(errors.New("secret detail")); p.Status != 500 || p.Detail == "secret detail" {
		t.Errorf("an unknown error answers %+v; want 500 without its text", p)
	}
}
