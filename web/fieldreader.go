package web

import (
	"math"

	"capbank/sizing"
)

// fieldReader reads the numbers of a form, each problem named by its
// field: the one reader of the design form, the cell form and the
// measurement form. A number that does not parse, or a required one left
// empty, is a problem and reads NaN (never 0, never a guess), so that
// sizing.Validate's cross-field rules, which skip non-finite values, do
// not report a second problem about it; an empty optional field is nil
// (the default).
type fieldReader struct {
	get      func(name string) string
	problems sizing.ValidationError
}

func (r *fieldReader) bad(name, rule, msg string) {
	r.problems = append(r.problems, sizing.FieldError{Field: name, Rule: rule, Message: msg})
}

// requiredText reads text as field name's number in unit u.
func (r *fieldReader) requiredText(name, text string, u unitSpec) float64 {
	v, err := parseSI(text, u)
	if err != nil {
		r.bad(name, ruleOf(err), numberMessage(err, u))
		return math.NaN()
	}
	return v
}

// required reads field name, which must hold a number in unit u.
func (r *fieldReader) required(name string, u unitSpec) float64 {
	return r.requiredText(name, r.get(name), u)
}

// optional reads field name: nil when empty, else a number in unit u.
func (r *fieldReader) optional(name string, u unitSpec) *float64 {
	v, err := parseSI(r.get(name), u)
	if err == errSIEmpty {
		return nil
	}
	if err != nil {
		r.bad(name, ruleOf(err), numberMessage(err, u))
		v = math.NaN()
	}
	return &v
}

// optionalCount reads field name: nil when empty, else a whole count.
func (r *fieldReader) optionalCount(name string) *int {
	v, err := parseCount(r.get(name), unitCount)
	if err == errSIEmpty {
		return nil
	}
	if err != nil {
		r.bad(name, "number", err.Error())
		return nil
	}
	return &v
}
