package form

import "strings"

// FieldKind is how a form field is typed.
type FieldKind int

const (
	KindNumber FieldKind = iota // a number with an optional SI prefix and unit
	KindCount                   // a whole number
	KindText                    // free text
	KindChoice                  // one of Choices
)

// Choice is one option of a select.
type Choice struct{ Value, Label string }

// Field is one input of the design form. Its Name is the design file's JSON
// path, so a sizing.FieldError names the input directly.
type Field struct {
	Name     string
	Label    string
	Hint     string // the default, or what the field means
	Kind     FieldKind
	Units    UnitSpec
	Required bool
	Choices  []Choice
	// Wide spans the input across its section, for a long value.
	Wide bool
}

// The design-wide fields, by form section.
var (
	NameField = Field{Name: "name", Label: "Design name", Kind: KindText, Hint: "labels the report; optional"}

	WindowFields = []Field{
		{Name: "window.max_v", Label: "Window top", Units: UnitVolt, Required: true,
			Hint: "charge voltage: the bank starts here, full, unless a start voltage is given"},
		{Name: "window.min_v", Label: "Window bottom", Units: UnitVolt, Required: true,
			Hint: "converter cut-off: the terminal voltage stays at or above it"},
		{Name: "cell_max_v", Label: "Per-cell ceiling", Units: UnitVolt,
			Hint: "empty: each cell's rated voltage"},
	}

	LoadFields = []Field{
		{Name: "load.efficiency", Label: "Converter efficiency", Units: UnitFraction,
			Hint: "0.94 or 94 %; applies to power steps; empty: 1, or the converter's efficiency curve"},
		{Name: "load.repeat", Label: "Repeat the steps", Kind: KindCount, Units: UnitCount,
			Hint: "times back to back; empty: 1"},
		{Name: "load.period_s", Label: "Time between events", Units: UnitSecond,
			Hint: "start of one event (steps × repeat) to the next, for RMS current and heat; empty: back to back"},
		{Name: "load.start_v", Label: "Start voltage", Units: UnitVolt,
			Hint: "bank voltage at rest when the load starts, e.g. a charger that stops short of the top; empty: the window top"},
	}

	ConditionFields = []Field{
		{Name: "ambient_c", Label: "Ambient temperature", Units: UnitCelsius, Hint: "empty: 25 °C"},
		{Name: "cold_c", Label: "Coldest temperature", Units: UnitCelsius, Hint: "raises the ESR by each cell's cold factor; empty: no cold case"},
		{Name: "life_years", Label: "Required service life", Units: UnitYear, Hint: "empty: not checked"},
		{Name: "standby_h", Label: "Standby hold without charger", Units: UnitHour, Hint: "empty: not checked"},
	}

	EOLFields = []Field{
		{Name: "eol.capacitance_factor", Label: "Capacitance at end of life", Units: UnitFactor,
			Hint: "× rated, e.g. 0.8 or 80 %; empty: 0.8"},
		{Name: "eol.esr_factor", Label: "ESR at end of life", Units: UnitFactor,
			Hint: "× rated, e.g. 2; empty: 2"},
		{Name: "eol.apply_tolerance", Label: "Capacitance tolerance", Kind: KindChoice, Choices: []Choice{
			{"", "apply the minus tolerance too (default)"}, {"false", "leave the tolerance out"},
		}},
	}

	BalancingFields = []Field{
		{Name: "balancing.kind", Label: "Balancing", Kind: KindChoice, Choices: []Choice{
			{"", "passive resistors (default)"}, {"passive", "passive resistors"}, {"active", "active circuits"}, {"none", "none"},
		}},
		{Name: "balancing.current_multiple", Label: "Resistor current", Units: UnitFactor,
			Hint: "× the leakage spread; empty: 10"},
		{Name: "balancing.leakage_spread_a", Label: "Leakage spread", Units: UnitAmp,
			Hint: "worst difference between two cells; empty: the cell's leakage"},
		{Name: "balancing.series", Label: "Resistor series", Kind: KindChoice, Choices: []Choice{
			{"", "E24 (default)"}, {"E12", "E12"}, {"E24", "E24"}, {"E96", "E96"},
		}},
		{Name: "balancing.quiescent_a", Label: "Active circuit draw", Units: UnitAmp,
			Hint: "per cell; needed for active balancing"},
		{Name: "balancing.max_loss_share", Label: "Warn when the resistors draw more than", Units: UnitFraction,
			Hint: "share of the load's mean power; empty: 1 %"},
		{Name: "balancing.min_time_constant_h", Label: "… or self-discharge faster than", Units: UnitHour,
			Hint: "R·C of a cell with its resistor; empty: 24 h"},
	}

	// StatisticsFields set the lot analysis (banks built from cells drawn
	// from a production lot).
	StatisticsFields = []Field{
		{Name: "statistics.samples", Label: "Lots drawn", Kind: KindCount, Units: UnitNone,
			Hint: "100 to 1 000 000; empty: 10 000, fewer on a long profile"},
		{Name: "statistics.seed", Label: "Random seed", Kind: KindCount, Units: UnitNone,
			Hint: "the same seed gives the same figures; empty: 1"},
		{Name: "statistics.target_yield", Label: "Target yield", Units: UnitFraction,
			Hint: "share of lots that must carry the load; empty: 99.9 %"},
		{Name: "statistics.candidates", Label: "Analyse", Kind: KindChoice, Choices: []Choice{
			{"", "recommended bank (default)"}, {"recommended", "recommended bank"}, {"all", "every feasible bank"}, {"none", "none"},
		}},
	}

	// ChargerFields, ConverterFields, WiringFields and SystemFields are the
	// bank in its system: its charger, the converter it feeds, the
	// resistance of what connects its cells and the supply it is connected
	// to.
	ChargerFields = []Field{
		{Name: "charger.current_a", Label: "Charger current limit", Units: UnitAmp,
			Hint: "constant-current setting; needed when any charger field is given; empty: no charger"},
		{Name: "charger.power_w", Label: "Charger power limit", Units: UnitWatt,
			Hint: "the current is then at most this power ÷ the bank voltage; empty: none"},
		{Name: "charger.end_current_pct", Label: "Charge ends at", Units: UnitPercent,
			Hint: "current, in % of the current limit at the window top, that ends the constant-voltage phase; empty: 5 %"},
		{Name: "charger.efficiency", Label: "Charger efficiency", Units: UnitFraction,
			Hint: "0.9 or 90 %, for the energy drawn from the supply; empty: 1"},
	}

	ConverterFields = []Field{
		{Name: "converter.min_input_v", Label: "Converter minimum input", Units: UnitVolt,
			Hint: "the converter stops below it, raising the window bottom; empty: the window bottom"},
		{Name: "converter.max_input_current_a", Label: "Converter input current limit", Units: UnitAmp,
			Hint: "a power step fails where it would draw more; empty: none"},
		{Name: "converter.efficiency_curve", Label: "Converter efficiency curve", Kind: KindText, Wide: true,
			Hint: "input voltage: efficiency, points separated by commas, e.g. 20 V: 88 %, 36 V: 93 %, 48 V: 95 % (or 48: 0.95); straight lines between the points; replaces Converter efficiency, which is then left empty; empty: that one figure"},
	}

	WiringFields = []Field{
		{Name: "wiring.link_resistance_ohm", Label: "Cell-to-cell link", Units: UnitOhm,
			Hint: "one link with its two contacts, e.g. 200 µΩ; a string of n cells has n − 1; empty: 0"},
		{Name: "wiring.string_resistance_ohm", Label: "String end connections", Units: UnitOhm,
			Hint: "both ends of one string together; empty: 0"},
		{Name: "wiring.bank_resistance_ohm", Label: "Bank series resistance", Units: UnitOhm,
			Hint: "busbar, fuse and cable in series with the whole bank; empty: 0"},
	}

	SystemFields = []Field{
		{Name: "system.inrush_limit_a", Label: "Inrush current limit", Units: UnitAmp,
			Hint: "most current the supply may see when an empty bank is connected; a precharge resistor is sized for it; empty: not limited"},
	}

	// ModuleFields round every candidate's series count to whole modules
	// of the design's own making (a cell's own module takes precedence).
	ModuleFields = []Field{
		{Name: "series_multiple", Label: "Series count in multiples of", Kind: KindCount, Units: UnitCount,
			Hint: "cells per module, e.g. 6: the series count rounds up to whole modules; a cell's own module takes precedence; empty: 1"},
		{Name: "series", Label: "Cells in series, forced", Kind: KindCount, Units: UnitCount,
			Hint: "sizes every cell at this series count (the explorer's banks open with it); refused where a cell's ceiling needs more; empty: the fewest the window top allows"},
	}

	LifeFields = []Field{
		{Name: "life.temp_step_k", Label: "Life halves every", Units: UnitKelvin, Hint: "of cell temperature; empty: 10 K"},
		{Name: "life.voltage_step_v", Label: "Life halves every", Units: UnitVolt, Hint: "of cell voltage; empty: 0.2 V"},
		{Name: "life.max_years", Label: "Life ceiling", Units: UnitYear, Hint: "longer is shown as at least this; empty: 15 years"},
	}

	BOQFields = []Field{
		{Name: "boq.currency", Label: "Currency", Kind: KindText, Hint: "a label for every price, e.g. EUR; no conversion"},
		{Name: "boq.link_unit_price", Label: "Interconnect link", Units: UnitCurrencyEa, Hint: "price of one link"},
		{Name: "boq.resistor_unit_price", Label: "Balancing resistor", Units: UnitCurrencyEa},
		{Name: "boq.balancer_unit_price", Label: "Active balancing circuit", Units: UnitCurrencyEa},
		{Name: "boq.bleeder_unit_price", Label: "Service bleeder resistor", Units: UnitCurrencyEa},
		{Name: "boq.bleeder_time_s", Label: "Bleeder discharge time", Units: UnitSecond,
			Hint: "to the service voltage; empty: 300 s"},
	}

	RankField = Field{Name: "rank_by", Label: "Recommend the bank with", Kind: KindChoice, Choices: []Choice{
		{"", "lowest price (default)"}, {"cells", "fewest cells"}, {"mass", "least mass"}, {"volume", "least volume"},
	}}

	// StepKinds are the kinds of a load step and the unit of each value.
	StepKinds = []Choice{
		{"power", "Power"}, {"current", "Current"}, {"resistance", "Resistance"}, {"rest", "Rest"},
	}

	PulseFields = []Field{
		{Name: "pulse.kind", Label: "Pulse kind", Kind: KindChoice, Choices: StepKinds[:3]},
		{Name: "pulse.value", Label: "Pulse value", Units: UnitNone, Hint: "W, A or Ω by the kind"},
		{Name: "pulse.duration_s", Label: "Pulse length", Units: UnitSecond},
		{Name: "pulse.rest_s", Label: "Rest between pulses", Units: UnitSecond},
		{Name: "pulse.count", Label: "Number of pulses", Kind: KindCount, Units: UnitCount},
	}

	// InlineFields are the keys of one cell typed into the design form,
	// named inline.<cell key>.
	InlineFields = CellFields("inline.")
	// InlineFigureFields and InlineModuleFields are InlineFields in the two
	// parts the form shows them in.
	InlineFigureFields = CellFigureFields("inline.")
	InlineModuleFields = CellModuleFields("inline.")

	// cellSources are where a cell's figures come from.
	cellSources = []Choice{{"", "not said"}, {"datasheet", "a datasheet"}, {"measured", "a measurement"}, {"demo", "demo (invented)"}}

	// ExtraFields are the columns of a user's own line of the bill of
	// quantities, named boq.extras[i].<key>.
	ExtraFields = []Field{
		{Name: "item", Label: "Item", Kind: KindText},
		{Name: "description", Label: "Description", Kind: KindText},
		{Name: "quantity", Label: "Quantity", Units: UnitNone},
		{Name: "unit", Label: "Unit", Kind: KindText},
		{Name: "unit_price", Label: "Unit price", Units: UnitCurrencyEa},
	}
)

// CellFields are the inputs of one cell, named prefix + its design-file key
// (the design form types one cell under "inline."; the library's cell form
// uses the bare keys): CellFigureFields, then CellModuleFields.
func CellFields(prefix string) []Field {
	return append(CellFigureFields(prefix), CellModuleFields(prefix)...)
}

// CellModuleFields are the keys of a cell's module, the folded "Module"
// part of a cell's inputs.
func CellModuleFields(prefix string) []Field {
	p := prefix + "module."
	return []Field{
		{Name: p + "series", Label: "Cells in series per module", Kind: KindCount, Units: UnitCount,
			Hint: "needed when any module field is given; the series count rounds up to whole modules; empty: single cells"},
		{Name: p + "parallel", Label: "Cells in parallel per module", Kind: KindCount, Units: UnitCount, Hint: "empty: 1"},
		{Name: p + "name", Label: "Module name", Kind: KindText, Hint: "labels the module in the bill of quantities"},
		{Name: p + "mass_kg", Label: "Module mass", Units: UnitKilogram, Hint: "cells included; empty: the cells' mass"},
		{Name: p + "volume_l", Label: "Module volume", Units: UnitLitre, Hint: "cells included; empty: the cells' volume"},
		{Name: p + "unit_price", Label: "Module unit price", Units: UnitCurrencyEa, Hint: "cells included; empty: the cells' price"},
	}
}

// CellFigureFields are a cell's inputs other than its module.
func CellFigureFields(prefix string) []Field {
	return []Field{
		{Name: prefix + "id", Label: "Id", Kind: KindText, Hint: "short and unique, e.g. my-cell"},
		{Name: prefix + "name", Label: "Name", Kind: KindText},
		{Name: prefix + "source", Label: "Figures from", Kind: KindChoice, Choices: cellSources},
		{Name: prefix + "rated_v", Label: "Rated voltage", Units: UnitVolt},
		{Name: prefix + "surge_v", Label: "Surge voltage", Units: UnitVolt},
		{Name: prefix + "min_v", Label: "Lowest cell voltage", Units: UnitVolt, Hint: "discharge floor; needed for a hybrid cell"},
		{Name: prefix + "capacitance_f", Label: "Capacitance", Units: UnitFarad},
		{Name: prefix + "capacitance_tolerance_pct[0]", Label: "Capacitance tolerance, minus", Units: UnitPercent, Hint: "e.g. -10"},
		{Name: prefix + "capacitance_tolerance_pct[1]", Label: "Capacitance tolerance, plus", Units: UnitPercent, Hint: "e.g. 20"},
		{Name: prefix + "capacitance_sigma_pct", Label: "Capacitance spread in a lot", Units: UnitPercent, Hint: "standard deviation; empty: 2 %"},
		{Name: prefix + "esr_ohm", Label: "ESR (DC)", Units: UnitOhm},
		{Name: prefix + "esr_sigma_pct", Label: "ESR spread in a lot", Units: UnitPercent, Hint: "standard deviation; empty: 5 %"},
		{Name: prefix + "cold_esr_factor", Label: "Cold ESR factor", Units: UnitFactor, Hint: "ESR cold ÷ ESR at 25 °C"},
		{Name: prefix + "cold_esr_temp_c", Label: "Cold ESR measured at", Units: UnitCelsius},
		{Name: prefix + "cold_capacitance_factor", Label: "Cold capacitance factor", Units: UnitFactor, Hint: "capacitance cold ÷ at 25 °C, at the same temperature"},
		{Name: prefix + "leakage_a", Label: "Leakage current", Units: UnitAmp},
		{Name: prefix + "leakage_sigma_pct", Label: "Leakage spread in a lot", Units: UnitPercent, Hint: "standard deviation; empty: 30 %"},
		{Name: prefix + "max_current_a", Label: "Continuous current", Units: UnitAmp},
		{Name: prefix + "peak_current_a", Label: "Peak current", Units: UnitAmp},
		{Name: prefix + "thermal_resistance_k_per_w", Label: "Thermal resistance", Units: UnitKPerW},
		{Name: prefix + "min_temp_c", Label: "Lowest operating temperature", Units: UnitCelsius},
		{Name: prefix + "max_temp_c", Label: "Highest operating temperature", Units: UnitCelsius},
		{Name: prefix + "voltage_derating", Label: "Voltage derating", Kind: KindText, Wide: true,
			Hint: "cell temperature: highest cell voltage, points separated by commas, e.g. 25 °C: 2.7 V, 65 °C: 2.5 V; read at the hottest cell, straight lines between the points, flat outside them; empty: the rated voltage at every temperature"},
		{Name: prefix + "mass_kg", Label: "Mass", Units: UnitKilogram},
		{Name: prefix + "volume_l", Label: "Volume", Units: UnitLitre},
		{Name: prefix + "unit_price", Label: "Unit price", Units: UnitCurrencyEa, Hint: "in your currency"},
		{Name: prefix + "rated_life_h", Label: "Rated life", Units: UnitHour},
		{Name: prefix + "rated_life_temp_c", Label: "Rated life at", Units: UnitCelsius},
		{Name: prefix + "specific_heat_j_per_kg_k", Label: "Specific heat", Units: UnitJPerKgK, Hint: "empty: 1000"},
		{Name: prefix + "electrolyte", Label: "Electrolyte", Kind: KindChoice, Choices: []Choice{
			{"", "not given"}, {"organic", "organic"}, {"aqueous", "aqueous"}, {"ionic-liquid", "ionic liquid"}, {"hybrid", "hybrid"},
		}},
		{Name: prefix + "notes", Label: "Notes", Kind: KindText, Hint: "free text, e.g. the datasheet's revision"},
	}
}

// StepValueUnit is the unit of a step's value by its kind.
func StepValueUnit(kind string) UnitSpec {
	switch kind {
	case "power":
		return UnitWatt
	case "current":
		return UnitAmp
	case "resistance":
		return UnitOhm
	}
	return UnitNone
}

// FieldLabels maps every field name (and group name) to its label, for
// the problem summary.
var FieldLabels = func() map[string]string {
	m := map[string]string{
		"cells.pick":                       "Candidate cells",
		"load.steps":                       "Load steps",
		"profile_csv":                      "Profile file",
		"inline.capacitance_tolerance_pct": "Capacitance tolerance",
		"design":                           "Design",
		"design_file":                      "Design file",
		"boq.extras":                       "Own lines",
		"balancing.current_multiple":       "Balancing resistor current",
		"balancing.leakage_spread_a":       "Balancing leakage spread",
		"balancing.series":                 "Balancing resistor series",
		"balancing.quiescent_a":            "Active balancing circuit draw",
		"life.temp_step_k":                 "Life halves every (temperature)",
		"life.voltage_step_v":              "Life halves every (voltage)",
		"balancing.max_loss_share":         "Balancing loss threshold",
		"balancing.min_time_constant_h":    "Balancing self-discharge threshold",
	}
	for _, group := range [][]Field{{NameField, RankField}, WindowFields, LoadFields, ConditionFields, EOLFields, PulseFields, InlineFields, BalancingFields, StatisticsFields,
		ChargerFields, ConverterFields, WiringFields, SystemFields, ModuleFields, LifeFields, BOQFields} {
		for _, f := range group {
			if _, ok := m[f.Name]; !ok {
				m[f.Name] = f.Label
			}
		}
	}
	return m
}()

// DomID turns a field name into an HTML id fragment: load.steps[2].value
// becomes load-steps-2-value.
func DomID(name string) string { return domIDReplacer.Replace(name) }

// domIDReplacer is built once: a strings.Replacer builds its tables on
// first use, which cost more than the replacing on every field of a page.
var domIDReplacer = strings.NewReplacer(".", "-", "[", "-", "]", "")
