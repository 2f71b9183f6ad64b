package sizing

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strings"
	"unicode/utf8"
)

// DecodeDesign reads a design file (JSON) strictly: unknown keys, a value of
// the wrong type, trailing data or a truncated file are errors. A decoding
// problem comes back as a ValidationError naming the field path where one is
// known, so the command line and the web report it like any other problem.
// DecodeDesign does not validate; call Validate next.
func DecodeDesign(r io.Reader) (*Design, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, ValidationError{{Field: "design", Rule: "read", Message: "could not be read: " + err.Error()}}
	}
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf")) // a UTF-8 byte-order mark some editors write
	if bytes.HasPrefix(data, []byte("\xff\xfe")) || bytes.HasPrefix(data, []byte("\xfe\xff")) {
		return nil, ValidationError{{Field: "design", Rule: "encoding", Message: "is UTF-16 text; save the design file as UTF-8"}}
	}
	if !utf8.Valid(data) {
		at := 0
		for at < len(data) {
			r, n := utf8.DecodeRune(data[at:])
			if r == utf8.RuneError && n <= 1 {
				break
			}
			at += n
		}
		line, col := lineCol(data, int64(at))
		return nil, ValidationError{{Field: "design", Rule: "encoding", Message: fmt.Sprintf(
			"is not valid UTF-8 at line %d, column %d (byte %d); save the design file as UTF-8", line, col, at)}}
	}
	data, refs := cellReferences(data)
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	var d Design
	if err := dec.Decode(&d); err != nil {
		return nil, decodeError(err, data)
	}
	if dec.More() {
		return nil, ValidationError{{Field: "design", Rule: "json", Message: "has data after the closing brace; a design file holds one JSON object"}}
	}
	for _, i := range refs {
		if i < len(d.Cells) {
			d.Cells[i].libraryRef = true
		}
	}
	return &d, nil
}

// cellReferences finds the entries of "cells" that are a JSON string (a
// library cell's id) and writes each as {"id": …} so the strict decode can
// read it; it returns the rewritten file and the indices. A file it cannot
// read this way is returned unchanged, for the strict decode to report.
func cellReferences(data []byte) ([]byte, []int) {
	if !bytes.Contains(data, []byte(`"cells"`)) {
		return data, nil
	}
	var top map[string]json.RawMessage
	if json.Unmarshal(data, &top) != nil {
		return data, nil
	}
	var cells []json.RawMessage
	if json.Unmarshal(top["cells"], &cells) != nil {
		return data, nil
	}
	var refs []int
	for i, c := range cells {
		var id string
		if len(c) > 0 && c[0] == '"' && json.Unmarshal(c, &id) == nil {
			cells[i], _ = json.Marshal(map[string]string{"id": id})
			refs = append(refs, i)
		}
	}
	if len(refs) == 0 {
		return data, nil
	}
	top["cells"], _ = json.Marshal(cells)
	out, err := json.Marshal(top)
	if err != nil {
		return data, nil
	}
	return out, refs
}

func decodeError(err error, data []byte) error {
	var typeErr *json.UnmarshalTypeError
	var syntaxErr *json.SyntaxError
	switch {
	case errors.As(err, &typeErr):
		field := typeErr.Field
		if field == "" {
			field = "design"
		}
		return ValidationError{{Field: field, Rule: "type",
			Message: fmt.Sprintf("must be %s, not a JSON %s", goTypeWord(typeErr.Type.String()), typeErr.Value)}}
	case errors.As(err, &syntaxErr):
		line, col := lineCol(data, syntaxErr.Offset)
		return ValidationError{{Field: "design", Rule: "json",
			Message: fmt.Sprintf("is not valid JSON at line %d, column %d: %s", line, col, strings.TrimPrefix(syntaxErr.Error(), "json: "))}}
	case errors.Is(err, io.EOF):
		return ValidationError{{Field: "design", Rule: "json", Message: "is empty; a design file holds one JSON object"}}
	case errors.Is(err, io.ErrUnexpectedEOF):
		return ValidationError{{Field: "design", Rule: "json", Message: "ends too early (truncated JSON)"}}
	}
	msg := strings.TrimPrefix(err.Error(), "json: ")
	if name, ok := strings.CutPrefix(msg, "unknown field "); ok {
		name = strings.Trim(name, `"`)
		if name == "" {
			return ValidationError{{Field: "design", Rule: "unknown", Message: `has an empty key ""; every key must be a design key from the README`}}
		}
		return ValidationError{{Field: name, Rule: "unknown",
			Message: "is not a design key; check its spelling against the design-file format in the README"}}
	}
	return ValidationError{{Field: "design", Rule: "json", Message: msg}}
}

func goTypeWord(t string) string {
	t = strings.TrimPrefix(t, "*")
	switch {
	case strings.HasPrefix(t, "float"):
		return "a number"
	case strings.HasPrefix(t, "int"):
		return "a whole number"
	case t == "string":
		return "a string"
	case t == "bool":
		return "true or false"
	case strings.HasPrefix(t, "[]"):
		return "a list"
	}
	return "an object"
}

func lineCol(data []byte, offset int64) (line, col int) {
	if offset > int64(len(data)) {
		offset = int64(len(data))
	}
	line = 1 + bytes.Count(data[:offset], []byte("\n"))
	col = int(offset) - bytes.LastIndexByte(data[:offset], '\n')
	return line, col
}
