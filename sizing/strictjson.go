package sizing

import (
	"bytes"
	"encoding"
	"encoding/base64"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"reflect"
	"strconv"
	"strings"
	"sync"
	"unicode/utf16"
	"unicode/utf8"
)

// DecodeStrict decodes the JSON document data into v, a non-nil pointer,
// more strictly than encoding/json and with every problem a ValidationError
// naming its field path (`load.steps[2].power_w`):
//
//   - a key the target type does not have is an error, and so is a key
//     that matches one only when case is ignored ("MAX_V": keys are case
//     sensitive, and the message says which key was meant);
//   - a key given twice in one object is an error (encoding/json keeps the
//     last silently);
//   - a value of the wrong JSON type, a fraction for a whole number or a
//     number out of range is an error at its path, with its index in lists;
//   - the document must be UTF-8 (a leading byte-order mark is dropped;
//     UTF-16 is refused with advice), valid JSON (an error gives the line
//     and column), one value with nothing after it.
//
// root names the document in messages: the field of problems with the
// whole document ("design: is empty"), the word in "is not a design key",
// and, for a document that is a list, the start of each item's path
// ("cells[3].esr_ohm"). A struct type of this package that may be given as a plain JSON
// string, a Cell (its library id; see Cell.IsReference), is decoded so.
// Types that implement json.Unmarshaler or encoding.TextUnmarshaler decode
// themselves, without these checks inside them; the ",string" tag option
// is not supported (no capbank type uses it). Decoding stops at the first
// problem; v may then hold part of the document. An empty root is taken
// as "document".
//
// Use it for every JSON body a user writes (a design file, a cell, a list
// of cells to import, a saved design), so that all of them obey the same
// rules:
//
//	var c sizing.Cell
//	if err := sizing.DecodeStrict(body, &c, "cell"); err != nil {
//		return err // a ValidationError: one "field: message" per problem
//	}
func DecodeStrict(data []byte, v any, root string) error {
	if root == "" {
		root = "document"
	}
	rv := reflect.ValueOf(v)
	if rv.Kind() != reflect.Pointer || rv.IsNil() {
		return fmt.Errorf("sizing: DecodeStrict needs a non-nil pointer, not %T", v)
	}
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf")) // a UTF-8 byte-order mark some editors write
	if err := checkText(data, root); err != nil {
		return err
	}
	if !json.Valid(data) {
		return syntaxProblem(data, rv.Elem().Type(), root)
	}
	d := strictDecoder{data: data, root: root}
	if k := rv.Elem().Kind(); k == reflect.Slice || k == reflect.Array {
		d.in(root, 0) // a list's items are root[0], root[1], …
	}
	return d.value(rv.Elem())
}

// checkText refuses UTF-16 and text that is not UTF-8, giving where.
func checkText(data []byte, root string) error {
	if bytes.HasPrefix(data, []byte("\xff\xfe")) || bytes.HasPrefix(data, []byte("\xfe\xff")) {
		return ValidationError{{Field: root, Rule: "encoding", Message: "is UTF-16 text; save the " + root + " file as UTF-8"}}
	}
	if utf8.Valid(data) {
		return nil
	}
	at := 0
	for at < len(data) {
		r, n := utf8.DecodeRune(data[at:])
		if r == utf8.RuneError && n <= 1 {
			break
		}
		at += n
	}
	line, col := lineCol(data, int64(at))
	return ValidationError{{Field: root, Rule: "encoding", Message: fmt.Sprintf(
		"is not valid UTF-8 at line %d, column %d (byte %d); save the %s file as UTF-8", line, col, at, root)}}
}

// syntaxProblem says why data, which json.Valid refused, is not one JSON
// value: empty, truncated, a syntax error at a line and column, or data
// after the value.
func syntaxProblem(data []byte, t reflect.Type, root string) error {
	dec := json.NewDecoder(bytes.NewReader(data))
	var raw json.RawMessage
	err := dec.Decode(&raw)
	var syntaxErr *json.SyntaxError
	switch {
	case errors.As(err, &syntaxErr):
		// Offset counts the bytes read, the offending one included.
		line, col := lineCol(data, max(0, syntaxErr.Offset-1))
		return ValidationError{{Field: root, Rule: "json",
			Message: fmt.Sprintf("is not valid JSON at line %d, column %d: %s", line, col, strings.TrimPrefix(syntaxErr.Error(), "json: "))}}
	case errors.Is(err, io.EOF):
		return ValidationError{{Field: root, Rule: "json", Message: "is empty; " + oneValue(t, root)}}
	case errors.Is(err, io.ErrUnexpectedEOF):
		return ValidationError{{Field: root, Rule: "json", Message: "ends too early (truncated JSON)"}}
	case err != nil:
		return ValidationError{{Field: root, Rule: "json", Message: strings.TrimPrefix(err.Error(), "json: ")}}
	}
	closing := "the closing brace"
	if t.Kind() == reflect.Slice || t.Kind() == reflect.Array {
		closing = "the closing bracket"
	}
	return ValidationError{{Field: root, Rule: "json", Message: "has data after " + closing + "; " + oneValue(t, root)}}
}

// oneValue says what a document of type t holds: "a design file holds one
// JSON object".
func oneValue(t reflect.Type, root string) string {
	what := "value"
	switch t.Kind() {
	case reflect.Struct, reflect.Map:
		what = "object"
	case reflect.Slice, reflect.Array:
		what = "list"
	}
	return "a " + root + " file holds one JSON " + what
}

// pathSeg is one step of a field path: a key, or an index when key is "".
type pathSeg struct {
	key   string
	index int
}

// pathString writes a field path out: `load.steps[2].power_w`.
func pathString(path []pathSeg) string {
	var b strings.Builder
	for _, p := range path {
		switch {
		case p.key == "":
			b.WriteString("[" + strconv.Itoa(p.index) + "]")
		case plainKey(p.key):
			if b.Len() > 0 {
				b.WriteByte('.')
			}
			b.WriteString(p.key)
		default:
			// A key a path cannot show as it is: quoted (control characters
			// escaped) and cut short.
			k := p.key
			if utf8.RuneCountInString(k) > 64 {
				k = string([]rune(k)[:64]) + "…"
			}
			b.WriteString("[" + strconv.Quote(k) + "]")
		}
	}
	return b.String()
}

// plainKey reports whether key can stand in a dotted path as it is.
func plainKey(key string) bool {
	if key == "" || len(key) > 64 {
		return false
	}
	for i := 0; i < len(key); i++ {
		c := key[i]
		if !(c == '_' || c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || i > 0 && c >= '0' && c <= '9') {
			return false
		}
	}
	return true
}

// strictDecoder walks a document already known to be valid JSON (so it
// never meets a syntax error) and decodes it into Go values by reflection.
type strictDecoder struct {
	data []byte
	pos  int
	root string
	path []pathSeg // where the decoder is, for messages
}

// in and out step the path into a key or an index and back.
func (d *strictDecoder) in(key string, index int) { d.path = append(d.path, pathSeg{key, index}) }
func (d *strictDecoder) out()                     { d.path = d.path[:len(d.path)-1] }

// byReference is a struct type that may be given as a JSON string naming
// it (a library cell by its id).
type byReference interface{ setReference(id string) }

var (
	unmarshalerType     = reflect.TypeFor[json.Unmarshaler]()
	textUnmarshalerType = reflect.TypeFor[encoding.TextUnmarshaler]()
	byReferenceType     = reflect.TypeFor[byReference]()
	cellListType        = reflect.TypeFor[[]Cell]()
)

func (d *strictDecoder) problem(rule, format string, a ...any) error {
	field := pathString(d.path)
	if field == "" {
		field = d.root
	}
	return ValidationError{{Field: field, Rule: rule, Message: fmt.Sprintf(format, a...)}}
}

func (d *strictDecoder) skipSpace() {
	for d.pos < len(d.data) {
		switch d.data[d.pos] {
		case ' ', '\t', '\n', '\r':
			d.pos++
		default:
			return
		}
	}
}

// next returns the first byte of the next value or separator.
func (d *strictDecoder) next() byte {
	d.skipSpace()
	if d.pos >= len(d.data) {
		return 0
	}
	return d.data[d.pos]
}

// value decodes the next JSON value into v.
func (d *strictDecoder) value(v reflect.Value) error {
	c := d.next()
	if c == 'n' && v.Kind() != reflect.Pointer {
		if u, ok := d.unmarshaler(v); ok { // as encoding/json: it reads null itself
			d.pos += len("null")
			if err := u.UnmarshalJSON([]byte("null")); err != nil {
				return d.problem("json", "could not be read: %v", err)
			}
			return nil
		}
	}
	if c == 'n' { // null: nil for pointers, maps, slices and interfaces, else no change
		d.pos += len("null")
		switch v.Kind() {
		case reflect.Pointer, reflect.Map, reflect.Slice, reflect.Interface:
			v.SetZero()
		}
		return nil
	}
	for v.Kind() == reflect.Pointer {
		if v.IsNil() {
			v.Set(reflect.New(v.Type().Elem()))
		}
		if v.Type().Implements(unmarshalerType) {
			break
		}
		v = v.Elem()
	}
	if u, ok := d.unmarshaler(v); ok {
		start := d.pos
		d.skipValue()
		if err := u.UnmarshalJSON(d.data[start:d.pos]); err != nil {
			return d.problem("json", "could not be read: %v", err)
		}
		return nil
	}
	if v.Kind() == reflect.Interface && v.NumMethod() == 0 {
		x, err := d.anyValue()
		if err != nil {
			return err
		}
		if x == nil {
			v.SetZero()
		} else {
			v.Set(reflect.ValueOf(x))
		}
		return nil
	}
	switch c {
	case '{':
		switch v.Kind() {
		case reflect.Struct:
			return d.object(v)
		case reflect.Map:
			return d.mapObject(v)
		}
		return d.mismatch(v, "object")
	case '[':
		switch v.Kind() {
		case reflect.Slice:
			return d.list(v)
		case reflect.Array:
			return d.array(v)
		}
		return d.mismatch(v, "array")
	case '"':
		return d.stringValue(v)
	case 't', 'f':
		if v.Kind() != reflect.Bool {
			return d.mismatch(v, "bool")
		}
		v.SetBool(c == 't')
		if c == 't' {
			d.pos += len("true")
		} else {
			d.pos += len("false")
		}
		return nil
	}
	return d.number(v)
}

// unmarshaler returns v's json.Unmarshaler, if v (or its address) has one.
func (d *strictDecoder) unmarshaler(v reflect.Value) (json.Unmarshaler, bool) {
	if v.Kind() == reflect.Pointer && v.Type().Implements(unmarshalerType) {
		return v.Interface().(json.Unmarshaler), true
	}
	if v.CanAddr() && v.Addr().Type().Implements(unmarshalerType) {
		return v.Addr().Interface().(json.Unmarshaler), true
	}
	return nil, false
}

// mismatch reports a value of JSON type got where v's type wants another,
// and skips it.
func (d *strictDecoder) mismatch(v reflect.Value, got string) error {
	want := typeWord(v.Type())
	if len(d.path) == 0 && want == "an object" {
		want = "a " + d.root + ", an object {…}" // the document as a whole
	}
	return d.problem("type", "must be %s, not %s", want, jsonWord(got))
}

// jsonWord names a JSON type in the words of the messages: "a JSON list",
// "true or false", "a JSON number".
func jsonWord(t string) string {
	switch t {
	case "array":
		return "a JSON list"
	case "bool":
		return "true or false"
	}
	return "a JSON " + t
}

// typeWord names what a Go type holds, in the words of the design format.
func typeWord(t reflect.Type) string {
	switch t.Kind() {
	case reflect.Float32, reflect.Float64:
		return "a number"
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
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

// object decodes a JSON object into the struct v.
func (d *strictDecoder) object(v reflect.Value) error {
	info := structInfoOf(v.Type())
	var seen uint64 // fields seen, for up to 64 fields
	var seenMore []bool
	if len(info.fields) > 64 {
		seenMore = make([]bool, len(info.fields))
	}
	d.pos++ // {
	for {
		if d.next() == '}' {
			d.pos++
			return nil
		}
		keyAt := d.pos
		kb := d.keyBytes()
		d.next() // :
		d.pos++
		i, ok := info.byName[string(kb)]
		if !ok {
			return d.unknownKey(info, string(bytes.Clone(kb)))
		}
		key := info.fields[i].name
		if seenMore != nil && seenMore[i] || seenMore == nil && seen&(1<<i) != 0 {
			line, col := lineCol(d.data, int64(keyAt))
			d.in(key, 0)
			return d.problem("duplicate", "appears twice in one object (again at line %d, column %d); give each key once", line, col)
		}
		if seenMore != nil {
			seenMore[i] = true
		} else {
			seen |= 1 << i
		}
		f := fieldByIndex(v, info.fields[i].index)
		d.in(key, 0)
		if err := d.value(f); err != nil {
			return err
		}
		d.out()
		if d.next() == ',' {
			d.pos++
		}
	}
}

// unknownKey reports a key the struct does not have: one that differs
// from a field's only in case, or any other.
func (d *strictDecoder) unknownKey(info *structInfo, key string) error {
	if key == "" {
		return d.problem("unknown", `has an empty key ""; every key must be a %s key from the README`, d.root)
	}
	d.in(key, 0)
	if name, ok := info.folded[strings.ToLower(key)]; ok {
		if name == strings.ToLower(name) {
			return d.problem("unknown", "is not a %s key: keys are lower case; did you mean %s?", d.root, name)
		}
		return d.problem("unknown", "is not a %s key: keys are case sensitive; did you mean %s?", d.root, name)
	}
	return d.problem("unknown", "is not a %s key; check its spelling against the %s keys the README lists", d.root, d.root)
}

// mapObject decodes a JSON object into the map v, whose keys are strings.
func (d *strictDecoder) mapObject(v reflect.Value) error {
	t := v.Type()
	if t.Key().Kind() != reflect.String {
		return d.problem("type", "cannot be read into a map keyed by %s", t.Key())
	}
	if v.IsNil() {
		v.Set(reflect.MakeMap(t))
	}
	seen := map[string]bool{} // keys of this object (the map may hold others)
	d.pos++                   // {
	for {
		if d.next() == '}' {
			d.pos++
			return nil
		}
		keyAt := d.pos
		key := d.stringLiteral()
		d.next() // :
		d.pos++
		k := reflect.ValueOf(key).Convert(t.Key())
		d.in(key, 0)
		if seen[key] {
			line, col := lineCol(d.data, int64(keyAt))
			return d.problem("duplicate", "appears twice in one object (again at line %d, column %d); give each key once", line, col)
		}
		seen[key] = true
		e := reflect.New(t.Elem()).Elem()
		if err := d.value(e); err != nil {
			return err
		}
		d.out()
		v.SetMapIndex(k, e)
		if d.next() == ',' {
			d.pos++
		}
	}
}

// list decodes a JSON array into the slice v, reusing its backing array.
func (d *strictDecoder) list(v reflect.Value) error {
	d.pos++ // [
	if v.IsNil() {
		v.Set(reflect.MakeSlice(v.Type(), 0, 0))
	}
	v.SetLen(0)
	counted := false
	for i := 0; ; i++ {
		if d.next() == ']' {
			d.pos++
			return nil
		}
		if v.Len() == v.Cap() {
			if !counted && i >= countListFrom {
				// A long list (a load's steps): room for the items left,
				// counted once, rather than growing by a quarter each
				// time, which allocated five times the list.
				v.Grow(d.itemsLeft())
				counted = true
			} else {
				v.Grow(1)
			}
		}
		v.SetLen(i + 1)
		e := v.Index(i)
		e.SetZero()
		d.in("", i)
		if err := d.value(e); err != nil {
			return err
		}
		d.out()
		if d.next() == ',' {
			d.pos++
		}
	}
}

// countListFrom is the length from which list counts the items left
// before it grows the slice again.
const countListFrom = 1024

// itemsLeft counts the items of the list from d.pos, the start of an item,
// to the list's closing bracket. The data passed json.Valid, so strings,
// objects and lists nest as they should.
func (d *strictDecoder) itemsLeft() int {
	n, depth := 1, 0
	for i := d.pos; i < len(d.data); i++ {
		switch d.data[i] {
		case '"':
			for i++; i < len(d.data) && d.data[i] != '"'; i++ {
				if d.data[i] == '\\' {
					i++
				}
			}
		case '[', '{':
			depth++
		case ']', '}':
			if depth == 0 {
				return n
			}
			depth--
		case ',':
			if depth == 0 {
				n++
			}
		}
	}
	return n
}

// array decodes a JSON array into the Go array v, which must have exactly
// as many items.
func (d *strictDecoder) array(v reflect.Value) error {
	d.pos++ // [
	for i := 0; ; i++ {
		if d.next() == ']' {
			d.pos++
			if i != v.Len() {
				return d.problem("len", "must have exactly %d items (got %d)", v.Len(), i)
			}
			return nil
		}
		if i >= v.Len() {
			return d.problem("len", "must have exactly %d items", v.Len())
		}
		d.in("", i)
		if err := d.value(v.Index(i)); err != nil {
			return err
		}
		d.out()
		if d.next() == ',' {
			d.pos++
		}
	}
}

// stringValue decodes a JSON string into v: a string, a struct that may be
// given by reference, a TextUnmarshaler or a []byte (base64, as
// encoding/json writes it).
func (d *strictDecoder) stringValue(v reflect.Value) error {
	if v.CanAddr() {
		if a := v.Addr(); a.Type().Implements(byReferenceType) && v.Kind() == reflect.Struct {
			a.Interface().(byReference).setReference(d.stringLiteral())
			return nil
		}
		if a := v.Addr(); a.Type().Implements(textUnmarshalerType) {
			if err := a.Interface().(encoding.TextUnmarshaler).UnmarshalText([]byte(d.stringLiteral())); err != nil {
				return d.problem("text", "could not be read: %v", err)
			}
			return nil
		}
	}
	if v.Type() == cellListType {
		if lit := d.stringLiteral(); lit != LibraryCells {
			return d.problem("type", "must be a list of cells (each a cell, or a library cell's id), or %q for every cell of the library (got %q)", LibraryCells, lit)
		}
		v.Set(reflect.ValueOf([]Cell{{ID: LibraryCells, libraryRef: true, wholeLibrary: true}}))
		return nil
	}
	switch {
	case v.Kind() == reflect.String:
		v.SetString(d.stringLiteral())
		return nil
	case v.Kind() == reflect.Slice && v.Type().Elem().Kind() == reflect.Uint8:
		b, err := base64.StdEncoding.DecodeString(d.stringLiteral())
		if err != nil {
			return d.problem("base64", "must be base64 text: %v", err)
		}
		v.SetBytes(b)
		return nil
	}
	return d.mismatch(v, "string")
}

// number decodes a JSON number into a numeric v.
func (d *strictDecoder) number(v reflect.Value) error {
	start := d.pos
	for d.pos < len(d.data) && strings.IndexByte("+-0123456789.eE", d.data[d.pos]) >= 0 {
		d.pos++
	}
	// The literal is converted afresh for a message, so that the
	// conversion for parsing stays on the stack.
	lit := d.data[start:d.pos]
	switch v.Kind() {
	case reflect.Float32, reflect.Float64:
		x, err := strconv.ParseFloat(string(lit), v.Type().Bits())
		if err != nil {
			return d.problem("range", "is too large a number (%s): the largest is about 1.8e308; check the value and its unit", string(d.data[start:d.pos]))
		}
		v.SetFloat(x)
		return nil
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		n, err := strconv.ParseInt(string(lit), 10, 64)
		if err != nil || v.OverflowInt(n) {
			return d.mismatch(v, "number "+string(d.data[start:d.pos]))
		}
		v.SetInt(n)
		return nil
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		n, err := strconv.ParseUint(string(lit), 10, 64)
		if err != nil || v.OverflowUint(n) {
			return d.mismatch(v, "number "+string(d.data[start:d.pos]))
		}
		v.SetUint(n)
		return nil
	}
	return d.mismatch(v, "number")
}

// anyValue decodes the next value as encoding/json does into an empty
// interface (map[string]any, []any, float64, string, bool, nil), with
// repeated keys refused.
func (d *strictDecoder) anyValue() (any, error) {
	switch c := d.next(); c {
	case '{':
		m := map[string]any{}
		d.pos++
		for d.next() != '}' {
			keyAt := d.pos
			key := d.stringLiteral()
			d.next()
			d.pos++
			d.in(key, 0)
			if _, dup := m[key]; dup {
				line, col := lineCol(d.data, int64(keyAt))
				return nil, d.problem("duplicate", "appears twice in one object (again at line %d, column %d); give each key once", line, col)
			}
			x, err := d.anyValue()
			if err != nil {
				return nil, err
			}
			d.out()
			m[key] = x
			if d.next() == ',' {
				d.pos++
			}
		}
		d.pos++
		return m, nil
	case '[':
		l := []any{}
		d.pos++
		for d.next() != ']' {
			d.in("", len(l))
			x, err := d.anyValue()
			if err != nil {
				return nil, err
			}
			d.out()
			l = append(l, x)
			if d.next() == ',' {
				d.pos++
			}
		}
		d.pos++
		return l, nil
	case '"':
		return d.stringLiteral(), nil
	case 't':
		d.pos += len("true")
		return true, nil
	case 'f':
		d.pos += len("false")
		return false, nil
	case 'n':
		d.pos += len("null")
		return nil, nil
	}
	var x float64
	err := d.number(reflect.ValueOf(&x).Elem())
	return x, err
}

// skipValue moves past the next value.
func (d *strictDecoder) skipValue() {
	switch c := d.next(); c {
	case '{', '[':
		depth := 0
		for d.pos < len(d.data) {
			switch d.data[d.pos] {
			case '"':
				d.stringLiteral()
				continue
			case '{', '[':
				depth++
			case '}', ']':
				depth--
			}
			d.pos++
			if depth == 0 {
				return
			}
		}
	case '"':
		d.stringLiteral()
	default:
		for d.pos < len(d.data) && strings.IndexByte(",}] \t\n\r", d.data[d.pos]) < 0 {
			d.pos++
		}
	}
}

// keyBytes reads the JSON string at the position, an object's key, and
// returns its text: a slice of the document when it holds no escapes.
func (d *strictDecoder) keyBytes() []byte {
	d.pos++ // opening quote
	start := d.pos
	for d.pos < len(d.data) {
		switch d.data[d.pos] {
		case '"':
			d.pos++
			return d.data[start : d.pos-1]
		case '\\':
			return []byte(d.escapedString(start))
		}
		d.pos++
	}
	return d.data[start:]
}

// stringLiteral reads the JSON string at the position and returns its
// text, with escapes resolved as encoding/json resolves them (a lone
// surrogate becomes U+FFFD).
func (d *strictDecoder) stringLiteral() string {
	d.pos++ // opening quote
	start := d.pos
	for d.pos < len(d.data) {
		switch d.data[d.pos] {
		case '"':
			s := string(d.data[start:d.pos])
			d.pos++
			return s
		case '\\':
			return d.escapedString(start)
		}
		d.pos++
	}
	return string(d.data[start:])
}

func (d *strictDecoder) escapedString(start int) string {
	b := append([]byte(nil), d.data[start:d.pos]...)
	for d.pos < len(d.data) {
		c := d.data[d.pos]
		switch {
		case c == '"':
			d.pos++
			return string(b)
		case c != '\\':
			b = append(b, c)
			d.pos++
			continue
		}
		if d.pos+1 >= len(d.data) {
			break
		}
		e := d.data[d.pos+1]
		d.pos += 2
		switch e {
		case 'b':
			b = append(b, '\b')
		case 'f':
			b = append(b, '\f')
		case 'n':
			b = append(b, '\n')
		case 'r':
			b = append(b, '\r')
		case 't':
			b = append(b, '\t')
		case 'u':
			r := d.hex4()
			if utf16.IsSurrogate(r) {
				r2 := utf8.RuneError
				if d.pos+1 < len(d.data) && d.data[d.pos] == '\\' && d.data[d.pos+1] == 'u' {
					save := d.pos
					d.pos += 2
					if r2 = utf16.DecodeRune(r, d.hex4()); r2 == utf8.RuneError {
						d.pos = save // not a pair: the second escape stands alone
					}
				}
				r = r2
			}
			b = utf8.AppendRune(b, r)
		default: // \" \\ \/
			b = append(b, e)
		}
	}
	return string(b)
}

// hex4 reads the four hex digits of a \u escape.
func (d *strictDecoder) hex4() rune {
	if d.pos+4 > len(d.data) {
		d.pos = len(d.data)
		return utf8.RuneError
	}
	n, err := strconv.ParseUint(string(d.data[d.pos:d.pos+4]), 16, 32)
	d.pos += 4
	if err != nil {
		return utf8.RuneError
	}
	return rune(n)
}

// structInfo is what DecodeStrict knows of a struct type: its JSON keys.
type structInfo struct {
	fields []structField
	byName map[string]int    // key → index in fields
	folded map[string]string // lower-case key → key, for a hint on case
}

type structField struct {
	name  string
	index []int // reflect field index path, through embedded structs
}

var structInfos sync.Map // reflect.Type → *structInfo

func structInfoOf(t reflect.Type) *structInfo {
	if si, ok := structInfos.Load(t); ok {
		return si.(*structInfo)
	}
	si := &structInfo{byName: map[string]int{}, folded: map[string]string{}}
	// Fields by depth, as encoding/json promotes them: a shallower field
	// hides a deeper one of the same key; at one depth, a tagged field
	// wins, and two untagged ones hide each other.
	best := map[string][]candidate{}
	var order []string
	var walk func(t reflect.Type, index []int, depth int)
	walk = func(t reflect.Type, index []int, depth int) {
		for i := range t.NumField() {
			f := t.Field(i)
			tag := f.Tag.Get("json")
			if tag == "-" {
				continue
			}
			name, _, _ := strings.Cut(tag, ",")
			idx := append(append([]int(nil), index...), i)
			ft := f.Type
			if ft.Kind() == reflect.Pointer {
				ft = ft.Elem()
			}
			if f.Anonymous && name == "" && ft.Kind() == reflect.Struct {
				if depth < 16 {
					walk(ft, idx, depth+1)
				}
				continue
			}
			if !f.IsExported() {
				continue
			}
			if name == "" {
				name = f.Name
			}
			if _, ok := best[name]; !ok {
				order = append(order, name)
			}
			best[name] = append(best[name], candidate{structField{name, idx}, depth, tag != ""})
		}
	}
	walk(t, nil, 0)
	for _, name := range order {
		win, ok := dominant(best[name])
		if !ok {
			continue // ambiguous: no field takes the key
		}
		si.byName[name] = len(si.fields)
		si.fields = append(si.fields, win)
		si.folded[strings.ToLower(name)] = name
	}
	actual, _ := structInfos.LoadOrStore(t, si)
	return actual.(*structInfo)
}

// candidate is a struct field that may take a key, found depth embedded
// structs down.
type candidate struct {
	structField
	depth  int
	tagged bool
}

// dominant picks the field that takes a key among cs, as encoding/json
// does: the shallowest; at one depth the only tagged one, or the only one.
func dominant(cs []candidate) (structField, bool) {
	depth := cs[0].depth
	for _, c := range cs {
		depth = min(depth, c.depth)
	}
	var all, tagged []candidate
	for _, c := range cs {
		if c.depth == depth {
			all = append(all, c)
			if c.tagged {
				tagged = append(tagged, c)
			}
		}
	}
	switch {
	case len(tagged) == 1:
		return tagged[0].structField, true
	case len(tagged) == 0 && len(all) == 1:
		return all[0].structField, true
	}
	return structField{}, false
}

// fieldByIndex is v.FieldByIndex, allocating nil embedded pointers.
func fieldByIndex(v reflect.Value, index []int) reflect.Value {
	for i, x := range index {
		if i > 0 && v.Kind() == reflect.Pointer {
			if v.IsNil() {
				v.Set(reflect.New(v.Type().Elem()))
			}
			v = v.Elem()
		}
		v = v.Field(x)
	}
	return v
}
