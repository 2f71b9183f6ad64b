package web

import (
	"errors"
	"strconv"
	"strings"

	"github.com/labstack/echo/v4"

	"capbank/web/store"
)

// Every cell and saved design has a version (store); the API gives it as
// a strong ETag, "N", and a change to one (PUT, PATCH, DELETE) must name
// the version it was made on in If-Match: a stale one is 412 with the
// current version as the ETag, a missing one 428. If-Match: * changes
// whatever the version.

// etag is the ETag of version v.
func etag(v int64) string { return `"` + strconv.FormatInt(v, 10) + `"` }

// setETag sets the answer's ETag to version v.
func setETag(c echo.Context, v int64) {
	if v > 0 {
		c.Response().Header().Set("ETag", etag(v))
	}
}

// ifMatch is the version the request's If-Match names: 0 for "*" (any);
// a 428 when there is none, a 400 when it names no version. what names
// the record ("cell", "saved design") in the message.
func ifMatch(c echo.Context, what string) (int64, error) {
	h := strings.TrimSpace(c.Request().Header.Get("If-Match"))
	if h == "" {
		return 0, ifMatchRequired(what)
	}
	if h == "*" {
		return 0, nil
	}
	return parseVersion(h)
}

// parseVersion reads a version from an ETag as capbank gives it ("3"),
// accepting W/"3" and a bare 3 too.
func parseVersion(h string) (int64, error) {
	t := strings.TrimPrefix(strings.TrimSpace(h), "W/")
	t = strings.Trim(t, `"`)
	v, err := strconv.ParseInt(t, 10, 64)
	if err != nil || v < 1 {
		return 0, badIfMatch(h)
	}
	return v, nil
}

// staleAnswer sets the ETag of a write refused as stale to the record's
// current version, and returns err for the problem document.
func staleAnswer(c echo.Context, err error) error {
	var stale *store.StaleError
	if errors.As(err, &stale) {
		setETag(c, stale.Current)
	}
	return err
}
