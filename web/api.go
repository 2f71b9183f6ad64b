package web

import (
	"context"
	_ "embed"
	"encoding/json"
	"io"
	"net/http"
	"strconv"

	"github.com/labstack/echo/v4"

	"capbank/sizing"
)

//go:embed openapi.json
var openAPIDoc []byte

// apiSize is POST /api/v1/size: the design file of `capbank size` in, the
// same report out. The design comes as a JSON body, or as
// multipart/form-data with the parts design and profile (a logged profile
// CSV in place of the load's steps, as capbank size --profile).
func (s *Server) apiSize(c echo.Context) error {
	d, _, err := s.designFrom(c, fromBodyOrParts) // a design may name a library cell by its id
	if err != nil {
		return err
	}
	rep, err := compute(s, c, func(ctx context.Context) (*sizing.Report, error) { return sizing.SizeContext(ctx, d) })
	if err != nil {
		return partFields(d, err)
	}
	return writeJSON(c, http.StatusOK, echo.MIMEApplicationJSONCharsetUTF8, rep)
}

func (s *Server) openAPI(c echo.Context) error {
	return c.Blob(http.StatusOK, "application/json; charset=utf-8", openAPIDoc)
}

// writeJSON answers v as JSON with the status and media type: compact,
// or indented as the command line writes it when the request asks with
// ?pretty=1. One encoder writes straight to the response (through gzip
// when the client asks for it and the answer is long enough). Compact is
// the default because indenting is a second pass over the encoded report:
// on the sizing answer it was a fifth of the server's time (README,
// Performance).
func writeJSON(c echo.Context, status int, ctype string, v any) error {
	c.Response().Header().Set(echo.HeaderContentType, ctype)
	c.Response().WriteHeader(status)
	return jsonEncode(c.Response(), v, wantsPretty(c))
}

// wantsPretty is true when the request's query asks for indented JSON:
// pretty given without a value, or as a true value (1, true).
func wantsPretty(c echo.Context) bool {
	vals, ok := c.QueryParams()["pretty"]
	if !ok || len(vals) == 0 {
		return false
	}
	on, err := strconv.ParseBool(vals[0])
	return vals[0] == "" || (err == nil && on)
}

// jsonEncode writes v as JSON, without escaping <, > and &, as the
// command line writes the report: indented with two spaces when indent is
// set, else compact.
func jsonEncode(w io.Writer, v any, indent bool) error {
	enc := json.NewEncoder(w)
	enc.SetEscapeHTML(false)
	if indent {
		enc.SetIndent("", "  ")
	}
	return enc.Encode(v)
}
