package form

import (
	"bytes"
	"encoding/json"
	"fmt"
	"net/url"
	"slices"
	"strings"

	"capbank/components/figures"
	"capbank/sizing"
)

// MaxDesignFile is the largest design file the page opens; larger designs
// go through the JSON API or capbank size.
const MaxDesignFile = 4 << 20

// openDesign reads an uploaded design file into a new form. A file that
// cannot be read, or that the form cannot show without losing part of it,
// leaves the form as it was with the reason beside the file input.
func (f *Form) openDesign(fh *Upload, lib CellLookup) *Form {
	if fh == nil || len(fh.Data) == 0 {
		f.actionProblem("design_file", "required", "choose a design file first (the JSON that capbank size reads)")
		return f
	}
	if len(fh.Data) > MaxDesignFile {
		f.actionProblem("design_file", "size", fmt.Sprintf("%s is %d bytes, more than the %d this page opens; size it with the JSON API or capbank size", fh.Filename, len(fh.Data), MaxDesignFile))
		return f
	}
	d, err := sizing.DecodeDesign(bytes.NewReader(fh.Data))
	if err != nil {
		f.actionProblem("design_file", "decode", fh.Filename+": "+OneLine(err))
		return f
	}
	nf, err := FromDesign(d, lib)
	if err != nil {
		f.actionProblem("design_file", "form", fh.Filename+": "+err.Error())
		return f
	}
	load := fmt.Sprintf("%d %s", len(d.Load.Steps), plural(len(d.Load.Steps), "step", "steps"))
	if d.Load.ProfileCSVText != "" {
		load = "a logged load profile"
	}
	nf.Notice = fmt.Sprintf("Opened %s: %s, %d candidate %s.", fh.Filename, load, len(d.Cells), plural(len(d.Cells), "cell", "cells"))
	return nf
}

// OneLine joins a multi-line error (a sizing.ValidationError) with "; ".
func OneLine(err error) string { return strings.ReplaceAll(err.Error(), "\n", "; ") }

// FromDesign is the form that decodes back into d: every key of the
// design file has its field. A cell goes to the library picks when the
// library holds the very same cell under its id, else into the typed-cell
// fields (the first such cell) or is kept as the file gave it. Library
// references the library does not know stay picked, and the form reports
// them. A design the form cannot show in full is an error, never a guess:
// a step that is not exactly one kind, a tolerance, an efficiency-curve or
// a voltage-derating point that is not a pair, more steps or own lines than
// the form edits.
func FromDesign(d *sizing.Design, lib CellLookup) (*Form, error) {
	if n := len(d.Load.Steps); n > MaxSteps {
		return nil, fmt.Errorf("has %d load steps, more than the %d this form edits; size it with the JSON API or capbank size", n, MaxSteps)
	}
	if d.Load.ProfileCSVText != "" && len(d.Load.Steps) > 0 {
		return nil, fmt.Errorf("gives both load.steps and a logged profile (load.profile_csv_text); keep one, then open it again")
	}
	if d.Load.ProfileCSV != "" {
		return nil, fmt.Errorf("names the profile file %q, which this page cannot read; load that CSV with \"Logged profile (CSV)\" instead, or size the design with capbank size", d.Load.ProfileCSV)
	}
	if d.Explore != nil {
		return nil, fmt.Errorf("sets explore, which this form has no field for; choose the explorer's objectives on the explorer page, or remove the key")
	}
	for _, c := range d.Cells {
		if c.Model != nil {
			return nil, fmt.Errorf("gives cell %q a %s model (cells[].model), which this form has no fields for; size it with the JSON API or capbank size, or remove the model to size the cell as its capacitance behind its ESR", c.ID, c.Model.Kind)
		}
	}
	if d.BOQ != nil && len(d.BOQ.Extras) > MaxExtras {
		return nil, fmt.Errorf("has %d own BOQ lines, more than %d", len(d.BOQ.Extras), MaxExtras)
	}
	v := url.Values{}
	num := func(key string, x float64) { v.Set(key, figures.Field(x)) }
	opt := func(key string, x *float64) {
		if x != nil {
			num(key, *x)
		}
	}
	text := func(key, s string) {
		if s != "" {
			v.Set(key, s)
		}
	}
	text("name", d.Name)
	num("window.max_v", d.Window.MaxV)
	num("window.min_v", d.Window.MinV)
	opt("cell_max_v", d.CellMaxV)
	opt("load.efficiency", d.Load.Efficiency)
	opt("load.period_s", d.Load.PeriodS)
	opt("load.start_v", d.Load.StartV)
	if d.Load.Repeat != nil {
		v.Set("load.repeat", fmt.Sprint(*d.Load.Repeat))
	}
	text(ProfileField, d.Load.ProfileCSVText)
	for i, s := range d.Load.Steps {
		p := fmt.Sprintf("load.steps[%d].", i)
		kinds := 0
		switch {
		case s.PowerW != nil:
			v.Set(p+"kind", "power")
			num(p+"value", *s.PowerW)
		case s.CurrentA != nil:
			v.Set(p+"kind", "current")
			num(p+"value", *s.CurrentA)
		case s.ResistanceOhm != nil:
			v.Set(p+"kind", "resistance")
			num(p+"value", *s.ResistanceOhm)
		case s.Rest:
			v.Set(p+"kind", "rest")
		}
		for _, given := range []bool{s.PowerW != nil, s.CurrentA != nil, s.ResistanceOhm != nil, s.Rest} {
			if given {
				kinds++
			}
		}
		if kinds != 1 {
			return nil, fmt.Errorf("has a step, load.steps[%d], that gives %d of power_w, current_a, resistance_ohm and rest instead of exactly one; fix the file first", i, kinds)
		}
		num(p+"duration_s", s.DurationS)
	}
	if d.EOL != nil {
		opt("eol.capacitance_factor", d.EOL.CapacitanceFactor)
		opt("eol.esr_factor", d.EOL.ESRFactor)
		if d.EOL.ApplyTolerance != nil {
			text("eol.apply_tolerance", fmt.Sprint(*d.EOL.ApplyTolerance))
		}
	}
	opt("ambient_c", d.AmbientC)
	opt("cold_c", d.ColdC)
	opt("life_years", d.LifeYears)
	opt("standby_h", d.StandbyH)
	if d.RankBy != "price" { // price is the default, which the form shows as its first Choice
		text("rank_by", d.RankBy)
	}
	if b := d.Balancing; b != nil {
		text("balancing.kind", b.Kind)
		opt("balancing.current_multiple", b.CurrentMultiple)
		opt("balancing.leakage_spread_a", b.LeakageSpreadA)
		text("balancing.series", b.Series)
		opt("balancing.quiescent_a", b.QuiescentA)
		opt("balancing.max_loss_share", b.MaxLossShare)
		opt("balancing.min_time_constant_h", b.MinTimeConstantH)
	}
	if st := d.Statistics; st != nil {
		if st.Samples != nil {
			v.Set("statistics.samples", fmt.Sprint(*st.Samples))
		}
		if st.Seed != nil {
			v.Set("statistics.seed", fmt.Sprint(*st.Seed))
		}
		opt("statistics.target_yield", st.TargetYield)
		text("statistics.candidates", st.Candidates)
	}
	if c := d.Charger; c != nil {
		num("charger.current_a", c.CurrentA)
		opt("charger.power_w", c.PowerW)
		opt("charger.end_current_pct", c.EndCurrentPct)
		opt("charger.efficiency", c.Efficiency)
	}
	if c := d.Converter; c != nil {
		opt("converter.min_input_v", c.MinInputV)
		opt("converter.max_input_current_a", c.MaxInputCurrentA)
		curve, err := EfficiencyCurve.Format(c.EfficiencyCurve)
		if err != nil {
			return nil, err
		}
		text("converter.efficiency_curve", curve)
	}
	if w := d.Wiring; w != nil {
		opt("wiring.link_resistance_ohm", w.LinkResistanceOhm)
		opt("wiring.string_resistance_ohm", w.StringResistanceOhm)
		opt("wiring.bank_resistance_ohm", w.BankResistanceOhm)
	}
	if sy := d.System; sy != nil {
		opt("system.inrush_limit_a", sy.InrushLimitA)
	}
	if d.Series != nil {
		v.Set("series", fmt.Sprint(*d.Series))
	}
	if d.SeriesMultiple != nil {
		v.Set("series_multiple", fmt.Sprint(*d.SeriesMultiple))
	}
	if l := d.Life; l != nil {
		opt("life.temp_step_k", l.TempStepK)
		opt("life.voltage_step_v", l.VoltageStepV)
		opt("life.max_years", l.MaxYears)
	}
	if b := d.BOQ; b != nil {
		text("boq.currency", b.Currency)
		opt("boq.link_unit_price", b.LinkUnitPrice)
		opt("boq.resistor_unit_price", b.ResistorUnitPrice)
		opt("boq.balancer_unit_price", b.BalancerUnitPrice)
		opt("boq.bleeder_unit_price", b.BleederUnitPrice)
		opt("boq.bleeder_time_s", b.BleederTimeS)
		for i, e := range b.Extras {
			text(extraName(i, "item"), e.Item)
			text(extraName(i, "description"), e.Description)
			num(extraName(i, "quantity"), e.Quantity)
			text(extraName(i, "unit"), e.Unit)
			opt(extraName(i, "unit_price"), e.UnitPrice)
		}
	}
	var carried []sizing.Cell
	inline := false
	for _, c := range d.Cells {
		if c.IsReference() {
			v.Add("cells.pick", c.ID)
			continue
		}
		if lib != nil && !slices.Contains(v["cells.pick"], c.ID) {
			if lc, ok := lib(c.ID); ok && SameCell(lc, c) {
				v.Add("cells.pick", c.ID)
				continue
			}
		}
		if !inline {
			if t := c.CapacitanceTolerancePct; len(t) != 0 && len(t) != 2 {
				return nil, fmt.Errorf("cell %q: capacitance_tolerance_pct must be a pair [minus, plus] (found %d values); fix the file first", c.ID, len(t))
			}
			inline = true
			if err := InlineValues(v, c); err != nil {
				return nil, fmt.Errorf("cell %q %w", c.ID, err)
			}
			continue
		}
		carried = append(carried, c)
		v.Add("carried.keep", c.ID)
	}
	if len(carried) > 0 {
		b, err := json.Marshal(carried)
		if err != nil {
			return nil, err
		}
		v.Set("carried", string(b))
	}
	return Read(v), nil
}

// InlineValues writes cell c into the typed-cell fields.
func InlineValues(v url.Values, c sizing.Cell) error { return CellValues(v, "inline.", c) }

// CellValues writes cell c into the inputs named prefix + its keys (see
// CellFields), each number as typed so that it reads back exactly. A
// voltage derating point that is not a pair is an error (the field cannot
// show it), worded to follow the cell's name.
func CellValues(v url.Values, prefix string, c sizing.Cell) error {
	set := func(key string, x *float64) {
		if x != nil {
			v.Set(prefix+key, figures.Field(*x))
		}
	}
	v.Set(prefix+"id", c.ID)
	if c.Name != "" {
		v.Set(prefix+"name", c.Name)
	}
	if c.Source != "" {
		v.Set(prefix+"source", c.Source)
	}
	if c.Notes != "" {
		v.Set(prefix+"notes", c.Notes)
	}
	if c.Electrolyte != "" {
		v.Set(prefix+"electrolyte", c.Electrolyte)
	}
	v.Set(prefix+"rated_v", figures.Field(c.RatedV))
	v.Set(prefix+"capacitance_f", figures.Field(c.CapacitanceF))
	v.Set(prefix+"esr_ohm", figures.Field(c.ESROhm))
	if t := c.CapacitanceTolerancePct; len(t) == 2 {
		v.Set(prefix+"capacitance_tolerance_pct[0]", figures.Field(t[0]))
		v.Set(prefix+"capacitance_tolerance_pct[1]", figures.Field(t[1]))
	}
	set("surge_v", c.SurgeV)
	set("min_v", c.MinV)
	set("cold_esr_factor", c.ColdESRFactor)
	set("cold_esr_temp_c", c.ColdESRTempC)
	set("cold_capacitance_factor", c.ColdCapacitanceFactor)
	set("leakage_a", c.LeakageA)
	set("capacitance_sigma_pct", c.CapacitanceSigmaPct)
	set("esr_sigma_pct", c.ESRSigmaPct)
	set("leakage_sigma_pct", c.LeakageSigmaPct)
	set("max_current_a", c.MaxCurrentA)
	set("peak_current_a", c.PeakCurrentA)
	set("thermal_resistance_k_per_w", c.ThermalResistanceKPerW)
	set("min_temp_c", c.MinTempC)
	set("max_temp_c", c.MaxTempC)
	set("mass_kg", c.MassKg)
	set("volume_l", c.VolumeL)
	set("unit_price", c.UnitPrice)
	set("rated_life_h", c.RatedLifeH)
	set("rated_life_temp_c", c.RatedLifeTempC)
	set("specific_heat_j_per_kg_k", c.SpecificHeatJPerKgK)
	derating, err := VoltageDerating.Format(c.VoltageDerating)
	if err != nil {
		return err
	}
	if derating != "" {
		v.Set(prefix+"voltage_derating", derating)
	}
	if m := c.Module; m != nil {
		p := "module."
		v.Set(prefix+p+"series", fmt.Sprint(m.Series))
		if m.Parallel != nil {
			v.Set(prefix+p+"parallel", fmt.Sprint(*m.Parallel))
		}
		if m.Name != "" {
			v.Set(prefix+p+"name", m.Name)
		}
		set(p+"mass_kg", m.MassKg)
		set(p+"volume_l", m.VolumeL)
		set(p+"unit_price", m.UnitPrice)
	}
	return nil
}

// SameCell reports whether two cells are the same in every key of the
// design file.
func SameCell(a, b sizing.Cell) bool {
	ja, err1 := json.Marshal(a)
	jb, err2 := json.Marshal(b)
	return err1 == nil && err2 == nil && bytes.Equal(ja, jb)
}
