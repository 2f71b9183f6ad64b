package web

import (
	"bytes"
	"errors"
	"io"
	"mime"
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

// designSource is where a request carries its design file.
type designSource int

const (
	fromBody        designSource = iota // the body, a JSON design file
	fromPostedToken                     // a posted form's share token d
	fromQueryToken                      // the address's share token d
	fromBodyOrForm                      // by the body's media type: a JSON design file, or a form with the token d
)

// designFrom is the one intake of a design file on the web: read from src
// (a body over MaxBodyBytes is a 413, a bad share token a 400), decoded
// strictly (a malformed, 400, naming the fields) and its library ids
// resolved. It also returns the file as it came, for saving.
func (s *Server) designFrom(c echo.Context, src designSource) (*sizing.Design, []byte, error) {
	r := c.Request()
	if src == fromBodyOrForm {
		mt, _, _ := mime.ParseMediaType(r.Header.Get(echo.HeaderContentType))
		switch mt {
		case "application/json", "text/json":
			src = fromBody
		case "application/x-www-form-urlencoded", "multipart/form-data":
			src = fromPostedToken
		default:
			return nil, nil, unsupportedMedia(r, "application/json (a design file) or a form with the share token d")
		}
	}
	var data []byte
	var err error
	switch src {
	case fromBody:
		data, err = readBody(r, "design", "file")
	case fromPostedToken:
		data, err = postedToken(c)
	case fromQueryToken:
		data, err = share.Decode(c.QueryParam("d"))
		if err != nil {
			err = badLink(err)
		}
	}
	if err != nil {
		return nil, nil, err
	}
	d, err := decodeDesignFile(data)
	if err != nil {
		return nil, nil, err
	}
	d.ResolveCells(s.lookup(c))
	return d, data, nil
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
