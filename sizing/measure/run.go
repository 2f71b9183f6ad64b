package measure

import (
	"slices"
	"strings"

	"capbank/sizing"
)

// Method is a test method and the inputs Run reads for it, each named by
// its field: the JSON and form name of the measurement API (rated_v,
// resistor_ohm, at_s, ...), which the problems of Run and of the methods
// name too.
type Method struct {
	// Name is the method's name, the value of Input.Method.
	Name string
	// Log says whether the method works on a log.
	Log bool
	// Required are the inputs the method needs, Optional the ones it may
	// take, in the order a form or a usage line lists them.
	Required []string
	Optional []string
}

// Methods are the four methods, in the order a form offers them.
func Methods() []Method {
	return []Method{
		{Name: "constant-current", Log: true, Required: []string{"rated_v"}, Optional: []string{"current_a", "start_s"}},
		{Name: "resistor", Log: true, Required: []string{"resistor_ohm"}, Optional: []string{"start_s"}},
		{Name: "hold", Log: true, Required: []string{"capacitance_f"}, Optional: []string{"at_s"}},
		{Name: "timed", Required: []string{"v0_v", "v1_v", "duration_s", "resistor_ohm"}},
	}
}

// MethodNamed is the method of that name; false when there is none.
func MethodNamed(name string) (Method, bool) {
	i := slices.IndexFunc(Methods(), func(m Method) bool { return m.Name == name })
	if i < 0 {
		return Method{}, false
	}
	return Methods()[i], true
}

// Input is one measurement as the command line and the web give it to Run:
// the method, the log and the figures the method takes, in SI units. A
// figure left nil was not given. Run reads only the inputs of the method
// (see Methods); the others are ignored.
type Input struct {
	// Method is the name of one of Methods.
	Method string
	// Log is the logged test (see ParseCSV), needed by every method but
	// timed; nil when none was given or the edge could not read it (its
	// problem, by the field "log", is then in Unread).
	Log *Log
	// RatedV, in V, is the cell's rated voltage UR (rated_v;
	// constant-current).
	RatedV *float64
	// CurrentA, in A, is the discharge current, for a log with no current_a
	// column (current_a; constant-current).
	CurrentA *float64
	// StartS, in s, is the switch-on time on the log's axis; nil: found from
	// the log (start_s; constant-current, resistor).
	StartS *float64
	// ResistorOhm, in Ω, is the discharge resistor (resistor_ohm; resistor,
	// timed).
	ResistorOhm *float64
	// CapacitanceF, in F, is the cell's capacitance (capacitance_f; hold).
	CapacitanceF *float64
	// AtS, in s, are the times on the log's axis to work out the leakage at;
	// nil: 10 %, 50 % and 90 % of the hold (at_s; hold).
	AtS []float64
	// V0V and V1V, in V, are the start and end voltages and DurationS, in
	// s, the time between them (v0_v, v1_v, duration_s; timed).
	V0V       *float64
	V1V       *float64
	DurationS *float64
	// Datasheet is the library cell to compare the figures with and to base
	// the measured cell on; nil: none.
	Datasheet *sizing.Cell
	// Unread are the problems the edge met reading an input (a number that
	// does not parse, a log that is not a CSV log), each by the field it
	// names (an item of at_s as at_s[1]). Run reports each among its own, in
	// the order of the fields, never also as missing.
	Unread sizing.ValidationError
}

// Result is what Run works out: the method's own result, the figures of
// the cell, and the comparison and measured cell when a datasheet was given.
type Result struct {
	// Method is the name of the method that ran.
	Method string
	// ConstantCurrent, Resistor, Hold and Timed are the method's own
	// result: the one of Method is set, the others are nil.
	ConstantCurrent *ConstantCurrentResult
	Resistor        *ResistorDischargeResult
	Hold            *HoldResult
	Timed           *TimedDischarge
	// Figures are the cell's figures the test gives, Summary its one-line
	// account for the measured cell's notes.
	Figures Figures
	Summary string
	// Comparison sets the figures beside Input.Datasheet's; nil without a
	// datasheet.
	Comparison []Comparison
	// Cell is the draft of the measured cell (see DraftCell): the datasheet
	// cell with the measured figures, or without a datasheet a new cell
	// when the test gives a capacitance, an ESR and a rated voltage; nil
	// otherwise.
	Cell *sizing.Cell
}

// Details is the method's own result, the one of ConstantCurrent,
// Resistor, Hold and Timed that is set, as a value: what the command line
// and the web encode as the result.
func (r Result) Details() any {
	switch {
	case r.ConstantCurrent != nil:
		return *r.ConstantCurrent
	case r.Resistor != nil:
		return *r.Resistor
	case r.Hold != nil:
		return *r.Hold
	case r.Timed != nil:
		return *r.Timed
	}
	return nil
}

// Run works out a cell's figures from one test: it picks the method by
// in.Method, checks that every input it requires was given, runs it and,
// with a datasheet, compares the figures and drafts the measured cell.
//
// Problems come back as a sizing.ValidationError, each naming its field:
// the edge's own (in.Unread) and Run's, in the order the fields are read,
// the log first, then start_s, then the method's inputs, then the method:
//
//	log: is required: give the logged test (...)       (rule required)
//	rated_v: is required for this method              (rule required)
//	method: must be one of: constant-current, ...      (rule oneof)
//
// With any of these nothing is worked out. Then the method's own errors
// pass through (rated_v: must be a finite number, log: the voltage never
// falls to U1, ...; see each method).
func Run(in Input) (Result, error) {
	m, known := MethodNamed(in.Method)
	var problems sizing.ValidationError
	// unread moves the edge's problems with field (or an item of it) into
	// problems, and reports whether there were any.
	unread := func(field string) bool {
		found := false
		for _, p := range in.Unread {
			if p.Field == field || strings.HasPrefix(p.Field, field+"[") {
				problems = append(problems, p)
				found = true
			}
		}
		return found
	}
	if (!known || m.Log) && !unread("log") && in.Log == nil {
		problems = append(problems, sizing.FieldError{Field: "log", Rule: "required",
			Message: "is required: give the logged test (CSV with time_s, voltage_v and, when logged, current_a)"})
	}
	unread("start_s")
	if known {
		for _, f := range m.Required {
			if !unread(f) && in.figure(f) == nil {
				problems = append(problems, sizing.FieldError{Field: f, Rule: "required", Message: "is required for this method"})
			}
		}
		for _, f := range m.Optional {
			if f != "start_s" {
				unread(f)
			}
		}
	} else {
		var names []string
		for _, method := range Methods() {
			names = append(names, method.Name)
		}
		problems = append(problems, sizing.FieldError{Field: "method", Rule: "oneof",
			Message: "must be one of: " + strings.Join(names, ", ")})
	}
	if len(problems) > 0 {
		return Result{}, problems
	}

	var opts *DischargeOptions
	if in.StartS != nil {
		opts = &DischargeOptions{StartS: in.StartS}
	}
	r := Result{Method: m.Name}
	var err error
	switch m.Name {
	case "constant-current":
		var x ConstantCurrentResult
		x, err = ConstantCurrentDischarge(in.Log, *in.RatedV, in.CurrentA, opts)
		r.ConstantCurrent, r.Figures, r.Summary = &x, x.Figures(), x.Summary()
	case "resistor":
		var x ResistorDischargeResult
		x, err = ResistorDischargeLog(in.Log, *in.ResistorOhm, opts)
		r.Resistor, r.Figures, r.Summary = &x, x.Figures(), x.Summary()
	case "hold":
		var x HoldResult
		x, err = HoldLog(in.Log, *in.CapacitanceF, in.AtS)
		r.Hold, r.Figures, r.Summary = &x, x.Figures(), x.Summary()
	case "timed":
		var x TimedDischarge
		x, err = TimedResistorDischarge(*in.V0V, *in.V1V, *in.DurationS, *in.ResistorOhm)
		r.Timed, r.Figures, r.Summary = &x, x.Figures(), x.Summary()
	}
	if err != nil {
		return Result{}, err
	}
	switch {
	case in.Datasheet != nil:
		r.Comparison = CompareWithDatasheet(r.Figures, *in.Datasheet)
		cell := DraftCell(in.Datasheet, r.Figures, r.Summary)
		r.Cell = &cell
	case r.Figures.CapacitanceF != nil && r.Figures.ESROhm != nil && r.Figures.RatedV != nil:
		cell := DraftCell(nil, r.Figures, r.Summary)
		r.Cell = &cell
	}
	return r, nil
}

// figure is the input named field, nil when it was not given.
func (in Input) figure(field string) *float64 {
	switch field {
	case "rated_v":
		return in.RatedV
	case "current_a":
		return in.CurrentA
	case "start_s":
		return in.StartS
	case "resistor_ohm":
		return in.ResistorOhm
	case "capacitance_f":
		return in.CapacitanceF
	case "v0_v":
		return in.V0V
	case "v1_v":
		return in.V1V
	case "duration_s":
		return in.DurationS
	}
	return nil
}
