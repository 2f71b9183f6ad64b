package web

import (
	"context"
	_ "embed"
	"encoding/json"
	"io"
	"net/http"

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
	c.Response().Header().Set(echo.HeaderContentType, echo.MIMEApplicationJSONCharsetUTF8)
	c.Response().WriteHeader(http.StatusOK)
	return jsonEncode(c.Response(), rep)
}

func (s *Server) openAPI(c echo.Context) error {
	return c.Blob(http.StatusOK, "application/json; charset=utf-8", openAPIDoc)
}

// jsonEncode writes v as indented JSON, without escaping <, > and &, as
// the command line writes the report.
func jsonEncode(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}
