package sizing

import (
	"encoding/json"
	"errors"
	"fmt"
	"reflect"
	"strconv"
	"strings"
	"testing"
	"unsafe"
)

// strictProblem returns the one problem err holds, failing otherwise.
func strictProblem(t *testing.T, err error) FieldError {
	t.Helper()
	var ve ValidationError
	if !errors.As(err, &ve) || len(ve) != 1 {
		t.Fatalf("error %v, want a ValidationError of one problem", err)
	}
	return ve[0]
}

// TestDecodeStrictRefuses: each input breaks one rule of DecodeStrict,
// and the problem names the field path and says what to do.
func TestDecodeStrictRefuses(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name, in     string
		field, rule  string
		msgFragments []string
	}{
		{"a key twice at the top", `{"name":"a","name":"b"}`, "name", "duplicate",
			[]string{"appears twice", "line 1, column 13", "give each key once"}},
		{"a key twice in the window", "{\"window\":{\"max_v\":42,\n  \"max_v\":48}}", "window.max_v", "duplicate",
			[]string{"appears twice", "line 2, column 3"}},
		{"a key twice in a step", `{"load":{"steps":[{"rest":true,"duration_s":1},{"power_w":1,"power_w":2}]}}`,
			"load.steps[1].power_w", "duplicate", []string{"appears twice"}},
		{"an upper-case key", `{"window":{"MAX_V":42}}`, "window.MAX_V", "unknown",
			[]string{"keys are lower case", "did you mean max_v?"}},
		{"a mixed-case key in a cell", `{"cells":[{"id":"a","Rated_V":2.7}]}`, "cells[0].Rated_V", "unknown",
			[]string{"did you mean rated_v?"}},
		{"an unknown key deep down", `{"load":{"steps":[{"power":5}]}}`, "load.steps[0].power", "unknown",
			[]string{"is not a design key", "check its spelling"}},
		{"a key with a control character", "{\"na\\u0001me\":1}", `["na\x01me"]`, "unknown",
			[]string{"is not a design key"}},
		{"an empty key", `{"window":{"":1}}`, "window", "unknown", []string{`has an empty key ""`}},
		{"a string for a number, with its index", `{"load":{"steps":[{"rest":true,"duration_s":1},{"rest":true,"duration_s":"2"}]}}`,
			"load.steps[1].duration_s", "type", []string{"must be a number, not a JSON string"}},
		{"a fraction for a count", `{"load":{"repeat":2.5}}`, "load.repeat", "type",
			[]string{"must be a whole number, not a JSON number 2.5"}},
		{"a number past the float range", `{"window":{"max_v":1e309}}`, "window.max_v", "range",
			[]string{"too large a number (1e309)"}},
		{"an object where a cell id or cell goes", `{"cells":[true]}`, "cells[0]", "type",
			[]string{"must be an object, not true or false"}},
		{"a closing brace too many", `{"name":"a"}}`, "design", "json", []string{"has data after the closing brace"}},
		{"a second object", `{} {}`, "design", "json", []string{"has data after the closing brace"}},
		{"truncated", `{"window":{"max_v":42,`, "design", "json", []string{"ends too early"}},
		{"empty", "  \n", "design", "json", []string{"is empty; a design file holds one JSON object"}},
		{"a syntax error", "{\n\"name\": 'a'}", "design", "json", []string{"not valid JSON at line 2, column 9"}},
		{"UTF-16", "\xff\xfe{\x00}\x00", "design", "encoding", []string{"is UTF-16 text"}},
		{"Latin-1", "{\"name\": \"caf\xe9\"}", "design", "encoding", []string{"not valid UTF-8 at line 1, column 14"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var d Design
			p := strictProblem(t, DecodeStrict([]byte(tc.in), &d, "design"))
			if p.Field != tc.field || p.Rule != tc.rule {
				t.Errorf("%s (%s): %s; want field %s, rule %s", p.Field, p.Rule, p.Message, tc.field, tc.rule)
			}
			for _, f := range tc.msgFragments {
				if !strings.Contains(p.Message, f) {
					t.Errorf("message %q lacks %q", p.Message, f)
				}
			}
		})
	}
}

// TestDecodeStrictOtherTargets: the same rules for the bodies the web and
// the store read: one cell, a list of cells, a map, a value of any shape.
func TestDecodeStrictOtherTargets(t *testing.T) {
	t.Parallel()
	t.Run("one cell", func(t *testing.T) {
		t.Parallel()
		var c Cell
		err := DecodeStrict([]byte(`{"id":"a","rated_v":2.7,"ESR_OHM":0.01}`), &c, "cell")
		if p := strictProblem(t, err); p.Field != "ESR_OHM" || p.Message != "is not a cell key: keys are lower case; did you mean esr_ohm?" {
			t.Errorf("%+v", p)
		}
	})
	t.Run("a list of cells names each item from the root", func(t *testing.T) {
		t.Parallel()
		var cs []Cell
		err := DecodeStrict([]byte(`[{"id":"a"},{"id":"b","id":"c"}]`), &cs, "cells")
		if p := strictProblem(t, err); p.Field != "cells[1].id" || p.Rule != "duplicate" {
			t.Errorf("%+v", p)
		}
		err = DecodeStrict([]byte(`[{"id":"a"}] [{"id":"b"}]`), &cs, "cells")
		if p := strictProblem(t, err); p.Message != "has data after the closing bracket; a cells file holds one JSON list" {
			t.Errorf("%+v", p)
		}
	})
	t.Run("a map", func(t *testing.T) {
		t.Parallel()
		var m map[string]float64
		err := DecodeStrict([]byte(`{"a":1,"b":2,"a":3}`), &m, "prices")
		if p := strictProblem(t, err); p.Field != "a" || p.Rule != "duplicate" {
			t.Errorf("%+v", p)
		}
		if err := DecodeStrict([]byte(`{"a":1,"A":2}`), &m, "prices"); err != nil || m["a"] != 1 || m["A"] != 2 {
			t.Errorf("map keys that differ in case: %v, %v", m, err)
		}
	})
	t.Run("any shape", func(t *testing.T) {
		t.Parallel()
		var x any
		err := DecodeStrict([]byte(`{"a":[{"b":1,"b":2}]}`), &x, "body")
		if p := strictProblem(t, err); p.Field != "a[0].b" || p.Rule != "duplicate" {
			t.Errorf("%+v", p)
		}
	})
	t.Run("not a pointer", func(t *testing.T) {
		t.Parallel()
		var d Design
		if err := DecodeStrict([]byte(`{}`), d, "design"); err == nil || !strings.Contains(err.Error(), "non-nil pointer") {
			t.Errorf("%v", err)
		}
	})
}

// TestDecodeStrictCellReferences: a cell given as a string is a library
// reference, in a design and in a list of cells alike.
func TestDecodeStrictCellReferences(t *testing.T) {
	t.Parallel()
	var cs []Cell
	if err := DecodeStrict([]byte(`["lib-a", {"id":"inline","rated_v":2.7}, "lib-\u00e9"]`), &cs, "cells"); err != nil {
		t.Fatal(err)
	}
	if len(cs) != 3 || !cs[0].IsReference() || cs[1].IsReference() || !cs[2].IsReference() ||
		cs[0].ID != "lib-a" || cs[1].RatedV != 2.7 || cs[2].ID != "lib-é" {
		t.Errorf("%+v", cs)
	}
}

// strictSample is a type with each kind DecodeStrict handles, for the
// comparison with encoding/json.
type strictSample struct {
	strictEmbedded
	S     string             `json:"s"`
	F     float64            `json:"f"`
	F32   float32            `json:"f32"`
	I     int                `json:"i"`
	U8    uint8              `json:"u8"`
	B     bool               `json:"b"`
	P     *float64           `json:"p,omitempty"`
	L     []float64          `json:"l"`
	A     [2]int             `json:"a"`
	M     map[string]string  `json:"m"`
	Any   any                `json:"any"`
	Raw   json.RawMessage    `json:"raw"`
	Byte  []byte             `json:"byte"`
	N     *strictSample      `json:"n"`
	MP    map[string]*Window `json:"mp"`
	Skip  string             `json:"-"`
	NoTag int
}

type strictEmbedded struct {
	E string `json:"e"`
}

// TestDecodeStrictMatchesEncodingJSON: on documents that break none of its
// extra rules, DecodeStrict gives what encoding/json gives.
func TestDecodeStrictMatchesEncodingJSON(t *testing.T) {
	t.Parallel()
	docs := []string{
		`{}`,
		`null`,
		`{"s":"plain","f":-1.5e-3,"f32":3.25,"i":-42,"u8":255,"b":true,"p":2.5,"l":[1,2,3],"a":[4,5]}`,
		`{"s":"esc \" \\ \/ \b \f \n \r \t \u00e9 \ud83d\ude00 \ud800 \udc00x \ud800\u0041","e":"promoted"}`,
		`{"m":{"k":"v","K":"w"},"any":{"x":[1,"two",null,false,{"y":{}}]},"raw":{"kept": [1, 2]},"byte":"aGVsbG8="}`,
		`{"n":{"n":{"s":"deep","l":[]}},"mp":{"w":{"max_v":1,"min_v":0.5},"none":null},"NoTag":7}`,
		`{"p":null,"l":null,"m":null,"any":null,"s":null,"f":null}`,
		`{"raw":null,"byte":null,"a":null,"n":null,"mp":{"a":null},"any":[null],"u8":null}`,
		` [ ] `,
	}
	for _, doc := range docs {
		var want, got strictSample
		errWant := json.Unmarshal([]byte(doc), &want)
		errGot := DecodeStrict([]byte(doc), &got, "sample")
		if doc == ` [ ] ` {
			// A list where an object goes: both refuse it.
			if errWant == nil || errGot == nil {
				t.Errorf("%s: encoding/json %v, DecodeStrict %v; want both to refuse", doc, errWant, errGot)
			}
			continue
		}
		if errWant != nil || errGot != nil {
			t.Errorf("%s: encoding/json %v, DecodeStrict %v", doc, errWant, errGot)
			continue
		}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s:\n got %+v\nwant %+v", doc, got, want)
		}
	}
}

// FuzzDecodeStrict: DecodeStrict never panics, refuses with a named
// problem, and wherever it accepts a document encoding/json accepts it too
// and decodes it alike.
func FuzzDecodeStrict(f *testing.F) {
	f.Add([]byte(`{"s":"x","l":[1,2],"m":{"a":"b"},"any":[{"k":1}],"n":{"p":1}}`))
	f.Add([]byte(`{"a":[1,2],"raw":[true],"byte":"AA==","u8":7,"e":"\ud800"}`))
	f.Add([]byte(`{"raw":null,"n":{"raw":null,"p":null},"mp":{"k":null},"a":null}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		var got, want strictSample
		err := DecodeStrict(data, &got, "sample")
		if err != nil {
			requireFieldErrors(t, err)
			return
		}
		if err := json.Unmarshal(data, &want); err != nil {
			t.Fatalf("DecodeStrict accepted what encoding/json refuses (%v): %q", err, data)
		}
		if !reflect.DeepEqual(got, want) {
			t.Fatalf("%q:\n got %+v\nwant %+v", data, got, want)
		}
	})
}

// A long list is decoded item for item whatever its items hold (strings
// with commas, brackets and escaped quotes, nested lists and objects), and
// the slice gets room for the items left once it passes countListFrom,
// not a quarter more each time.
func TestDecodeStrictLongList(t *testing.T) {
	type item struct {
		S string         `json:"s"`
		L []float64      `json:"l"`
		M map[string]any `json:"m"`
	}
	const n = 3*countListFrom + 7
	var b strings.Builder
	b.WriteString("[")
	for i := range n {
		if i > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, `{"s": "a, [b] {c} \"d,\" \\ %d", "l": [%d, 2, 3], "m": {"k": [1, {"x": "]"}]}}`, i, i)
	}
	b.WriteString("]")
	var got []item
	if err := DecodeStrict([]byte(b.String()), &got, "items"); err != nil {
		t.Fatal(err)
	}
	// Room for n items, rounded up to the allocator's 8 KiB pages at most.
	size := int(unsafe.Sizeof(item{}))
	if len(got) != n || (cap(got)-n)*size >= 8192 {
		t.Fatalf("%d items in a slice of capacity %d, want %d with under 8 KiB to spare", len(got), cap(got), n)
	}
	// A list of 10⁵ numbers: the doublings up to countListFrom, then one
	// allocation for the rest: 18 in all, where growing by a quarter took
	// 34.
	var nums strings.Builder
	nums.WriteString("[0")
	for i := 1; i < 100_000; i++ {
		nums.WriteString("," + strconv.Itoa(i))
	}
	nums.WriteString("]")
	data := []byte(nums.String())
	allocs := testing.AllocsPerRun(3, func() {
		var xs []float64
		if err := DecodeStrict(data, &xs, "numbers"); err != nil || len(xs) != 100_000 || xs[99_999] != 99_999 {
			t.Fatalf("%d numbers, %v", len(xs), err)
		}
	})
	if allocs > 24 {
		t.Errorf("%v allocations decoding 10⁵ numbers, want at most 24 (34 growing by a quarter)", allocs)
	}
	for i, it := range got {
		if want := fmt.Sprintf(`a, [b] {c} "d," \ %d`, i); it.S != want || len(it.L) != 3 || it.L[0] != float64(i) || it.M["k"] == nil {
			t.Fatalf("item %d decoded as %+v", i, it)
		}
	}
}
