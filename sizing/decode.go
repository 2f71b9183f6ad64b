package sizing

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strings"
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
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	var d Design
	if err := dec.Decode(&d); err != nil {
		return nil, decodeError(err, data)
	}
	if dec.More() {
		return nil, ValidationError{{Field: "design", Rule: "json", Message: "has data after the closing brace; a design file holds one JSON object"}}
	}
	return &d, nil
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
		return ValidationError{{Field: strings.Trim(name, `"`), Rule: "unknown",
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
