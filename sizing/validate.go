package sizing

import (
	"fmt"
	"math"
	"reflect"
	"sort"
	"strconv"
	"strings"
	"sync"
	"unicode"
	"unicode/utf8"

	"github.com/go-playground/validator/v10"
)

// FieldError is one problem with a design, named by its field path in the
// design file (`load.steps[2].duration_s`).
type FieldError struct {
	// Field is the JSON path of the offending value.
	Field string `json:"field"`
	// Rule is a short machine name for the rule broken ("gt", "finite",
	// "below_max_v", …).
	Rule string `json:"rule"`
	// Message says what is wrong and what to do, in plain words.
	Message string `json:"message"`
}

func (e FieldError) Error() string { return e.Field + ": " + e.Message }

// ValidationError lists every problem found in a design.
type ValidationError []FieldError

func (v ValidationError) Error() string {
	lines := make([]string, len(v))
	for i, e := range v {
		lines[i] = e.Error()
	}
	return strings.Join(lines, "\n")
}

var (
	validateOnce sync.Once
	validate     *validator.Validate
)

func designValidator() *validator.Validate {
	validateOnce.Do(func() {
		v := validator.New(validator.WithRequiredStructEnabled())
		v.RegisterTagNameFunc(func(f reflect.StructField) string {
			name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
			if name == "-" {
				return ""
			}
			return name
		})
		// finite: rejects NaN and ±Inf, which JSON cannot carry but forms
		// and Go callers can.
		if err := v.RegisterValidation("finite", func(fl validator.FieldLevel) bool {
			f := fl.Field()
			if f.Kind() != reflect.Float64 && f.Kind() != reflect.Float32 {
				return true
			}
			x := f.Float()
			return !math.IsNaN(x) && !math.IsInf(x, 0)
		}); err != nil {
			panic("sizing: " + err.Error())
		}
		validate = v
	})
	return validate
}

// Validate checks a design in full: shapes and ranges by the validator tags
// on the design types, then the cross-field physics rules. It returns nil or
// a ValidationError listing every problem, each with its field path, sorted
// by path. The command line and the web both call it; nothing is sized
// until it passes.
func Validate(d *Design) error {
	var errs ValidationError
	if err := designValidator().Struct(d); err != nil {
		var ves validator.ValidationErrors
		if ok := asValidationErrors(err, &ves); !ok {
			return ValidationError{{Field: "design", Rule: "invalid", Message: err.Error()}}
		}
		for _, fe := range ves {
			if isRefField(d, fieldPath(fe.Namespace())) {
				continue // an unresolved library cell: reported once below
			}
			errs = append(errs, FieldError{
				Field:   fieldPath(fe.Namespace()),
				Rule:    fe.Tag(),
				Message: ruleMessage(fe) + rangeHints[fieldPath(fe.Namespace())],
			})
		}
	}
	errs = append(errs, stepRules(d.Load.Steps)...)
	errs = append(errs, loadRules(&d.Load)...)
	errs = append(errs, physicsRules(d)...)
	errs = append(errs, systemRules(d)...)
	errs = append(errs, seriesRules(d)...)
	if len(errs) == 0 {
		return nil
	}
	sort.SliceStable(errs, func(i, j int) bool { return errs[i].Field < errs[j].Field })
	return dedupe(errs)
}

func asValidationErrors(err error, out *validator.ValidationErrors) bool {
	ves, ok := err.(validator.ValidationErrors)
	if ok {
		*out = ves
	}
	return ok
}

// rangeHints follow the range message of a field whose unit is easy to
// mistake.
var rangeHints = map[string]string{
	"statistics.target_yield": ": give a share, e.g. 0.999 for 99.9 %",
}

// fieldPath turns the validator's namespace "Design.load.steps[2].duration_s"
// into the design-file path "load.steps[2].duration_s".
func fieldPath(ns string) string {
	if _, rest, ok := strings.Cut(ns, "."); ok {
		return rest
	}
	return ns
}

func ruleMessage(fe validator.FieldError) string {
	return rangeMessage(fe.Tag(), fe.Param(), fe.Kind() == reflect.Slice || fe.Kind() == reflect.Array)
}

// rangeMessage says what a value that breaks the validate tag with its
// parameter p must be; isList for a list's length.
func rangeMessage(tag, p string, isList bool) string {
	switch tag {
	case "required":
		return "is required"
	case "finite":
		return "must be a finite number"
	case "gt":
		return "must be greater than " + p
	case "gte":
		if isList {
			return "must have at least " + p + " items"
		}
		return "must be at least " + p
	case "lt":
		return "must be less than " + p
	case "lte":
		if isList {
			return "must have at most " + p + " items"
		}
		return "must be at most " + p
	case "min":
		if isList {
			return "must have at least " + p + " item" + plural(p)
		}
		return "must be at least " + p + " long"
	case "max":
		if isList {
			return "must have at most " + p + " items"
		}
		return "must be at most " + p + " characters"
	case "len":
		return "must have exactly " + p + " items"
	case "oneof":
		return "must be one of: " + strings.ReplaceAll(p, " ", ", ")
	}
	return "breaks rule " + tag
}

func plural(n string) string {
	if n == "1" {
		return ""
	}
	return "s"
}

// dedupe drops a second error on the same field with the same rule (the
// finite tag and a range tag can both fire on one NaN).
func dedupe(errs ValidationError) ValidationError {
	out := errs[:0]
	seen := map[string]bool{}
	for _, e := range errs {
		key := e.Field
		if seen[key] && (e.Rule == "gt" || e.Rule == "gte" || e.Rule == "lt" || e.Rule == "lte") {
			continue
		}
		seen[key] = true
		out = append(out, e)
	}
	return out
}

// Finite reports whether x is a number: neither NaN nor an infinity. No
// figure capbank works out may be anything else.
func Finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// physicsRules are the cross-field rules the tags cannot say.
func physicsRules(d *Design) ValidationError {
	var errs ValidationError
	errs = append(errs, modelRules(d)...)
	add := func(field, rule, format string, a ...any) {
		errs = append(errs, FieldError{Field: field, Rule: rule, Message: fmt.Sprintf(format, a...)})
	}
	w := d.Window
	if Finite(w.MaxV) && Finite(w.MinV) && w.MinV > 0 && w.MinV >= w.MaxV {
		add("window.min_v", "below_max_v", "must be below window.max_v (%g V ≥ %g V)", w.MinV, w.MaxV)
	}
	for i, s := range d.Load.Steps {
		n := 0
		if s.PowerW != nil {
			n++
		}
		if s.CurrentA != nil {
			n++
		}
		if s.ResistanceOhm != nil {
			n++
		}
		if s.Rest {
			n++
		}
		if n != 1 {
			add(fmt.Sprintf("load.steps[%d]", i), "one_kind",
				"must give exactly one of power_w, current_a, resistance_ohm or rest (found %d)", n)
		}
		if s.PowerW != nil && *s.PowerW != 0 && math.Abs(*s.PowerW) < MinPowerW {
			add(fmt.Sprintf("load.steps[%d].power_w", i), "min_power",
				"is %g W, below %g W (a femtowatt) in size, less than any load draws; give 0 or a rest step for no load, or check the unit (W)", *s.PowerW, MinPowerW)
		}
	}
	if n := len(d.Load.StepList()); d.Load.Repeat != nil && *d.Load.Repeat > 0 && *d.Load.Repeat <= 1_000_000 && n*(*d.Load.Repeat) > MaxPassSteps {
		add("load.repeat", "pass_steps",
			"gives %d steps × %d repeats = %d steps in the sizing pass, more than %d; lower the repeat count or merge steps",
			n, *d.Load.Repeat, n*(*d.Load.Repeat), MaxPassSteps)
	}
	if ps := d.Load.PeriodS; ps != nil && Finite(*ps) && *ps > 0 {
		pass := 0.0
		for _, s := range d.Load.StepList() {
			pass += s.DurationS
		}
		if d.Load.Repeat != nil && *d.Load.Repeat > 0 {
			pass *= float64(*d.Load.Repeat)
		}
		if Finite(pass) && *ps < pass*(1-1e-12) {
			add("load.period_s", "at_least_pass",
				"is %s, shorter than one event (the steps × repeat last %s): give the time from the start of one event to the start of the next, at least the event itself",
				Quantity(*ps, "s", 4), Quantity(pass, "s", 4))
		}
	}
	if b := d.Balancing; b != nil && b.Kind == "active" && b.QuiescentA == nil {
		add("balancing.quiescent_a", "required_active",
			"is required for active balancing: give the current each balancing circuit draws from its cell, in A")
	}
	if b := d.Balancing; b != nil && b.QuiescentA != nil && tinyCurrent(*b.QuiescentA) {
		add("balancing.quiescent_a", "min_current", "is %g A, below %g A (a picoampere); give 0 for none, or check the unit (A)", *b.QuiescentA, MinLeakageA)
	}
	ceilingReported := false
	ids := map[string]int{}
	for i, c := range d.Cells {
		p := fmt.Sprintf("cells[%d]", i)
		if c.wholeLibrary {
			add("cells", "library_cells", "asks for every cell of the cell library (%q), which capbank explore, the web page and the API resolve; for capbank size list the cells instead", LibraryCells)
			continue
		}
		if c.libraryRef {
			add(p, "library_cell", "names library cell %q, which is not in the cell library; add it to the library or give the cell inline", c.ID)
			continue
		}
		if c.ID != "" {
			if j, dup := ids[c.ID]; dup {
				add(p+".id", "unique", "repeats the id of cells[%d] (%q); give each candidate its own id", j, c.ID)
			} else {
				ids[c.ID] = i
			}
		}
		errs = append(errs, cellRules(&c, p)...)
		if key, ceiling, ok := seriesTooMany(d, &c); ok && !(key == "cell_max_v" && ceilingReported) {
			field := p + "." + key
			if key == "cell_max_v" {
				field, ceilingReported = key, true
			}
			add(field, "series_count",
				"needs %s cells in series to hold window.max_v (%g V) at %g V per cell, more than %d; check window.max_v and %s",
				countWords(w.MaxV/ceiling), w.MaxV, ceiling, MaxSeries, key)
		}
	}
	return errs
}

// seriesTooMany reports whether cell c needs more than MaxSeries cells in
// series to hold the window top, with the key that sets its ceiling
// (rated_v, or the design's cell_max_v when that is lower) and the
// ceiling (V). Values that break their own range are left to it.
func seriesTooMany(d *Design, c *Cell) (string, float64, bool) {
	maxV, ceiling, field := d.Window.MaxV, c.RatedV, "rated_v"
	if d.CellMaxV != nil && *d.CellMaxV <= c.RatedV {
		ceiling, field = *d.CellMaxV, "cell_max_v"
	}
	if !Finite(maxV) || !Finite(ceiling) || !(maxV >= 0.001) || !(ceiling >= 0.1) || SeriesCount(maxV, ceiling) != 0 {
		return "", 0, false
	}
	return field, ceiling, true
}

// countWords writes a count of cells: whole below a million, else in
// powers of ten.
func countWords(q float64) string {
	if n := math.Ceil(q); n < 1e6 {
		return fmt.Sprintf("%.0f", n)
	}
	return fmt.Sprintf("%.3g", q)
}

// tinyCurrent reports whether x, a leakage or a balancing draw in A, lies
// between zero and MinLeakageA.
func tinyCurrent(x float64) bool { return x > 0 && x < MinLeakageA }

// cellRules are the cross-field rules of one cell whose fields sit under
// path p ("cells[2]", or "" for a cell on its own).
func cellRules(c *Cell, p string) ValidationError {
	var errs ValidationError
	add := func(field, rule, format string, a ...any) {
		if p != "" {
			field = p + "." + field
		}
		errs = append(errs, FieldError{Field: field, Rule: rule, Message: fmt.Sprintf(format, a...)})
	}
	if rule, msg := idProblem(c.ID); msg != "" {
		add("id", rule, "%s", msg)
	}
	if c.SurgeV != nil && Finite(*c.SurgeV) && Finite(c.RatedV) && *c.SurgeV < c.RatedV {
		add("surge_v", "gte_rated", "must be at least rated_v (%g V < %g V)", *c.SurgeV, c.RatedV)
	}
	if t := c.CapacitanceTolerancePct; len(t) == 2 && Finite(t[0]) && Finite(t[1]) {
		if t[0] > 0 || t[0] <= -100 {
			add("capacitance_tolerance_pct[0]", "tolerance_minus",
				"the minus tolerance must be in (−100, 0] percent, e.g. -10 (got %g)", t[0])
		}
		if t[1] < 0 || t[1] > 200 {
			add("capacitance_tolerance_pct[1]", "tolerance_plus",
				"the plus tolerance must be in [0, 200] percent, e.g. 20 (got %g)", t[1])
		}
	}
	if (c.ColdESRFactor == nil) != (c.ColdESRTempC == nil) {
		add("cold_esr_temp_c", "cold_pair",
			"cold_esr_factor and cold_esr_temp_c go together: give both or neither")
	}
	if c.MinTempC != nil && c.MaxTempC != nil && *c.MinTempC >= *c.MaxTempC {
		add("min_temp_c", "below_max_temp", "must be below max_temp_c (%g °C ≥ %g °C)", *c.MinTempC, *c.MaxTempC)
	}
	if c.MaxCurrentA != nil && c.PeakCurrentA != nil && *c.PeakCurrentA < *c.MaxCurrentA {
		add("peak_current_a", "gte_max_current",
			"must be at least max_current_a (%g A < %g A)", *c.PeakCurrentA, *c.MaxCurrentA)
	}
	if (c.RatedLifeH == nil) != (c.RatedLifeTempC == nil) {
		add("rated_life_temp_c", "life_pair", "rated_life_h and rated_life_temp_c go together: give both or neither")
	}
	if c.LeakageA != nil && tinyCurrent(*c.LeakageA) {
		add("leakage_a", "min_current", "is %g A, below %g A (a picoampere), less than any cell leaks; give 0 for none, or check the unit (A)", *c.LeakageA, MinLeakageA)
	}
	if tau, ok := SelfDischargeTime(c); ok && tau < MinSelfDischargeS {
		add("leakage_a", "leakage_plausible",
			"is %g A: with %g F at %g V the cell would lose its charge through it with a time constant C·U_R/I of %s, under an hour, where supercapacitors hold theirs for days to months; check the unit: a datasheet's leakage is usually in mA or µA (%g read as mA is %s)",
			*c.LeakageA, c.CapacitanceF, c.RatedV, Quantity(tau, "s", 3), *c.LeakageA, Quantity(*c.LeakageA/1000, "A", 3))
	}
	if c.Electrolyte == "hybrid" && c.MinV == nil {
		add("min_v", "required_hybrid",
			"is required for a hybrid (lithium-ion) cell: give the lowest voltage it may be discharged to, in V (the datasheet's minimum or cut-off voltage); below it the cell is damaged")
	}
	if c.MinV != nil && Finite(*c.MinV) && Finite(c.RatedV) && *c.MinV >= c.RatedV {
		add("min_v", "below_rated", "must be below rated_v (%g V ≥ %g V)", *c.MinV, c.RatedV)
	}
	if c.ColdCapacitanceFactor != nil && c.ColdESRTempC == nil {
		add("cold_esr_temp_c", "cold_point",
			"is needed with cold_capacitance_factor: give the cold temperature both factors were measured at (with cold_esr_factor)")
	}
	errs = append(errs, cellSystemRules(c, p)...)
	return errs
}

// MinSelfDischargeS, in s, is the shortest self-discharge time constant
// C·U_R/I_leak a cell may give: an hour. Supercapacitors hold their charge
// for days to months (EDLC self-discharge, REFERENCES.md 8.6), so a
// shorter one is a unit slip (mA typed as A); Validate refuses it.
// LeakageWarnS, about four days, is where the leakage-high warning starts
// (common practice, no source).
const (
	MinSelfDischargeS = 3600.0
	LeakageWarnS      = 4 * 86400.0
)

// SelfDischargeTime returns the self-discharge time constant of cell c,
// in s: τ = C·U_R/I_leak, the time its own leakage (a resistance
// U_R/I_leak across the capacitor) takes to bring it to 1/e of its
// charge. ok is false when the cell gives no leakage (or a figure is not
// finite).
func SelfDischargeTime(c *Cell) (float64, bool) {
	if c.LeakageA == nil || !(*c.LeakageA > 0) || !Finite(*c.LeakageA) || !Finite(c.RatedV) || !Finite(c.CapacitanceF) ||
		!(c.RatedV > 0) || !(c.CapacitanceF > 0) {
		return 0, false
	}
	return c.CapacitanceF * c.RatedV / *c.LeakageA, true
}

// idProblem says what is wrong with a cell id that is not empty (the
// required tag reports that): one of blanks only, one holding a control
// or invisible formatting character (a tab, a newline, a zero-width space,
// a right-to-left override), or one that is not UTF-8. An id is shown in
// tables, typed to look a cell up and written in design files, so it must
// be visible as what it is.
func idProblem(id string) (rule, msg string) {
	switch {
	case id == "":
		return "", ""
	case !utf8.ValidString(id):
		return "utf8", "is not valid UTF-8 text; give the cell an id of letters, digits and punctuation"
	case strings.TrimSpace(id) == "":
		return "blank", fmt.Sprintf("is blank (%s); give the cell an id of letters, digits and punctuation", quoteShort(id))
	}
	for i, r := range id {
		if unicode.IsControl(r) || unicode.Is(unicode.Cf, r) {
			return "control", fmt.Sprintf("holds the invisible character %U at byte %d (%s); give the cell an id of letters, digits, punctuation and spaces only", r, i, quoteShort(id))
		}
	}
	return "", ""
}

// quoteShort quotes s with Go escapes, cut to 40 characters.
func quoteShort(s string) string {
	if r := []rune(s); len(r) > 40 {
		return strconv.Quote(string(r[:40])) + "…"
	}
	return strconv.Quote(s)
}

// ValidateCell checks one cell on its own, as a cell library does before
// it stores it: the validator tags and the cross-field rules of Validate,
// with field paths relative to the cell ("esr_ohm").
func ValidateCell(c *Cell) error {
	var errs ValidationError
	if err := designValidator().Struct(c); err != nil {
		var ves validator.ValidationErrors
		if !asValidationErrors(err, &ves) {
			return ValidationError{{Field: "cell", Rule: "invalid", Message: err.Error()}}
		}
		for _, fe := range ves {
			errs = append(errs, FieldError{Field: fieldPath(fe.Namespace()), Rule: fe.Tag(), Message: ruleMessage(fe)})
		}
	}
	errs = append(errs, cellRules(c, "")...)
	if len(errs) == 0 {
		return nil
	}
	sort.SliceStable(errs, func(i, j int) bool { return errs[i].Field < errs[j].Field })
	return dedupe(errs)
}

// isRefField reports whether path lies inside a cell that is an unresolved
// library reference.
func isRefField(d *Design, path string) bool {
	for i := range d.Cells {
		if d.Cells[i].libraryRef && strings.HasPrefix(path, fmt.Sprintf("cells[%d].", i)) {
			return true
		}
	}
	return false
}
