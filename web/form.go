package web

import (
	"bytes"
	"encoding/json"
	"fmt"
	"net/url"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"

	"capbank/sizing"
)

// maxFormSteps is the most step rows the form edits. A longer profile goes
// through the JSON API or `capbank size`.
const maxFormSteps = 500

// maxPulses is the most pulses the pulse-train shortcut expands at once.
const maxPulses = 200

// maxFormExtras is the most own lines of the bill of quantities the form
// edits, as many as a design may have.
const maxFormExtras = 200

// stepRow is one load step as typed.
type stepRow struct{ Kind, Value, Duration string }

// cellLookup finds a library cell by its id.
type cellLookup func(id string) (sizing.Cell, bool)

// designForm is the design form as submitted: every value as typed, so the
// page can show it again.
type designForm struct {
	vals  url.Values
	steps []stepRow
	// extras are the indices of the own BOQ lines the form holds, in
	// order; a line keeps its index (its fields' names) for its life.
	extras []int
	// pickOrder lists the picked library cells in the order posted.
	pickOrder []string
	picked    map[string]bool
	// carried are cells of an opened design that are neither library cells
	// nor the typed cell, kept as the file gave them; keep marks those
	// still in the design.
	carried  []sizing.Cell
	keep     map[string]bool
	sort     string
	lastGood string
	// keepsLast is set when the client keeps showing the results of
	// lastGood while the design has problems (the htmx results update):
	// then lastGood is not sized again, since only the status is sent.
	keepsLast bool
	notice    string
	// problems are what reading the form found (too many steps); the
	// design cannot be sized until they are fixed. Decoding adds its own.
	problems sizing.ValidationError
	// actionProblems are what an action could not do (a bad pulse train or
	// profile file); the design itself is unchanged and still sized.
	actionProblems sizing.ValidationError
}

var (
	stepField  = regexp.MustCompile(`^load\.steps\[(\d{1,9})\]\.(kind|value|duration_s)$`)
	extraField = regexp.MustCompile(`^boq\.extras\[(\d{1,9})\]\.(item|description|quantity|unit|unit_price)$`)
)

// readForm collects the submitted values. Step rows are ordered by their
// index and renumbered from 0, so a row removed in the page leaves no gap.
func readForm(vals url.Values) *designForm {
	f := &designForm{vals: vals, picked: map[string]bool{}, keep: map[string]bool{}}
	rows := map[int]*stepRow{}
	extras := map[int]bool{}
	overflow, extraOverflow := false, false
	for key, vs := range vals {
		if m := extraField.FindStringSubmatch(key); m != nil {
			i, _ := strconv.Atoi(m[1])
			if !extras[i] && strings.TrimSpace(vs[0]) != "" {
				if len(extras) >= maxFormExtras {
					extraOverflow = true
					continue
				}
				extras[i] = true
			}
			continue
		}
		m := stepField.FindStringSubmatch(key)
		if m == nil {
			continue
		}
		i, _ := strconv.Atoi(m[1])
		r := rows[i]
		if r == nil {
			if len(rows) >= maxFormSteps {
				overflow = true
				continue
			}
			r = &stepRow{}
			rows[i] = r
		}
		switch m[2] {
		case "kind":
			r.Kind = vs[0]
		case "value":
			r.Value = vs[0]
		case "duration_s":
			r.Duration = vs[0]
		}
	}
	idx := make([]int, 0, len(rows))
	for i := range rows {
		idx = append(idx, i)
	}
	sort.Ints(idx)
	for _, i := range idx {
		f.steps = append(f.steps, *rows[i])
	}
	if overflow {
		f.problem("load.steps", "form_steps", fmt.Sprintf(
			"holds more than %d steps, the most this form edits; send longer profiles to the JSON API or use capbank size", maxFormSteps))
	}
	for i := range extras {
		f.extras = append(f.extras, i)
	}
	sort.Ints(f.extras)
	if extraOverflow {
		f.problem("boq.extras", "form_extras", fmt.Sprintf("holds more than %d own lines, the most a design may have", maxFormExtras))
	}
	for _, id := range vals["cells.pick"] {
		if !f.picked[id] {
			f.picked[id] = true
			f.pickOrder = append(f.pickOrder, id)
		}
	}
	if c := vals.Get("carried"); c != "" {
		dec := json.NewDecoder(strings.NewReader(c))
		dec.DisallowUnknownFields()
		if err := dec.Decode(&f.carried); err != nil {
			f.carried = nil
			f.problem("cells.pick", "carried", "the cells kept from the opened design file could not be read back; open the file again")
		}
	}
	for _, id := range vals["carried.keep"] {
		f.keep[id] = true
	}
	f.sort = vals.Get("sort")
	if vals.Has("sort_by") {
		f.sort = vals.Get("sort_by")
	}
	if f.sort == "rank" || !slices.Contains(sortOrders, f.sort) {
		f.sort = ""
	}
	f.lastGood = vals.Get("last_good")
	return f
}

// sortOrders are the orders of the candidates table; "" is the report's
// rank.
var sortOrders = []string{"", "price", "cells", "mass", "volume", "runtime"}

func (f *designForm) value(name string) string { return f.vals.Get(name) }

// savedID is the id of the saved design the form holds, "" for none (or a
// value that is no id, which the form then drops).
func (f *designForm) savedID() string {
	id := f.value("saved_id")
	if n, err := strconv.ParseInt(id, 10, 64); err != nil || n <= 0 {
		return ""
	}
	return id
}

func (f *designForm) problem(field, rule, msg string) {
	f.problems = append(f.problems, sizing.FieldError{Field: field, Rule: rule, Message: msg})
}

func (f *designForm) actionProblem(field, rule, msg string) {
	f.actionProblems = append(f.actionProblems, sizing.FieldError{Field: field, Rule: rule, Message: msg})
}

// uploads are the files a form post carries.
type uploads struct{ profile, design *upload }

// apply carries out a form action: editing the step list or the own BOQ
// lines, expanding the pulse train, loading a profile CSV or opening a
// design file. An unknown action does nothing. It returns the form to
// show, which is f except after a design file opened.
func (f *designForm) apply(action string, files uploads, lib cellLookup) *designForm {
	verb, arg, _ := strings.Cut(action, ":")
	switch verb {
	case "open-design":
		return f.openDesign(files.design, lib)
	case "add-extra":
		if len(f.extras) >= maxFormExtras {
			f.actionProblem("boq.extras", "form_extras", fmt.Sprintf("has %d own lines, the most a design may have", maxFormExtras))
			return f
		}
		f.extras = append(f.extras, f.nextExtra())
		return f
	case "remove-extra":
		if n, err := strconv.Atoi(arg); err == nil {
			f.removeExtra(n)
		}
		return f
	}
	f.applyStep(verb, arg, files.profile)
	return f
}

// nextExtra is the index of a new own line: one past the highest in use.
func (f *designForm) nextExtra() int {
	if n := len(f.extras); n > 0 {
		return f.extras[n-1] + 1
	}
	return 0
}

// removeExtra drops own line i and its values.
func (f *designForm) removeExtra(i int) {
	k := slices.Index(f.extras, i)
	if k < 0 {
		return
	}
	f.extras = slices.Delete(f.extras, k, k+1)
	for _, fl := range extraFields {
		f.vals.Del(extraName(i, fl.Name))
	}
}

func extraName(i int, key string) string { return fmt.Sprintf("boq.extras[%d].%s", i, key) }

func (f *designForm) applyStep(verb, arg string, csv *upload) {
	i, err := strconv.Atoi(arg)
	if err != nil || i < 0 || i >= len(f.steps) {
		i = -1
	}
	switch verb {
	case "add-step":
		if len(f.steps) >= maxFormSteps {
			f.actionProblem("load.steps", "form_steps", fmt.Sprintf("has %d steps, the most this form edits", maxFormSteps))
			return
		}
		kind := "power"
		if n := len(f.steps); n > 0 && f.steps[n-1].Kind != "" {
			kind = f.steps[n-1].Kind
		}
		f.steps = append(f.steps, stepRow{Kind: kind})
	case "remove-step":
		if i >= 0 {
			f.steps = slices.Delete(f.steps, i, i+1)
		}
	case "step-up":
		if i > 0 {
			f.steps[i-1], f.steps[i] = f.steps[i], f.steps[i-1]
		}
	case "step-down":
		if i >= 0 && i+1 < len(f.steps) {
			f.steps[i], f.steps[i+1] = f.steps[i+1], f.steps[i]
		}
	case "add-pulses":
		f.addPulses()
	case "load-csv":
		f.loadCSV(csv)
	}
}

// addPulses appends count × (pulse, rest) to the steps. When the steps are
// a single empty row (a new design), the pulses replace it.
func (f *designForm) addPulses() {
	kind := f.value("pulse.kind")
	if !slices.Contains([]string{"power", "current", "resistance"}, kind) {
		f.actionProblem("pulse.kind", "oneof", "must be one of: power, current, resistance")
		return
	}
	ok := true
	need := func(name string, u unitSpec) {
		if _, err := parseSI(f.value(name), u); err != nil {
			ok = false
			f.actionProblem(name, "number", numberMessage(err, u))
		}
	}
	need("pulse.value", stepValueUnit(kind))
	need("pulse.duration_s", unitSecond)
	need("pulse.rest_s", unitSecond)
	count, err := parseCount(f.value("pulse.count"), unitCount)
	switch {
	case err != nil:
		ok = false
		f.actionProblem("pulse.count", "number", numberMessage(err, unitCount))
	case count < 1 || count > maxPulses:
		ok = false
		f.actionProblem("pulse.count", "pulse_count", fmt.Sprintf(
			"must be from 1 to %d; for a longer train, add one pulse and its rest and set Repeat the steps", maxPulses))
	}
	if !ok {
		return
	}
	if len(f.steps) == 1 && f.steps[0].Value == "" && f.steps[0].Duration == "" {
		f.steps = nil
	}
	if len(f.steps)+2*count > maxFormSteps {
		f.actionProblem("pulse.count", "form_steps", fmt.Sprintf(
			"%d pulses and their rests would make %d steps, more than the %d this form edits; use fewer pulses and Repeat the steps",
			count, len(f.steps)+2*count, maxFormSteps))
		return
	}
	for range count {
		f.steps = append(f.steps,
			stepRow{Kind: kind, Value: f.value("pulse.value"), Duration: f.value("pulse.duration_s")},
			stepRow{Kind: "rest", Duration: f.value("pulse.rest_s")})
	}
	f.notice = fmt.Sprintf("Added %d pulses of %s %s for %s s, each followed by %s s of rest (%d steps).",
		count, kind, strings.TrimSpace(f.value("pulse.value")), strings.TrimSpace(f.value("pulse.duration_s")),
		strings.TrimSpace(f.value("pulse.rest_s")), 2*count)
}

// loadCSV replaces the steps with those of a logged profile.
func (f *designForm) loadCSV(fh *upload) {
	if fh == nil || len(fh.data) == 0 {
		f.actionProblem("profile_csv", "required", "choose a CSV file first (a header naming time_s and power_w or current_a)")
		return
	}
	p, err := sizing.ParseProfileCSV(bytes.NewReader(fh.data))
	if err != nil {
		f.actionProblem("profile_csv", "csv", fh.filename+": "+err.Error())
		return
	}
	if len(p.Steps) > maxFormSteps {
		f.actionProblem("profile_csv", "form_steps", fmt.Sprintf(
			"%s: %d rows give %d steps, more than the %d this form edits; resample the log, or size it with the JSON API or capbank size",
			fh.filename, p.Rows, len(p.Steps), maxFormSteps))
		return
	}
	kind := "power"
	if p.Column == "current_a" {
		kind = "current"
	}
	f.steps = f.steps[:0]
	for _, s := range p.Steps {
		row := stepRow{Kind: "rest", Duration: formatFloat(s.DurationS)}
		switch {
		case s.PowerW != nil:
			row.Kind, row.Value = kind, formatFloat(*s.PowerW)
		case s.CurrentA != nil:
			row.Kind, row.Value = kind, formatFloat(*s.CurrentA)
		}
		f.steps = append(f.steps, row)
	}
	f.notice = fmt.Sprintf("Loaded %s: %d rows of %s became %d steps, %s s in all.",
		fh.filename, p.Rows, p.Column, len(p.Steps), formatFloat(p.DurationS))
}

func formatFloat(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// numberMessage is the message for a number field that did not parse.
func numberMessage(err error, u unitSpec) string {
	if err == errSIEmpty {
		if u.Unit != "" && u.Unit != "×" && u.Unit != "0–1" && u.Unit != "each" {
			return "is required; enter a number in " + u.Unit
		}
		return "is required; enter a number"
	}
	return err.Error()
}

// decoded is the form turned into a design, with where each cell came from.
type decoded struct {
	design *sizing.Design
	// sources[k] is the library id of design.Cells[k] (or the id of a cell
	// kept from an opened file), or "" for the typed cell.
	sources []string
	// extraIndex[k] is the form index of design.BOQ.Extras[k].
	extraIndex []int
	// problems are the fields that did not decode.
	problems sizing.ValidationError
}

// decode turns the form into the design the command line would read. A
// value that is not a number is a problem named by its field; an empty
// optional field is nil (the default), never 0. A field that did not parse
// holds NaN, so sizing.Validate's cross-field rules, which skip non-finite
// values, do not report a second problem about it.
func (f *designForm) decode(lib cellLookup) decoded {
	d := &sizing.Design{Name: strings.TrimSpace(f.value("name"))}
	out := decoded{design: d}
	r := &fieldReader{get: f.value, problems: slices.Clone(f.problems)}
	bad, requiredText, required, optional, optionalCount := r.bad, r.requiredText, r.required, r.optional, r.optionalCount
	d.Window.MaxV = required("window.max_v", unitVolt)
	d.Window.MinV = required("window.min_v", unitVolt)
	d.CellMaxV = optional("cell_max_v", unitVolt)
	d.Load.Efficiency = optional("load.efficiency", unitFraction)
	d.Load.Repeat = optionalCount("load.repeat")
	for i, r := range f.steps {
		p := fmt.Sprintf("load.steps[%d]", i)
		s := sizing.Step{DurationS: requiredText(p+".duration_s", r.Duration, unitSecond)}
		switch r.Kind {
		case "power", "current", "resistance":
			v := requiredText(p+".value", r.Value, stepValueUnit(r.Kind))
			switch r.Kind {
			case "power":
				s.PowerW = &v
			case "current":
				s.CurrentA = &v
			default:
				s.ResistanceOhm = &v
			}
		case "rest":
			s.Rest = true
			if strings.TrimSpace(r.Value) != "" {
				bad(p+".value", "rest_value", "is not used by a rest step; clear it, or choose power, current or resistance")
			}
		default:
			s.Rest = true // a placeholder, so the step is not reported a second time
			bad(p+".kind", "oneof", "must be one of: power, current, resistance, rest")
		}
		d.Load.Steps = append(d.Load.Steps, s)
	}
	eol := sizing.EOL{
		CapacitanceFactor: optional("eol.capacitance_factor", unitFactor),
		ESRFactor:         optional("eol.esr_factor", unitFactor),
	}
	if eol.CapacitanceFactor != nil || eol.ESRFactor != nil {
		d.EOL = &eol
	}
	d.AmbientC = optional("ambient_c", unitCelsius)
	d.ColdC = optional("cold_c", unitCelsius)
	d.LifeYears = optional("life_years", unitYear)
	d.StandbyH = optional("standby_h", unitHour)
	switch rb := f.value("rank_by"); rb {
	case "", "price", "cells", "mass", "volume":
		d.RankBy = rb
	default:
		bad("rank_by", "oneof", "must be one of: price, cells, mass, volume")
	}

	bal := sizing.Balancing{
		Kind:            f.value("balancing.kind"),
		CurrentMultiple: optional("balancing.current_multiple", unitFactor),
		LeakageSpreadA:  optional("balancing.leakage_spread_a", unitAmp),
		Series:          f.value("balancing.series"),
		QuiescentA:      optional("balancing.quiescent_a", unitAmp),
	}
	if bal != (sizing.Balancing{}) {
		d.Balancing = &bal
	}
	life := sizing.LifeModel{
		TempStepK:    optional("life.temp_step_k", unitKelvin),
		VoltageStepV: optional("life.voltage_step_v", unitVolt),
	}
	if life != (sizing.LifeModel{}) {
		d.Life = &life
	}
	boq := sizing.BOQOptions{
		Currency:          strings.TrimSpace(f.value("boq.currency")),
		LinkUnitPrice:     optional("boq.link_unit_price", unitCurrencyEa),
		ResistorUnitPrice: optional("boq.resistor_unit_price", unitCurrencyEa),
		BalancerUnitPrice: optional("boq.balancer_unit_price", unitCurrencyEa),
		BleederUnitPrice:  optional("boq.bleeder_unit_price", unitCurrencyEa),
		BleederTimeS:      optional("boq.bleeder_time_s", unitSecond),
	}
	for _, i := range f.extras {
		if f.extraEmpty(i) {
			continue
		}
		boq.Extras = append(boq.Extras, sizing.BOQExtra{
			Item:        strings.TrimSpace(f.value(extraName(i, "item"))),
			Description: strings.TrimSpace(f.value(extraName(i, "description"))),
			Quantity:    required(extraName(i, "quantity"), unitNone),
			Unit:        strings.TrimSpace(f.value(extraName(i, "unit"))),
			UnitPrice:   optional(extraName(i, "unit_price"), unitCurrencyEa),
		})
		out.extraIndex = append(out.extraIndex, i)
	}
	if boq.Currency != "" || boq.LinkUnitPrice != nil || boq.ResistorUnitPrice != nil || boq.BalancerUnitPrice != nil ||
		boq.BleederUnitPrice != nil || boq.BleederTimeS != nil || len(boq.Extras) > 0 {
		d.BOQ = &boq
	}

	for _, id := range f.pickOrder {
		c, ok := sizing.Cell{}, false
		if lib != nil {
			c, ok = lib(id)
		}
		if !ok {
			bad("cells.pick", "unknown", fmt.Sprintf("has %q, which is not in the cell library", id))
			continue
		}
		d.Cells = append(d.Cells, c)
		out.sources = append(out.sources, id)
	}
	if c, ok := f.inlineCell(required, optional); ok {
		d.Cells = append(d.Cells, c)
		out.sources = append(out.sources, "")
	}
	for _, c := range f.carried {
		if f.keep[c.ID] {
			d.Cells = append(d.Cells, c)
			out.sources = append(out.sources, c.ID)
		}
	}
	out.problems = r.problems
	return out
}

// extraEmpty reports whether every field of own line i is empty.
func (f *designForm) extraEmpty(i int) bool {
	for _, fl := range extraFields {
		if strings.TrimSpace(f.value(extraName(i, fl.Name))) != "" {
			return false
		}
	}
	return true
}

// inlineCell reads the cell typed into the form; ok is false when every
// one of its fields is empty.
func (f *designForm) inlineCell(required func(string, unitSpec) float64, optional func(string, unitSpec) *float64) (sizing.Cell, bool) {
	return typedCell(f.value, "inline.", required, optional)
}

// typedCell reads a cell from the inputs named prefix + its keys (see
// cellFields); ok is false when every one of them is empty. required and
// optional parse a number by its input name, noting any problem.
func typedCell(value func(string) string, prefix string, required func(string, unitSpec) float64, optional func(string, unitSpec) *float64) (sizing.Cell, bool) {
	any := false
	for _, fl := range cellFields(prefix) {
		if strings.TrimSpace(value(fl.Name)) != "" {
			any = true
		}
	}
	if !any {
		return sizing.Cell{}, false
	}
	k := func(key string) string { return prefix + key }
	c := sizing.Cell{
		ID:                     strings.TrimSpace(value(k("id"))),
		Name:                   strings.TrimSpace(value(k("name"))),
		Source:                 value(k("source")),
		Notes:                  strings.TrimSpace(value(k("notes"))),
		RatedV:                 required(k("rated_v"), unitVolt),
		SurgeV:                 optional(k("surge_v"), unitVolt),
		CapacitanceF:           required(k("capacitance_f"), unitFarad),
		ESROhm:                 required(k("esr_ohm"), unitOhm),
		ColdESRFactor:          optional(k("cold_esr_factor"), unitFactor),
		ColdESRTempC:           optional(k("cold_esr_temp_c"), unitCelsius),
		LeakageA:               optional(k("leakage_a"), unitAmp),
		MaxCurrentA:            optional(k("max_current_a"), unitAmp),
		PeakCurrentA:           optional(k("peak_current_a"), unitAmp),
		ThermalResistanceKPerW: optional(k("thermal_resistance_k_per_w"), unitKPerW),
		MinTempC:               optional(k("min_temp_c"), unitCelsius),
		MaxTempC:               optional(k("max_temp_c"), unitCelsius),
		MassKg:                 optional(k("mass_kg"), unitKilogram),
		VolumeL:                optional(k("volume_l"), unitLitre),
		UnitPrice:              optional(k("unit_price"), unitCurrencyEa),
		RatedLifeH:             optional(k("rated_life_h"), unitHour),
		RatedLifeTempC:         optional(k("rated_life_temp_c"), unitCelsius),
		SpecificHeatJPerKgK:    optional(k("specific_heat_j_per_kg_k"), unitJPerKgK),
		Electrolyte:            value(k("electrolyte")),
	}
	minus := optional(k("capacitance_tolerance_pct[0]"), unitPercent)
	plus := optional(k("capacitance_tolerance_pct[1]"), unitPercent)
	switch {
	case minus != nil && plus != nil:
		c.CapacitanceTolerancePct = []float64{*minus, *plus}
	case minus != nil:
		c.CapacitanceTolerancePct = []float64{*minus} // sizing.Validate asks for both
	case plus != nil:
		c.CapacitanceTolerancePct = []float64{*plus}
	}
	return c, true
}

func ruleOf(err error) string {
	if err == errSIEmpty {
		return "required"
	}
	return "number"
}

var (
	stepValuePath = regexp.MustCompile(`^load\.steps\[(\d+)\]\.(power_w|current_a|resistance_ohm|rest)$`)
	cellPath      = regexp.MustCompile(`^cells\[(\d+)\](.*)$`)
	extraPath     = regexp.MustCompile(`^boq\.extras\[(\d+)\](.*)$`)
)

// formProblems translates sizing's field paths into the form's inputs: a
// step's power_w, current_a or resistance_ohm is its value input, a typed
// cell's keys are inline.*, a demo cell's problem goes to the cell picker
// naming the cell. Problems on a field that already failed to decode are
// dropped: the decoding message says what to fix first.
func formProblems(dec decoded, validation sizing.ValidationError) sizing.ValidationError {
	out := slices.Clone(dec.problems)
	seen := map[string]bool{}
	for _, p := range dec.problems {
		seen[p.Field] = true
	}
	for _, e := range validation {
		e.Field, e.Message = formPath(e.Field, e.Message, dec.sources, dec.extraIndex)
		if seen[e.Field] {
			continue
		}
		out = append(out, e)
	}
	return out
}

func formPath(path, msg string, sources []string, extraIndex []int) (string, string) {
	if m := stepValuePath.FindStringSubmatch(path); m != nil {
		return "load.steps[" + m[1] + "].value", msg
	}
	if m := extraPath.FindStringSubmatch(path); m != nil {
		k, _ := strconv.Atoi(m[1])
		if k < len(extraIndex) {
			return fmt.Sprintf("boq.extras[%d]%s", extraIndex[k], m[2]), msg
		}
	}
	if m := cellPath.FindStringSubmatch(path); m != nil {
		k, _ := strconv.Atoi(m[1])
		if k < len(sources) && sources[k] == "" {
			if m[2] == "" {
				return "inline.id", msg
			}
			return "inline" + m[2], msg
		}
		id := path
		if k < len(sources) {
			id = sources[k]
		}
		return "cells.pick", id + m[2] + ": " + msg
	}
	switch {
	case path == "cells" && strings.HasPrefix(msg, "must have at least"):
		return "cells.pick", "pick at least one cell, or enter a cell of your own below"
	case path == "cells":
		return "cells.pick", msg
	case path == "load.steps" && strings.HasPrefix(msg, "must have at least"):
		return path, "add at least one step"
	}
	return path, msg
}
