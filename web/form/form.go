package form

import (
	"fmt"
	"math"
	"net/url"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"

	"capbank/sizing"
)

// MaxSteps is the most step rows the form edits. A longer profile is
// loaded as a logged profile (ProfileField) instead.
const MaxSteps = 500

// ProfileField is the form's field that carries a loaded logged profile,
// the CSV text itself, under its design-file key; ProfileNameField the name
// of the file it came from, shown beside it.
const (
	ProfileField     = "load.profile_csv_text"
	ProfileNameField = "load.profile_name"
)

// MaxPulses is the most pulses the pulse-train shortcut expands at once.
const MaxPulses = 200

// MaxExtras is the most own lines of the bill of quantities the form
// edits, as many as a design may have.
const MaxExtras = 200

// StepRow is one load step as typed.
type StepRow struct {
	Kind, Value, Duration string
	// KindNote says why Value was cleared: the kind changed since the
	// form was last shown (KindChange).
	KindNote string
}

// KindChange is a step row read back with the kind it was shown with
// (the hidden load.steps[i].kind_was): when the kind has changed, a value
// typed for the old kind (350 W) is cleared rather than read in the new
// one's unit (350 A), and KindNote says so beside the value.
func KindChange(r StepRow, was string) StepRow {
	if was == "" || was == r.Kind || strings.TrimSpace(r.Value) == "" {
		return r
	}
	r.KindNote = "Cleared: the kind changed from " + kindWords(was) + " to " + kindWords(r.Kind) + "."
	if r.Kind == "rest" {
		r.KindNote = "Cleared: a rest step draws nothing."
	}
	r.Value = ""
	return r
}

// kindWords names a step kind with its unit: "power (W)".
func kindWords(kind string) string {
	for _, c := range StepKinds {
		if c.Value == kind {
			if u := StepValueUnit(kind).Unit; u != "" {
				return strings.ToLower(c.Label) + " (" + u + ")"
			}
			return strings.ToLower(c.Label)
		}
	}
	return kind
}

// CellLookup finds a library cell by its id.
type CellLookup func(id string) (sizing.Cell, bool)

// Form is the design form as submitted: every value as typed, so the
// page can show it again.
type Form struct {
	Vals  url.Values
	Steps []StepRow
	// Profile is the logged profile the load gives in place of Steps (the
	// CSV text, read by sizing.ParseProfileCSV when the design is sized);
	// "" when the load gives steps.
	Profile string
	// Extras are the indices of the own BOQ lines the form holds, in
	// order; a line keeps its index (its fields' names) for its life.
	Extras []int
	// pickOrder lists the picked library cells in the order posted.
	pickOrder []string
	Picked    map[string]bool
	// Carried are cells of an opened design that are neither library cells
	// nor the typed cell, kept as the file gave them; keep marks those
	// still in the design.
	Carried  []sizing.Cell
	Keep     map[string]bool
	Sort     string
	LastGood string
	// KeepsLast is set when the client keeps showing the results of
	// lastGood while the design has problems (the htmx results update):
	// then lastGood is not sized again, since only the status is sent.
	KeepsLast bool
	Notice    string
	// Problems are what reading the form found (too many steps); the
	// design cannot be sized until they are fixed. Decoding adds its own.
	Problems sizing.ValidationError
	// ActionProblems are what an action could not do (a bad pulse train or
	// profile file); the design itself is unchanged and still sized.
	ActionProblems sizing.ValidationError
}

var (
	stepField  = regexp.MustCompile(`^load\.steps\[(\d{1,9})\]\.(kind|kind_was|value|duration_s)$`)
	extraField = regexp.MustCompile(`^boq\.extras\[(\d{1,9})\]\.(item|description|quantity|unit|unit_price)$`)
)

// Read collects the submitted values. Step rows are ordered by their
// index and renumbered from 0, so a row removed in the page leaves no gap.
func Read(vals url.Values) *Form {
	f := &Form{Vals: vals, Picked: map[string]bool{}, Keep: map[string]bool{}}
	rows := map[int]*StepRow{}
	kindWas := map[int]string{}
	extras := map[int]bool{}
	overflow, extraOverflow := false, false
	for key, vs := range vals {
		if m := extraField.FindStringSubmatch(key); m != nil {
			i, _ := strconv.Atoi(m[1])
			if !extras[i] && strings.TrimSpace(vs[0]) != "" {
				if len(extras) >= MaxExtras {
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
			if len(rows) >= MaxSteps {
				overflow = true
				continue
			}
			r = &StepRow{}
			rows[i] = r
		}
		switch m[2] {
		case "kind":
			r.Kind = vs[0]
		case "kind_was":
			kindWas[i] = vs[0]
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
		f.Steps = append(f.Steps, KindChange(*rows[i], kindWas[i]))
	}
	if f.Profile = vals.Get(ProfileField); f.Profile != "" {
		f.Steps, overflow = nil, false // the page shows the profile, not steps
	}
	if overflow {
		f.problem("load.steps", "form_steps", fmt.Sprintf(
			"holds more than %d steps, the most this form edits; load a longer profile as a logged profile (CSV)", MaxSteps))
	}
	for i := range extras {
		f.Extras = append(f.Extras, i)
	}
	sort.Ints(f.Extras)
	if extraOverflow {
		f.problem("boq.extras", "form_extras", fmt.Sprintf("holds more than %d own lines, the most a design may have", MaxExtras))
	}
	for _, id := range vals["cells.pick"] {
		if !f.Picked[id] {
			f.Picked[id] = true
			f.pickOrder = append(f.pickOrder, id)
		}
	}
	if c := vals.Get("carried"); c != "" {
		if err := sizing.DecodeStrict([]byte(c), &f.Carried, "carried"); err != nil {
			f.Carried = nil
			f.problem("cells.pick", "carried", "the cells kept from the opened design file could not be read back; open the file again")
		}
	}
	for _, id := range vals["carried.keep"] {
		f.Keep[id] = true
	}
	f.Sort = vals.Get("sort")
	if vals.Has("sort_by") {
		f.Sort = vals.Get("sort_by")
	}
	if f.Sort == "rank" || !slices.Contains(SortOrders, f.Sort) {
		f.Sort = ""
	}
	f.LastGood = vals.Get("last_good")
	return f
}

// SortOrders are the orders of the candidates table; "" is the report's
// rank.
var SortOrders = []string{"", "price", "cells", "mass", "volume", "runtime"}

func (f *Form) Value(name string) string { return f.Vals.Get(name) }

// SavedID is the id of the saved design the form holds, "" for none (or a
// value that is no id, which the form then drops).
func (f *Form) SavedID() string {
	id := f.Value("saved_id")
	if n, err := strconv.ParseInt(id, 10, 64); err != nil || n <= 0 {
		return ""
	}
	return id
}

func (f *Form) problem(field, rule, msg string) {
	f.Problems = append(f.Problems, sizing.FieldError{Field: field, Rule: rule, Message: msg})
}

func (f *Form) actionProblem(field, rule, msg string) {
	f.ActionProblems = append(f.ActionProblems, sizing.FieldError{Field: field, Rule: rule, Message: msg})
}

// Uploads are the files a form post carries.
type Uploads struct{ Profile, Design *Upload }

// Apply carries out a form action: editing the step list or the own BOQ
// lines, expanding the pulse train, loading a profile CSV or opening a
// design file. An unknown action does nothing. It returns the form to
// show, which is f except after a design file opened.
func (f *Form) Apply(action string, files Uploads, lib CellLookup) *Form {
	verb, arg, _ := strings.Cut(action, ":")
	switch verb {
	case "open-design":
		return f.openDesign(files.Design, lib)
	case "add-extra":
		if len(f.Extras) >= MaxExtras {
			f.actionProblem("boq.extras", "form_extras", fmt.Sprintf("has %d own lines, the most a design may have", MaxExtras))
			return f
		}
		f.Extras = append(f.Extras, f.NextExtra())
		return f
	case "remove-extra":
		if n, err := strconv.Atoi(arg); err == nil {
			f.removeExtra(n)
		}
		return f
	}
	f.applyStep(verb, arg, files.Profile)
	return f
}

// NextExtra is the index of a new own line: one past the highest in use.
func (f *Form) NextExtra() int {
	if n := len(f.Extras); n > 0 {
		return f.Extras[n-1] + 1
	}
	return 0
}

// removeExtra drops own line i and its values.
func (f *Form) removeExtra(i int) {
	k := slices.Index(f.Extras, i)
	if k < 0 {
		return
	}
	f.Extras = slices.Delete(f.Extras, k, k+1)
	for _, fl := range ExtraFields {
		f.Vals.Del(extraName(i, fl.Name))
	}
}

func extraName(i int, key string) string { return fmt.Sprintf("boq.extras[%d].%s", i, key) }

func (f *Form) applyStep(verb, arg string, csv *Upload) {
	i, err := strconv.Atoi(arg)
	if err != nil || i < 0 || i >= len(f.Steps) {
		i = -1
	}
	switch verb {
	case "add-step":
		if len(f.Steps) >= MaxSteps {
			f.actionProblem("load.steps", "form_steps", fmt.Sprintf("has %d steps, the most this form edits", MaxSteps))
			return
		}
		kind := "power"
		if n := len(f.Steps); n > 0 && f.Steps[n-1].Kind != "" {
			kind = f.Steps[n-1].Kind
		}
		f.Steps = append(f.Steps, StepRow{Kind: kind})
	case "remove-step":
		if i >= 0 {
			f.Steps = slices.Delete(f.Steps, i, i+1)
		}
	case "step-up":
		if i > 0 {
			f.Steps[i-1], f.Steps[i] = f.Steps[i], f.Steps[i-1]
		}
	case "step-down":
		if i >= 0 && i+1 < len(f.Steps) {
			f.Steps[i], f.Steps[i+1] = f.Steps[i+1], f.Steps[i]
		}
	case "add-pulses":
		f.addPulses()
	case "load-csv":
		f.loadCSV(csv)
	case "remove-profile":
		f.removeProfile()
	}
}

// addPulses appends count × (pulse, rest) to the steps. When the steps are
// a single empty row (a new design), the pulses replace it.
func (f *Form) addPulses() {
	kind := f.Value("pulse.kind")
	if !slices.Contains([]string{"power", "current", "resistance"}, kind) {
		f.actionProblem("pulse.kind", "oneof", "must be one of: power, current, resistance")
		return
	}
	ok := true
	need := func(name string, u UnitSpec) {
		if _, err := ParseSI(f.Value(name), u); err != nil {
			ok = false
			f.actionProblem(name, "number", NumberMessage(err, u))
		}
	}
	need("pulse.value", StepValueUnit(kind))
	need("pulse.duration_s", UnitSecond)
	need("pulse.rest_s", UnitSecond)
	count, err := ParseCount(f.Value("pulse.count"), UnitCount)
	switch {
	case err != nil:
		ok = false
		f.actionProblem("pulse.count", "number", NumberMessage(err, UnitCount))
	case count < 1 || count > MaxPulses:
		ok = false
		f.actionProblem("pulse.count", "pulse_count", fmt.Sprintf(
			"must be from 1 to %d; for a longer train, add one pulse and its rest and set Repeat the steps", MaxPulses))
	}
	if !ok {
		return
	}
	if len(f.Steps) == 1 && f.Steps[0].Value == "" && f.Steps[0].Duration == "" {
		f.Steps = nil
	}
	if len(f.Steps)+2*count > MaxSteps {
		f.actionProblem("pulse.count", "form_steps", fmt.Sprintf(
			"%d pulses and their rests would make %d steps, more than the %d this form edits; use fewer pulses and Repeat the steps",
			count, len(f.Steps)+2*count, MaxSteps))
		return
	}
	for range count {
		f.Steps = append(f.Steps,
			StepRow{Kind: kind, Value: f.Value("pulse.value"), Duration: f.Value("pulse.duration_s")},
			StepRow{Kind: "rest", Duration: f.Value("pulse.rest_s")})
	}
	f.Notice = fmt.Sprintf("Added %d pulses of %s %s for %s s, each followed by %s s of rest (%d steps).",
		count, kind, strings.TrimSpace(f.Value("pulse.value")), strings.TrimSpace(f.Value("pulse.duration_s")),
		strings.TrimSpace(f.Value("pulse.rest_s")), 2*count)
}

// loadCSV makes a logged profile the load, in place of its steps or the
// profile loaded before. The profile stays one: the page carries its text
// and shows its summary, and sizing reads it as design files and the API
// do. A file that does not read as a profile leaves the load as it was,
// with the line and column of the first bad row beside the file input.
func (f *Form) loadCSV(fh *Upload) {
	if fh == nil || len(fh.Data) == 0 {
		f.actionProblem("profile_csv", "required", "choose a CSV file first (a header naming time_s and power_w or current_a)")
		return
	}
	text := string(fh.Data)
	p, err := sizing.ParseProfileCSVText(text)
	if err != nil {
		f.actionProblem("profile_csv", "csv", fh.Filename+": "+err.Error())
		return
	}
	f.Profile = text
	f.Vals.Set(ProfileField, f.Profile)
	f.Vals.Set(ProfileNameField, fh.Filename)
	f.Steps = nil
	f.Notice = fmt.Sprintf("Loaded %s as the load profile: %d rows of %s, %s s in all.",
		fh.Filename, p.Rows, p.Column, formatFloat(p.DurationS))
}

// removeProfile drops the logged profile and starts the load's steps
// afresh with one empty step.
func (f *Form) removeProfile() {
	if f.Profile == "" {
		return
	}
	f.Profile = ""
	f.Vals.Del(ProfileField)
	f.Vals.Del(ProfileNameField)
	f.Steps = []StepRow{{Kind: "power"}}
	f.Notice = "Removed the logged profile; enter the steps, or load another profile."
}

func formatFloat(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// NumberMessage is the message for a number field that did not parse.
func NumberMessage(err error, u UnitSpec) string {
	if err == ErrEmpty {
		if u.Unit != "" && u.Unit != "×" && u.Unit != "0–1" && u.Unit != "each" {
			return "is required; enter a number in " + u.Unit
		}
		return "is required; enter a number"
	}
	return err.Error()
}

// Decoded is the form turned into a design, with where each cell came from.
type Decoded struct {
	Design *sizing.Design
	// sources[k] is the library id of design.Cells[k] (or the id of a cell
	// kept from an opened file), or "" for the typed cell.
	Sources []string
	// extraIndex[k] is the form index of design.BOQ.Extras[k].
	ExtraIndex []int
	// Problems are the fields that did not decode.
	Problems sizing.ValidationError
}

// Decode turns the form into the design the command line would read. A
// value that is not a number is a problem named by its field; an empty
// optional field is nil (the default), never 0. A field that did not parse
// holds NaN, so sizing.Validate's cross-field rules, which skip non-finite
// values, do not report a second problem about it.
func (f *Form) Decode(lib CellLookup) Decoded {
	d := &sizing.Design{Name: strings.TrimSpace(f.Value("name"))}
	out := Decoded{Design: d}
	r := &FieldReader{Get: f.Value, Problems: slices.Clone(f.Problems)}
	bad, requiredText, required, optional, optionalCount := r.Bad, r.RequiredText, r.Required, r.Optional, r.OptionalCount
	d.Window.MaxV = required("window.max_v", UnitVolt)
	d.Window.MinV = required("window.min_v", UnitVolt)
	d.CellMaxV = optional("cell_max_v", UnitVolt)
	d.Load.Efficiency = optional("load.efficiency", UnitFraction)
	d.Load.Repeat = optionalCount("load.repeat")
	d.Load.PeriodS = optional("load.period_s", UnitSecond)
	d.Load.StartV = optional("load.start_v", UnitVolt)
	d.SeriesMultiple = optionalCount("series_multiple")
	d.Series = optionalCount("series")
	d.Load.ProfileCSVText = f.Profile
	for i, r := range f.Steps {
		p := fmt.Sprintf("load.steps[%d]", i)
		s := sizing.Step{DurationS: requiredText(p+".duration_s", r.Duration, UnitSecond)}
		switch r.Kind {
		case "power", "current", "resistance":
			v := requiredText(p+".value", r.Value, StepValueUnit(r.Kind))
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
		CapacitanceFactor: optional("eol.capacitance_factor", UnitFactor),
		ESRFactor:         optional("eol.esr_factor", UnitFactor),
	}
	switch f.Value("eol.apply_tolerance") {
	case "":
	case "false":
		no := false
		eol.ApplyTolerance = &no
	case "true":
		yes := true
		eol.ApplyTolerance = &yes
	default:
		bad("eol.apply_tolerance", "oneof", "must be one of: true, false")
	}
	if eol.CapacitanceFactor != nil || eol.ESRFactor != nil || eol.ApplyTolerance != nil {
		d.EOL = &eol
	}
	d.AmbientC = optional("ambient_c", UnitCelsius)
	d.ColdC = optional("cold_c", UnitCelsius)
	d.LifeYears = optional("life_years", UnitYear)
	d.StandbyH = optional("standby_h", UnitHour)
	switch rb := f.Value("rank_by"); rb {
	case "", "price", "cells", "mass", "volume":
		d.RankBy = rb
	default:
		bad("rank_by", "oneof", "must be one of: price, cells, mass, volume")
	}

	bal := sizing.Balancing{
		Kind:             f.Value("balancing.kind"),
		CurrentMultiple:  optional("balancing.current_multiple", UnitFactor),
		LeakageSpreadA:   optional("balancing.leakage_spread_a", UnitAmp),
		Series:           f.Value("balancing.series"),
		QuiescentA:       optional("balancing.quiescent_a", UnitAmp),
		MaxLossShare:     optional("balancing.max_loss_share", UnitFraction),
		MinTimeConstantH: optional("balancing.min_time_constant_h", UnitHour),
	}
	if bal != (sizing.Balancing{}) {
		d.Balancing = &bal
	}
	st := sizing.Statistics{
		Samples:     optionalCount("statistics.samples"),
		TargetYield: optional("statistics.target_yield", UnitFraction),
		Candidates:  f.Value("statistics.candidates"),
	}
	if seed := optionalCount("statistics.seed"); seed != nil {
		v := int64(*seed)
		st.Seed = &v
	}
	if st != (sizing.Statistics{}) {
		d.Statistics = &st
	}
	f.decodeSystem(d, r)
	life := sizing.LifeModel{
		TempStepK:    optional("life.temp_step_k", UnitKelvin),
		VoltageStepV: optional("life.voltage_step_v", UnitVolt),
		MaxYears:     optional("life.max_years", UnitYear),
	}
	if life != (sizing.LifeModel{}) {
		d.Life = &life
	}
	boq := sizing.BOQOptions{
		Currency:          strings.TrimSpace(f.Value("boq.currency")),
		LinkUnitPrice:     optional("boq.link_unit_price", UnitCurrencyEa),
		ResistorUnitPrice: optional("boq.resistor_unit_price", UnitCurrencyEa),
		BalancerUnitPrice: optional("boq.balancer_unit_price", UnitCurrencyEa),
		BleederUnitPrice:  optional("boq.bleeder_unit_price", UnitCurrencyEa),
		BleederTimeS:      optional("boq.bleeder_time_s", UnitSecond),
	}
	for _, i := range f.Extras {
		if f.ExtraEmpty(i) {
			continue
		}
		boq.Extras = append(boq.Extras, sizing.BOQExtra{
			Item:        strings.TrimSpace(f.Value(extraName(i, "item"))),
			Description: strings.TrimSpace(f.Value(extraName(i, "description"))),
			Quantity:    required(extraName(i, "quantity"), UnitNone),
			Unit:        strings.TrimSpace(f.Value(extraName(i, "unit"))),
			UnitPrice:   optional(extraName(i, "unit_price"), UnitCurrencyEa),
		})
		out.ExtraIndex = append(out.ExtraIndex, i)
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
		out.Sources = append(out.Sources, id)
	}
	if c, ok := TypedCell(r, "inline."); ok {
		d.Cells = append(d.Cells, c)
		out.Sources = append(out.Sources, "")
	}
	for _, c := range f.Carried {
		if f.Keep[c.ID] {
			d.Cells = append(d.Cells, c)
			out.Sources = append(out.Sources, c.ID)
		}
	}
	out.Problems = r.Problems
	return out
}

// decodeSystem reads the charger, converter, wiring and system fields;
// each group is nil when all its fields are empty. A charger given in
// part without its current limit is a problem on the current limit, never
// dropped.
func (f *Form) decodeSystem(d *sizing.Design, r *FieldReader) {
	cur := r.Optional("charger.current_a", UnitAmp)
	ch := sizing.Charger{
		PowerW:        r.Optional("charger.power_w", UnitWatt),
		EndCurrentPct: r.Optional("charger.end_current_pct", UnitPercent),
		Efficiency:    r.Optional("charger.efficiency", UnitFraction),
	}
	if cur != nil {
		ch.CurrentA = *cur
		d.Charger = &ch
	} else if ch != (sizing.Charger{}) {
		r.Bad("charger.current_a", "required", "is required when any charger field is given; enter the charger's current limit in A, or clear the other charger fields")
		ch.CurrentA = math.NaN()
		d.Charger = &ch
	}
	cv := sizing.Converter{
		MinInputV:        r.Optional("converter.min_input_v", UnitVolt),
		MaxInputCurrentA: r.Optional("converter.max_input_current_a", UnitAmp),
	}
	curve, err := EfficiencyCurve.Parse(f.Value("converter.efficiency_curve"))
	if err != nil {
		r.Bad("converter.efficiency_curve", "curve", err.Error())
	}
	cv.EfficiencyCurve = curve
	if cv.MinInputV != nil || cv.MaxInputCurrentA != nil || len(cv.EfficiencyCurve) > 0 {
		d.Converter = &cv
	}
	w := sizing.Wiring{
		LinkResistanceOhm:   r.Optional("wiring.link_resistance_ohm", UnitOhm),
		StringResistanceOhm: r.Optional("wiring.string_resistance_ohm", UnitOhm),
		BankResistanceOhm:   r.Optional("wiring.bank_resistance_ohm", UnitOhm),
	}
	if w != (sizing.Wiring{}) {
		d.Wiring = &w
	}
	if lim := r.Optional("system.inrush_limit_a", UnitAmp); lim != nil {
		d.System = &sizing.System{InrushLimitA: lim}
	}
}

// ExtraEmpty reports whether every field of own line i is empty.
func (f *Form) ExtraEmpty(i int) bool {
	for _, fl := range ExtraFields {
		if strings.TrimSpace(f.Value(extraName(i, fl.Name))) != "" {
			return false
		}
	}
	return true
}

// TypedCell reads a cell from the inputs named prefix + its keys (see
// CellFields) through r, which notes every problem by its input; ok is
// false when every one of them is empty. A module given in part without
// its cells in series is a problem on that field, never dropped.
func TypedCell(r *FieldReader, prefix string) (sizing.Cell, bool) {
	value, required, optional := r.Get, r.Required, r.Optional
	any := false
	for _, fl := range CellFields(prefix) {
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
		RatedV:                 required(k("rated_v"), UnitVolt),
		SurgeV:                 optional(k("surge_v"), UnitVolt),
		MinV:                   optional(k("min_v"), UnitVolt),
		CapacitanceF:           required(k("capacitance_f"), UnitFarad),
		ESROhm:                 required(k("esr_ohm"), UnitOhm),
		ColdESRFactor:          optional(k("cold_esr_factor"), UnitFactor),
		ColdESRTempC:           optional(k("cold_esr_temp_c"), UnitCelsius),
		ColdCapacitanceFactor:  optional(k("cold_capacitance_factor"), UnitFactor),
		LeakageA:               optional(k("leakage_a"), UnitAmp),
		MaxCurrentA:            optional(k("max_current_a"), UnitAmp),
		PeakCurrentA:           optional(k("peak_current_a"), UnitAmp),
		ThermalResistanceKPerW: optional(k("thermal_resistance_k_per_w"), UnitKPerW),
		MinTempC:               optional(k("min_temp_c"), UnitCelsius),
		MaxTempC:               optional(k("max_temp_c"), UnitCelsius),
		MassKg:                 optional(k("mass_kg"), UnitKilogram),
		VolumeL:                optional(k("volume_l"), UnitLitre),
		UnitPrice:              optional(k("unit_price"), UnitCurrencyEa),
		RatedLifeH:             optional(k("rated_life_h"), UnitHour),
		RatedLifeTempC:         optional(k("rated_life_temp_c"), UnitCelsius),
		SpecificHeatJPerKgK:    optional(k("specific_heat_j_per_kg_k"), UnitJPerKgK),
		CapacitanceSigmaPct:    optional(k("capacitance_sigma_pct"), UnitPercent),
		ESRSigmaPct:            optional(k("esr_sigma_pct"), UnitPercent),
		LeakageSigmaPct:        optional(k("leakage_sigma_pct"), UnitPercent),
		Electrolyte:            value(k("electrolyte")),
	}
	minus := optional(k("capacitance_tolerance_pct[0]"), UnitPercent)
	plus := optional(k("capacitance_tolerance_pct[1]"), UnitPercent)
	switch {
	case minus != nil && plus != nil:
		c.CapacitanceTolerancePct = []float64{*minus, *plus}
	case minus != nil:
		c.CapacitanceTolerancePct = []float64{*minus} // sizing.Validate asks for both
	case plus != nil:
		c.CapacitanceTolerancePct = []float64{*plus}
	}
	pts, err := VoltageDerating.Parse(value(k("voltage_derating")))
	if err != nil {
		r.Bad(k("voltage_derating"), "points", err.Error())
	}
	c.VoltageDerating = pts
	c.Module = typedModule(r, prefix+"module.")
	return c, true
}

// typedModule reads a cell's module from the inputs named prefix + its
// keys; nil when all are empty.
func typedModule(r *FieldReader, prefix string) *sizing.Module {
	m := sizing.Module{
		Name:      strings.TrimSpace(r.Get(prefix + "name")),
		Parallel:  r.OptionalCount(prefix + "parallel"),
		MassKg:    r.Optional(prefix+"mass_kg", UnitKilogram),
		VolumeL:   r.Optional(prefix+"volume_l", UnitLitre),
		UnitPrice: r.Optional(prefix+"unit_price", UnitCurrencyEa),
	}
	seriesText := strings.TrimSpace(r.Get(prefix + "series"))
	if series := r.OptionalCount(prefix + "series"); series != nil {
		m.Series = *series
		return &m
	}
	if m == (sizing.Module{}) && seriesText == "" && strings.TrimSpace(r.Get(prefix+"parallel")) == "" {
		return nil
	}
	if seriesText == "" {
		r.Bad(prefix+"series", "required", "is required when any module field is given; enter the module's cells in series, or clear the other module fields")
	}
	return &m // Series 0: the problem above, or the number's own, is already noted
}

func RuleOf(err error) string {
	if err == ErrEmpty {
		return "required"
	}
	return "number"
}

var (
	stepValuePath = regexp.MustCompile(`^load\.steps\[(\d+)\]\.(power_w|current_a|resistance_ohm|rest)$`)
	cellPath      = regexp.MustCompile(`^cells\[(\d+)\](.*)$`)
	extraPath     = regexp.MustCompile(`^boq\.extras\[(\d+)\](.*)$`)
	tablePoint    = regexp.MustCompile(`^(.*\b(?:efficiency_curve|voltage_derating))\[(\d+)\]$`)
)

// PointField is sizing's problem on one point of a point table
// (converter.efficiency_curve[1], inline.voltage_derating[0]) as the form
// shows it: on the table's field, naming the point by its number from 1.
// Any other path is returned as it is.
func PointField(path, msg string) (string, string) {
	if m := tablePoint.FindStringSubmatch(path); m != nil {
		k, _ := strconv.Atoi(m[2])
		return m[1], fmt.Sprintf("point %d %s", k+1, msg)
	}
	return path, msg
}

// MergeProblems translates sizing's field paths into the form's inputs: a
// step's power_w, current_a or resistance_ohm is its value input, a typed
// cell's keys are inline.*, a demo cell's problem goes to the cell picker
// naming the cell. The keys a message names become the fields' labels
// (PageMessage), with their values from the design. Problems on a field
// that already failed to decode are dropped: the decoding message says
// what to fix first.
func MergeProblems(dec Decoded, validation sizing.ValidationError) sizing.ValidationError {
	out := slices.Clone(dec.Problems)
	seen := map[string]bool{}
	for _, p := range dec.Problems {
		seen[p.Field] = true
	}
	var values Values
	if dec.Design != nil {
		values = ValuesOf(dec.Design)
	}
	for _, e := range validation {
		e.Message = PageMessage(e.Field, e.Message, values)
		e.Field, e.Message = formPath(e.Field, e.Message, dec.Sources, dec.ExtraIndex)
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
	path, msg = PointField(path, msg)
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
		part := m[2]
		if f, ok := cellKeys[strings.TrimPrefix(part, ".")]; ok {
			part = ", " + sentenceCase(f.Label)
		}
		return "cells.pick", id + part + ": " + msg
	}
	switch {
	case path == "cells" && strings.HasPrefix(msg, "must have at least"):
		return "cells.pick", "pick at least one cell, or enter a cell of your own below"
	case path == "cells":
		return "cells.pick", msg
	case path == "load.steps" && strings.HasPrefix(msg, "must have at least"):
		return path, "add at least one step, or load a logged profile (CSV)"
	case path == "load.profile_csv_text" || path == "load.profile_csv":
		return "profile_csv", msg
	}
	return path, msg
}

// Upload is one file of a form post, read into memory.
type Upload struct {
	Filename string
	Data     []byte
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
