package store

import (
	"regexp"
	"strings"
	"testing"
)

// DecodeCell, the one reader of a cell's JSON, says what is wrong in words.
// goTypeName matches the wording of encoding/json's errors, which name Go
// types (json.RawMessage, sizing.Cell, float64) that a user never sees.
var goTypeName = regexp.MustCompile(`Go (value|struct)|of type|json\.|sizing\.|float64|\[\]|unmarshal`)

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
