package sizing

import (
	"math"
	"reflect"
	"strconv"
	"strings"
)

// The steps of a load are checked by a plain loop, not by the validator:
// reflecting over every field of every step cost a day of 86 400 steps
// about 600 000 allocations, nearly all of a whole sizing's. The loop
// applies the same validate tags of Step, read once from the type, and
// gives the same field paths, rules and messages as the validator did
// (TestStepRulesMatchValidator compares them over the bad-design corpus,
// the fuzz corpus and every edge value of each range).

// stepBound is one range tag of a Step field: gt, gte, lt or lte, with
// its parameter as written in the tag (the message quotes it).
type stepBound struct {
	tag, param string
	limit      float64
}

// stepField is a float field of Step with its validate tags, in tag order.
type stepField struct {
	key      string // the JSON key
	optional bool   // omitempty on a pointer: nil is not checked
	// value is the field's value in a step, and whether it is given.
	value  func(*Step) (float64, bool)
	finite bool
	bounds []stepBound
}

// stepFields are Step's checked fields, read from its tags once.
var stepFields = readStepFields()

func readStepFields() []stepField {
	t := reflect.TypeFor[Step]()
	var out []stepField
	for i := range t.NumField() {
		f := t.Field(i)
		tag := f.Tag.Get("validate")
		if tag == "" {
			continue
		}
		key, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		sf := stepField{key: key, value: stepValue(key)}
		ft := f.Type
		if ft.Kind() == reflect.Pointer {
			ft = ft.Elem()
		}
		if ft.Kind() != reflect.Float64 {
			panic("sizing: stepRules checks float fields only, not Step." + f.Name)
		}
		for _, part := range strings.Split(tag, ",") {
			name, param, _ := strings.Cut(part, "=")
			switch name {
			case "omitempty":
				if f.Type.Kind() != reflect.Pointer {
					panic("sizing: stepRules: omitempty on a value field Step." + f.Name)
				}
				sf.optional = true
			case "finite":
				sf.finite = true
			case "gt", "gte", "lt", "lte":
				x, err := strconv.ParseFloat(param, 64)
				if err != nil {
					panic("sizing: stepRules: bad bound in Step." + f.Name + ": " + part)
				}
				sf.bounds = append(sf.bounds, stepBound{tag: name, param: param, limit: x})
			default:
				panic("sizing: stepRules does not know the tag " + part + " of Step." + f.Name)
			}
		}
		if f.Type.Kind() == reflect.Pointer && !sf.optional {
			panic("sizing: stepRules: Step." + f.Name + " is a pointer without omitempty")
		}
		out = append(out, sf)
	}
	return out
}

// stepValue reads the Step field of JSON key.
func stepValue(key string) func(*Step) (float64, bool) {
	switch key {
	case "power_w":
		return func(s *Step) (float64, bool) { return deref(s.PowerW) }
	case "current_a":
		return func(s *Step) (float64, bool) { return deref(s.CurrentA) }
	case "resistance_ohm":
		return func(s *Step) (float64, bool) { return deref(s.ResistanceOhm) }
	case "duration_s":
		return func(s *Step) (float64, bool) { return s.DurationS, true }
	}
	panic("sizing: stepRules does not read Step's " + key)
}

func deref(p *float64) (float64, bool) {
	if p == nil {
		return 0, false
	}
	return *p, true
}

// broken returns the first of the field's tags that x breaks, in tag
// order as the validator tries them, or "" when it breaks none.
func (f *stepField) broken(x float64) (tag, param string) {
	if f.finite && (math.IsNaN(x) || math.IsInf(x, 0)) {
		return "finite", ""
	}
	for _, b := range f.bounds {
		var ok bool
		switch b.tag {
		case "gt":
			ok = x > b.limit
		case "gte":
			ok = x >= b.limit
		case "lt":
			ok = x < b.limit
		case "lte":
			ok = x <= b.limit
		}
		if !ok {
			return b.tag, b.param
		}
	}
	return "", ""
}

// stepRules checks every step's fields against Step's validate tags and
// returns a problem for each field that breaks one, named by its path
// (load.steps[2].duration_s), with the validator's rule and message. It
// allocates only for a problem found.
func stepRules(steps []Step) ValidationError {
	var errs ValidationError
	for i := range steps {
		s := &steps[i]
		for j := range stepFields {
			f := &stepFields[j]
			x, given := f.value(s)
			if !given {
				continue
			}
			tag, param := f.broken(x)
			if tag == "" {
				continue
			}
			errs = append(errs, FieldError{
				Field:   "load.steps[" + strconv.Itoa(i) + "]." + f.key,
				Rule:    tag,
				Message: rangeMessage(tag, param, false),
			})
		}
	}
	return errs
}
