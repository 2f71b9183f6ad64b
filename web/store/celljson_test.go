package store

import (
	"context"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// goTypeName matches the wording of encoding/json's errors, which name Go
// types (json.RawMessage, sizing.Cell, float64) that a user never sees.
var goTypeName = regexp.MustCompile(`Go (value|struct)|of type|json\.|sizing\.|float64|\[\]|unmarshal`)

// A cells JSON file of the wrong shape is refused as a whole with what the
// shape should be, and a cell of the wrong shape or with a value of the
// wrong kind is a rejected row naming the key, all in plain words.
func TestImportCellsJSONShapes(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	s := mustOpen(t, filepath.Join(t.TempDir(), FileName))
	for _, c := range []struct {
		name, in string
		// file is in the file's error, row in the first row's reason.
		file, row string
	}{
		{"one cell, not a list", `{"id":"x","rated_v":2.7}`, "looks like a single cell; put it in a list, [ {…} ]", ""},
		{"cells an object", `{"cells": {"a": 1}}`, `has "cells" as a JSON object, not a list`, ""},
		{"an object without cells", `{"items": []}`, `without a "cells" key`, ""},
		{"a key beside cells", `{"cells": [], "version": 1}`, `has the key "version" beside "cells"`, ""},
		{"a string", `"cells"`, "is a JSON string, not a list of cells", ""},
		{"null", `null`, "is null, not a list of cells", ""},
		{"empty", " \n", "is empty", ""},
		{"not JSON", "[\n  {\"id\": x}\n]", "is not valid JSON at line 2, column 10", ""},
		{"truncated", `[{"id": "a"`, "ends too early", ""},
		{"a number for a cell", `[42]`, "", "must be a cell, an object {"},
		{"a list for a cell", `[[]]`, "", "not a JSON list"},
		{"null for a cell", `[null]`, "", "not null"},
		{"text for a number", `[{"id":"a","rated_v":"2.7","capacitance_f":10,"esr_ohm":0.1}]`, "", "rated_v: must be a number, not a JSON string"},
		{"an object for a number", `{"cells":[{"id":"a","rated_v":{},"capacitance_f":10,"esr_ohm":0.1}]}`, "", "rated_v: must be a number, not a JSON object"},
		{"a number for text", `[{"id":7,"rated_v":2.7,"capacitance_f":10,"esr_ohm":0.1}]`, "", "id: must be a string, not a JSON number"},
		{"a number too large", `[{"id":"a","rated_v":1e400,"capacitance_f":10,"esr_ohm":0.1}]`, "", "rated_v: is too large a number (1e400)"},
		{"unknown key", `[{"id":"a","rated_v":2.7,"capacitance_f":10,"esr_ohm":0.1,"esr":1}]`, "", `esr: is not a cell key`},
	} {
		rep, err := s.ImportCellsJSON(ctx, strings.NewReader(c.in), ImportAdd)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		reason := ""
		if len(rep.Rows) > 0 {
			reason = rep.Rows[0].Reason
		}
		if rep.Imported || !strings.Contains(rep.Error, c.file) || !strings.Contains(reason, c.row) {
			t.Errorf("%s: imported %v, file %q, row %q; want file %q, row %q", c.name, rep.Imported, rep.Error, reason, c.file, c.row)
		}
		if c.file != "" && !strings.Contains(rep.Error, CellsFileShape) && c.file != "ends too early" && !strings.HasPrefix(c.file, "is not valid JSON") {
			t.Errorf("%s: %q does not say what a cells JSON file is", c.name, rep.Error)
		}
		if goTypeName.MatchString(rep.Error + reason) {
			t.Errorf("%s: a Go type in %q", c.name, rep.Error+reason)
		}
	}
}

// DecodeCell, the one reader of a cell's JSON, says what is wrong in words.
func TestDecodeCell(t *testing.T) {
	t.Parallel()
	c, err := DecodeCell([]byte("\ufeff" + `{"id":"a","rated_v":2.7,"capacitance_f":10,"esr_ohm":0.1}`))
	if err != nil || c.ID != "a" || c.RatedV != 2.7 {
		t.Fatalf("a good cell: %+v, %v", c, err)
	}
	for in, want := range map[string]string{
		`[{"id":"a"}]`:              "must be a cell, an object",
		`{"id":"a"} {"id":"b"}`:     "has data after the closing brace",
		`{"id":"a","mass_kg":true}`: "mass_kg: must be a number, not true or false",
		`{"id":"a","capacitance_f"`: "ends too early",
		``:                          "is empty",
		`{"id":"a","MASS":1}`:       `MASS: is not a cell key`,
		`{"capacitance_tolerance_pct":[-10,"x"]}`: "capacitance_tolerance_pct[1]: must be a number, not a JSON string",
	} {
		_, err := DecodeCell([]byte(in))
		if err == nil || !strings.Contains(err.Error(), want) || goTypeName.MatchString(err.Error()) {
			t.Errorf("%s: %v, want %q without a Go type", in, err, want)
		}
	}
}
