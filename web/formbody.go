package web

import (
	"capbank/web/form"
	"errors"
	"fmt"
	"io"
	"net/http"
	"net/url"
	"strings"

	"github.com/labstack/echo/v4"
)

// maxFormParts is the most fields a posted form may carry. The design
// form at its largest (500 steps of three fields, 50 own BOQ lines of
// five, the cell fields and picks) holds about 2 000; net/http's
// ParseMultipartForm stops at 1 000 (GODEBUG multipartmaxparts), which a
// form of ~310 steps already reaches.
const maxFormParts = 10_000

// maxFormMemory is how much of the library's import form net/http holds
// in memory; the rest of the upload goes to a temporary file it removes.
const maxFormMemory = 4 << 20

// maxFieldBytes is the longest value of a field that is not a file: the
// design carried back for stale results (maxLastGood) is the longest,
// but for the logged profile the form carries (form.ProfileField), which
// may take the whole body (MaxBodyBytes).
const maxFieldBytes = maxLastGood + 1024

// readFormBody reads a posted form, urlencoded or multipart, into
// r.PostForm and r.Form (the query's values after the body's, as
// ParseForm does) and returns its files by field name. A file input left
// empty is no file.
func readFormBody(r *http.Request) (map[string]*form.Upload, error) {
	if !strings.HasPrefix(r.Header.Get(echo.HeaderContentType), echo.MIMEMultipartForm) {
		if err := r.ParseForm(); err != nil {
			return nil, formReadError(err)
		}
		return nil, nil
	}
	mr, err := r.MultipartReader()
	if err != nil {
		return nil, formReadError(err)
	}
	vals, files := url.Values{}, map[string]*form.Upload{}
	for n := 0; ; n++ {
		part, err := mr.NextPart()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, formReadError(err)
		}
		if n >= maxFormParts {
			return nil, formReadError(fmt.Errorf("the form has more than %d fields", maxFormParts))
		}
		name := part.FormName()
		if name == "" {
			continue
		}
		if part.FileName() != "" {
			data, err := io.ReadAll(part)
			if err != nil {
				return nil, formReadError(err)
			}
			if files[name] == nil {
				files[name] = &form.Upload{Filename: part.FileName(), Data: data}
			}
			continue
		}
		limit := maxFieldBytes
		if name == form.ProfileField {
			limit = MaxBodyBytes
		}
		b, err := io.ReadAll(io.LimitReader(part, int64(limit)+1))
		if err != nil {
			return nil, formReadError(err)
		}
		if len(b) > limit {
			return nil, formReadError(fmt.Errorf("the field %q is longer than %d bytes", name, limit))
		}
		vals.Add(name, string(b))
	}
	r.PostForm = vals
	r.Form = url.Values{}
	for k, v := range vals {
		r.Form[k] = append(r.Form[k], v...)
	}
	for k, v := range r.URL.Query() {
		r.Form[k] = append(r.Form[k], v...)
	}
	return files, nil
}
