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
	"capbank/web/store"
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
	fromBodyOrParts                     // by the body's media type: a JSON design file, or multipart/form-data with the parts design and profile (see designParts)
)

// profilePart is the multipart part that carries a logged profile CSV in
// place of the design's load steps, and the field its problems name.
const profilePart = "profile"

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
	var data, profile []byte
	var err error
	if src == fromBodyOrParts {
		mt, _, _ := mime.ParseMediaType(r.Header.Get(echo.HeaderContentType))
		switch mt {
		case "", "application/json", "text/json":
			src = fromBody
		case "multipart/form-data":
			data, profile, err = designParts(r)
		default:
			return nil, nil, unsupportedMedia(r, "application/json (a design file) or multipart/form-data (the parts design and profile)")
		}
	}
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
	if profile != nil {
		// The part replaces the load's steps or profile, as capbank size
		// --profile does; a profile_csv the design names is this part.
		d.Load.Steps, d.Load.ProfileCSVText = nil, ""
		if d.Load.ProfileCSV == "" {
			d.Load.ProfileCSV = profilePart
		}
		d.Load.AttachProfileFile(string(profile))
	}
	if d.WantsLibrary() {
		recs, err := s.libraryCells(r.Context(), store.CellFilter{})
		if err != nil {
			return nil, nil, err
		}
		cells := make([]sizing.Cell, len(recs))
		for i := range recs {
			cells[i] = recs[i].Cell
		}
		d.UseLibrary(cells)
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
	data, err := share.DecodePosted(tok)
	if err != nil {
		return nil, badLink(err)
	}
	return data, nil
}

// designParts reads a multipart/form-data body of two parts, each a file or
// a plain field: design, the design file (JSON), and profile, a logged
// profile CSV (optional). The server reads no file a design names: a
// design's load.profile_csv is sent as the profile part instead.
func designParts(r *http.Request) (design, profile []byte, err error) {
	mr, err := r.MultipartReader()
	if err != nil {
		return nil, nil, malformed(sizing.ValidationError{{Field: "body", Rule: "multipart", Message: "is not a readable multipart/form-data body: " + err.Error()}})
	}
	for {
		part, err := mr.NextPart()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			var mbe *http.MaxBytesError
			if errors.As(err, &mbe) {
				return nil, nil, err
			}
			return nil, nil, malformed(sizing.ValidationError{{Field: "body", Rule: "multipart", Message: "could not be read whole: " + err.Error()}})
		}
		name := part.FormName()
		var into *[]byte
		switch name {
		case "design":
			into = &design
		case profilePart:
			into = &profile
		default:
			return nil, nil, malformed(sizing.ValidationError{{Field: name, Rule: "part", Message: "is not a part capbank reads; send the parts design (the design file) and profile (a logged profile CSV)"}})
		}
		if *into != nil {
			return nil, nil, malformed(sizing.ValidationError{{Field: name, Rule: "part", Message: "is sent twice; send it once"}})
		}
		b, err := io.ReadAll(part)
		if err != nil {
			var mbe *http.MaxBytesError
			if errors.As(err, &mbe) {
				return nil, nil, err
			}
			return nil, nil, malformed(sizing.ValidationError{{Field: name, Rule: "read", Message: "could not be read; send the whole file"}})
		}
		if b == nil {
			b = []byte{}
		}
		*into = b
	}
	if design == nil {
		return nil, nil, malformed(sizing.ValidationError{{Field: "design", Rule: "required", Message: "is missing: send the design file as the part design, and a logged profile CSV as the part profile"}})
	}
	return design, profile, nil
}

// partFields names the profile part in the problems of a profile it
// carried, which sizing names after the design's load.profile_csv.
func partFields(d *sizing.Design, err error) error {
	var ve sizing.ValidationError
	if d.Load.ProfileCSV != profilePart || !errors.As(err, &ve) {
		return err
	}
	for i := range ve {
		if ve[i].Field == "load.profile_csv" {
			ve[i].Field = profilePart
		}
	}
	return ve
}
