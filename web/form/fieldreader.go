package form

import (
	"math"

	"capbank/sizing"
)

// FieldReader reads the numbers of a form, each problem named by its
// field: the one reader of the design form, the cell form and the
// measurement form. A number that does not parse, or a required one left
// empty, is a problem and reads NaN (never 0, never a guess), so that
// sizing.Validate's cross-field rules, which skip non-finite values, do
// not report a second problem about it; an empty optional field is nil
// (the default).
type FieldReader struct {
	Get      func(name string) string
	Problems sizing.ValidationError
}

func (r *FieldReader) Bad(name, rule, msg string) {
	r.Problems = append(r.Problems, sizing.FieldError{Field: name, Rule: rule, Message: msg})
}

// requiredText reads text as field name's number in unit u.
func (r *FieldReader) RequiredText(name, text string, u UnitSpec) float64 {
	v, err := ParseSI(text, u)
	if err != nil {
		r.Bad(name, RuleOf(err), NumberMessage(err, u))
		return math.NaN()
	}
	return v
}

// required reads field name, which must hold a number in unit u.
func (r *FieldReader) Required(name string, u UnitSpec) float64 {
	return r.RequiredText(name, r.Get(name), u)
}

// optional reads field name: nil when empty, else a number in unit u.
func (r *FieldReader) Optional(name string, u UnitSpec) *float64 {
	v, err := ParseSI(r.Get(name), u)
	if err == ErrEmpty {
		return nil
	}
	if err != nil {
		r.Bad(name, RuleOf(err), NumberMessage(err, u))
		v = math.NaN()
	}
	return &v
}

// optionalCount reads field name: nil when empty, else a whole count.
func (r *FieldReader) OptionalCount(name string) *int {
	v, err := ParseCount(r.Get(name), UnitCount)
	if err == ErrEmpty {
		return nil
	}
	if err != nil {
		r.Bad(name, "number", err.Error())
		return nil
	}
	return &v
}
