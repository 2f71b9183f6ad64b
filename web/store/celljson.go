package store

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"reflect"
	"strings"

	"capbank/sizing"
)

// CellsFileShape says in words what a cells JSON file holds.
const CellsFileShape = `a cells JSON file is a list of cells [ {…}, … ] or an object {"cells": [ … ]}`

// oneCell says in words what one cell's JSON is.
const oneCell = `a cell, an object {"id": …, "rated_v": …, "capacitance_f": …, "esr_ohm": …}`

// DecodeCell reads one design-file cell from JSON strictly: a key that is
// not a cell key, a value of the wrong kind, or anything after the cell is
// an error. Its message names the key and the kind of value wanted in
// plain words (never a Go type), and starts with the key when there is
// one: `rated_v: must be a number, not a JSON string`.
func DecodeCell(data []byte) (sizing.Cell, error) {
	var c sizing.Cell
	if bytes.Equal(bytes.TrimSpace(bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))), []byte("null")) {
		return c, errors.New("must be " + oneCell + ", not null")
	}
	if err := sizing.DecodeStrict(data, &c, "cell"); err != nil {
		return c, errors.New(strictMessage(err))
	}
	return c, nil
}

// strictMessage is sizing.DecodeStrict's problem in one line: "field:
// message", or the message alone for the document as a whole.
func strictMessage(err error) string {
	var ve sizing.ValidationError
	if !errors.As(err, &ve) || len(ve) == 0 {
		return err.Error()
	}
	fe := ve[0]
	if fe.Field == "cell" || fe.Field == "" {
		return fe.Message
	}
	return strings.TrimPrefix(fe.Field, "cell.") + ": " + fe.Message
}

// cellItems splits a cells JSON file into its cells' JSON, or says what is
// wrong with the file as a whole.
func cellItems(data []byte) ([]json.RawMessage, string) {
	trimmed := bytes.TrimSpace(data)
	if len(trimmed) == 0 {
		return nil, "is empty; " + CellsFileShape
	}
	if !json.Valid(trimmed) {
		var v any
		return nil, jsonMessage(json.Unmarshal(data, &v), data, "")
	}
	switch trimmed[0] {
	case '[':
		var items []json.RawMessage
		if err := json.Unmarshal(trimmed, &items); err != nil {
			return nil, jsonMessage(err, data, "")
		}
		return items, ""
	case '{':
		var top map[string]json.RawMessage
		if err := json.Unmarshal(trimmed, &top); err != nil {
			return nil, jsonMessage(err, data, "")
		}
		list, ok := top["cells"]
		if !ok {
			if _, id := top["id"]; id {
				return nil, "is one JSON object, which looks like a single cell; put it in a list, [ {…} ]: " + CellsFileShape
			}
			return nil, `is a JSON object without a "cells" key; ` + CellsFileShape
		}
		for k := range top {
			if k != "cells" {
				return nil, fmt.Sprintf(`has the key %q beside "cells"; `, k) + CellsFileShape
			}
		}
		if list = bytes.TrimSpace(list); len(list) == 0 || list[0] != '[' {
			return nil, `has "cells" as ` + jsonKind(list) + ", not a list; " + CellsFileShape
		}
		var items []json.RawMessage
		if err := json.Unmarshal(list, &items); err != nil {
			return nil, jsonMessage(err, data, "")
		}
		return items, ""
	}
	return nil, "is " + jsonKind(trimmed) + ", not a list of cells; " + CellsFileShape
}

// jsonKind names the kind of a JSON value in words.
func jsonKind(v []byte) string {
	if len(v) == 0 {
		return "nothing"
	}
	switch v[0] {
	case '{':
		return "a JSON object"
	case '[':
		return "a JSON list"
	case '"':
		return "a JSON string"
	case 't', 'f':
		return "true or false"
	case 'n':
		return "null"
	}
	return "a JSON number"
}

// jsonMessage says in plain words why encoding/json refused data; whole
// names the whole value for a wrong type at the top ("" for none).
func jsonMessage(err error, data []byte, whole string) string {
	var typeErr *json.UnmarshalTypeError
	var syntaxErr *json.SyntaxError
	switch {
	case errors.As(err, &typeErr):
		got := "a JSON " + typeErr.Value
		switch {
		case typeErr.Value == "array":
			got = "a JSON list"
		case typeErr.Value == "bool":
			got = "true or false"
		case strings.HasPrefix(typeErr.Value, "number "):
			n := strings.TrimPrefix(typeErr.Value, "number ")
			if typeErr.Field == "" {
				return n + " is beyond the range of numbers capbank reads"
			}
			return fmt.Sprintf("%s: %s is beyond the range of numbers capbank reads", typeErr.Field, n)
		}
		if typeErr.Field == "" {
			if whole == "" {
				whole = kindWord(typeErr.Type)
			}
			return fmt.Sprintf("must be %s, not %s", whole, got)
		}
		return fmt.Sprintf("%s: must be %s, not %s", typeErr.Field, kindWord(typeErr.Type), got)
	case errors.As(err, &syntaxErr) && strings.HasSuffix(syntaxErr.Error(), "unexpected end of JSON input"):
		return "ends too early (truncated JSON)"
	case errors.As(err, &syntaxErr):
		line, col := lineCol(data, syntaxErr.Offset-1)
		return fmt.Sprintf("is not valid JSON at line %d, column %d: %s", line, col, strings.TrimPrefix(syntaxErr.Error(), "json: "))
	case errors.Is(err, io.EOF):
		return "is empty"
	case errors.Is(err, io.ErrUnexpectedEOF):
		return "ends too early (truncated JSON)"
	}
	msg := strings.TrimPrefix(err.Error(), "json: ")
	if name, ok := strings.CutPrefix(msg, "unknown field "); ok {
		return name + " is not a cell key; check its spelling against the cell keys of the design-file format in the README"
	}
	return msg
}

// kindWord names the JSON value a Go type decodes from.
func kindWord(t reflect.Type) string {
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	switch t.Kind() {
	case reflect.Float32, reflect.Float64:
		return "a number"
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		return "a whole number"
	case reflect.String:
		return "a string"
	case reflect.Bool:
		return "true or false"
	case reflect.Slice, reflect.Array:
		return "a list"
	}
	return "an object"
}

// lineCol is the line and column, from 1, of the byte at offset (from 0).
func lineCol(data []byte, offset int64) (line, col int) {
	offset = min(max(offset, 0), int64(len(data)))
	line = 1 + bytes.Count(data[:offset], []byte("\n"))
	col = int(offset) - bytes.LastIndexByte(data[:offset], '\n')
	return line, col
}
