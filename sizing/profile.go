package sizing

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"sync"

	"github.com/go-playground/validator/v10"
)

// Field paths of a load's three ways of giving its profile.
const (
	fieldSteps          = "load.steps"
	fieldProfileCSV     = "load.profile_csv"
	fieldProfileCSVText = "load.profile_csv_text"
)

// loadedProfile is a load's logged profile once read: the text it was read
// from (so a changed text is read again) and what ParseProfileCSV made of
// it, or the problem it found.
type loadedProfile struct {
	text string
	csv  *ProfileCSV
	err  error
	// fromFile: the text is that of the file ProfileCSV names.
	fromFile bool
}

// AttachProfileFile hands sizing the text of the file ProfileCSV names, as
// the program that read the design file read it. Validate then reads it as
// the profile and names load.profile_csv in its problems.
func (l *Load) AttachProfileFile(text string) {
	l.ProfileCSVText = text
	l.profile = &loadedProfile{text: text, fromFile: true}
}

// ProfileField is the design-file key the load's logged profile came
// from: "load.profile_csv" for a file the design names,
// "load.profile_csv_text" for text given inline, "" when the load gives
// steps.
func (l *Load) ProfileField() string {
	switch {
	case l.profile != nil && l.profile.fromFile:
		return fieldProfileCSV
	case l.ProfileCSVText != "":
		return fieldProfileCSVText
	case l.ProfileCSV != "":
		return fieldProfileCSV
	}
	return ""
}

// Profile is the logged profile the load gives, read by ParseProfileCSV,
// or nil when it gives steps. A profile that does not parse is nil and its
// *CSVError; Validate reports it by field.
func (l *Load) Profile() (*ProfileCSV, error) {
	if l.ProfileCSVText == "" {
		return nil, nil
	}
	if l.profile == nil || l.profile.text != l.ProfileCSVText || (l.profile.csv == nil && l.profile.err == nil) {
		fromFile := l.profile != nil && l.profile.fromFile && l.profile.text == l.ProfileCSVText
		p, err := ParseProfileCSVText(l.ProfileCSVText)
		l.profile = &loadedProfile{text: l.ProfileCSVText, csv: p, err: err, fromFile: fromFile}
	}
	return l.profile.csv, l.profile.err
}

// lastProfile remembers the last text ParseProfileCSVText read.
var lastProfile struct {
	sync.Mutex
	text string
	csv  *ProfileCSV
	err  error
}

// ParseProfileCSVText is ParseProfileCSV of text, remembering the text it
// read last and what it made of it: a program that checks a profile when
// it is given (the page's upload) and then sizes it reads a long log once.
// The result is shared; its steps must not be changed.
func ParseProfileCSVText(text string) (*ProfileCSV, error) {
	lastProfile.Lock()
	if (lastProfile.csv != nil || lastProfile.err != nil) && lastProfile.text == text {
		defer lastProfile.Unlock()
		return lastProfile.csv, lastProfile.err
	}
	lastProfile.Unlock()
	p, err := ParseProfileCSV(strings.NewReader(text)) // outside the lock: other texts need not wait
	lastProfile.Lock()
	lastProfile.text, lastProfile.csv, lastProfile.err = text, p, err
	lastProfile.Unlock()
	return p, err
}

// StepList is the steps the load runs: Steps, or those of its logged
// profile (none when the profile does not parse).
func (l *Load) StepList() []Step {
	if len(l.Steps) > 0 || l.ProfileCSVText == "" {
		return l.Steps
	}
	p, err := l.Profile()
	if err != nil {
		return nil
	}
	return p.Steps
}

// loadRules checks that the load gives its profile exactly one way and
// reads a logged profile, so that every later rule and the solver see its
// steps. Problems name the field the profile came from, with the line and
// column of a bad row.
func loadRules(l *Load) ValidationError {
	var errs ValidationError
	add := func(field, rule, format string, a ...any) {
		errs = append(errs, FieldError{Field: field, Rule: rule, Message: fmt.Sprintf(format, a...)})
	}
	given := []string{}
	if len(l.Steps) > 0 {
		given = append(given, fieldSteps)
	}
	attached := l.profile != nil && l.profile.fromFile
	if l.ProfileCSV != "" {
		given = append(given, fieldProfileCSV)
	}
	if l.ProfileCSVText != "" && !attached {
		given = append(given, fieldProfileCSVText)
	}
	switch {
	case len(given) == 0:
		add(fieldSteps, "min", "must have at least 1 item; give the steps, or a logged profile as load.profile_csv (a CSV file beside the design) or load.profile_csv_text (the CSV inline)")
		return errs
	case len(given) > 1:
		for _, f := range given[1:] {
			add(f, "one_profile", "cannot be given with %s: a load gives its profile one way, as steps, as a CSV file (load.profile_csv) or as CSV text (load.profile_csv_text); keep one", given[0])
		}
		return errs
	case given[0] == fieldProfileCSV && !attached:
		add(fieldProfileCSV, "file_not_read",
			"names the file %q, which was not read: only the command line reads a file the design names; send the CSV itself, inline as load.profile_csv_text or as its own part of a multipart request", l.ProfileCSV)
		return errs
	case given[0] == fieldSteps:
		return nil
	}
	field := l.ProfileField()
	p, err := l.Profile()
	if err != nil {
		add(field, "csv", "%s", err.Error())
		return errs
	}
	return profileStepRules(p, field)
}

// profileStepRules checks the steps a logged profile gave against the
// rules of Step (its validator tags and the power floor), naming the time
// at which an offending step starts. The parser already refused cells that
// are not finite numbers and times that do not increase, so only the
// ranges can fail; each is an interval, so the steps holding the lowest
// and highest value and duration break one if any step does, and only
// those four go through the validator (a million would take a second).
func profileStepRules(p *ProfileCSV, field string) ValidationError {
	if len(p.Steps) == 0 {
		return nil
	}
	value := func(s *Step) float64 {
		switch {
		case s.PowerW != nil:
			return *s.PowerW
		case s.CurrentA != nil:
			return *s.CurrentA
		}
		return 0
	}
	starts := make([]float64, len(p.Steps))
	var lowV, highV, shortD, longD int
	t := p.StartS
	for i := range p.Steps {
		s := &p.Steps[i]
		starts[i] = t
		t += s.DurationS
		v := value(s)
		if v != 0 && math.Abs(v) < MinPowerW && s.PowerW != nil {
			return ValidationError{{Field: field, Rule: "min_power", Message: fmt.Sprintf(
				"the step from time_s %g has power_w %g W, below %g W (a femtowatt) in size; write 0 for no load, or check the unit (W)", starts[i], v, MinPowerW)}}
		}
		if v < value(&p.Steps[lowV]) {
			lowV = i
		}
		if v > value(&p.Steps[highV]) {
			highV = i
		}
		if s.DurationS < p.Steps[shortD].DurationS {
			shortD = i
		}
		if s.DurationS > p.Steps[longD].DurationS {
			longD = i
		}
	}
	extremes := []int{lowV, highV, shortD, longD}
	slices.Sort(extremes)
	v := designValidator()
	for _, i := range extremes {
		err := v.Struct(&p.Steps[i])
		if err == nil {
			continue
		}
		var ves validator.ValidationErrors
		if !asValidationErrors(err, &ves) || len(ves) == 0 {
			return ValidationError{{Field: field, Rule: "invalid", Message: err.Error()}}
		}
		fe := ves[0]
		key := fe.Field()
		if key != "duration_s" {
			key = p.Column
		}
		return ValidationError{{Field: field, Rule: fe.Tag(), Message: fmt.Sprintf(
			"the step from time_s %g: its %s %s; check the log's units (time_s in s, %s)",
			starts[i], key, ruleMessage(fe), columnUnit(p.Column))}}
	}
	return nil
}

func columnUnit(column string) string {
	if column == profileCurrentColumn {
		return "current_a in A"
	}
	return "power_w in W"
}

// ProfileTotals sum up a logged profile, in the unit of its column: for
// power_w, energy in J at the converter output; for current_a, charge in C
// at the bank terminals.
type ProfileTotals struct {
	// Drawn is the integral of the positive values (the load drawing from
	// the bank), Returned that of the negative ones (charging), both ≥ 0:
	//
	//	Drawn = Σ max(v_i, 0)·Δt_i,   Returned = Σ max(−v_i, 0)·Δt_i
	Drawn, Returned float64
	// Peak is the largest value (W or A), Lowest the smallest; both 0 for
	// a profile of rests only.
	Peak, Lowest float64
}

// Totals sums the profile's steps (see ProfileTotals).
func (p *ProfileCSV) Totals() ProfileTotals {
	var t ProfileTotals
	for i := range p.Steps {
		s := &p.Steps[i]
		v := 0.0
		switch {
		case s.PowerW != nil:
			v = *s.PowerW
		case s.CurrentA != nil:
			v = *s.CurrentA
		}
		if v > 0 {
			t.Drawn += v * s.DurationS
		} else {
			t.Returned -= v * s.DurationS
		}
		t.Peak, t.Lowest = max(t.Peak, v), min(t.Lowest, v)
	}
	return t
}
