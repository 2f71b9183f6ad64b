package web

import (
	"bytes"
	"errors"
	"io"
	"net/http"

	"github.com/labstack/echo/v4"

	"capbank/sizing"
	"capbank/web/share"
)

// readBody reads a request body whole. A body over MaxBodyBytes is the
// *http.MaxBytesError (413); any other failure is a malformed body, named
// by field, asking for the whole of what ("file", "body").
func readBody(r *http.Request, field, what string) ([]byte, error) {
	data, err := io.ReadAll(r.Body)
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return nil, err
		}
		return nil, malformed(sizing.ValidationError{{Field: field, Rule: "read", Message: "could not be read; send the whole " + what}})
	}
	return data, nil
}

// decodeDesignFile decodes a design file; one that does not decode is a
// malformedError naming its fields (400).
func decodeDesignFile(data []byte) (*sizing.Design, error) {
	d, err := sizing.DecodeDesign(bytes.NewReader(data))
	if err != nil {
		var ve sizing.ValidationError
		if errors.As(err, &ve) {
			return nil, malformed(ve)
		}
		return nil, err
	}
	return d, nil
}

// postedToken is the design file a posted form carries in its share token
// d, as the page's download, save and share controls post it.
func postedToken(c echo.Context) ([]byte, error) {
	tok := c.FormValue("d")
	if tok == "" {
		if err := formParseError(c.Request()); err != nil {
			return nil, err
		}
	}
	data, err := share.Decode(tok)
	if err != nil {
		return nil, badLink(err)
	}
	return data, nil
}
