package web

import "strings"

// fieldKind is how a form field is typed.
type fieldKind int

const (
	kindNumber fieldKind = iota // a number with an optional SI prefix and unit
	kindCount                   // a whole number
	kindText                    // free text
	kindChoice                  // one of Choices
)

// choice is one option of a select.
type choice struct{ Value, Label string }

// field is one input of the design form. Its Name is the design file's JSON
// path, so a sizing.FieldError names the input directly.
type field struct {
	Name     string
	Label    string
	Hint     string // the default, or what the field means
	Kind     fieldKind
	Units    unitSpec
	Required bool
	Choices  []choice
}

// The design-wide fields, by form section.
var (
	nameField = field{Name: "name", Label: "Design name", Kind: kindText, Hint: "labels the report; optional"}

	windowFields = []field{
		{Name: "window.max_v", Label: "Window top", Units: unitVolt, Required: true,
			Hint: "charge voltage: the bank starts here, full"},
		{Name: "window.min_v", Label: "Window bottom", Units: unitVolt, Required: true,
			Hint: "converter cut-off: the terminal voltage stays at or above it"},
		{Name: "cell_max_v", Label: "Per-cell ceiling", Units: unitVolt,
			Hint: "empty: each cell's rated voltage"},
	}

	loadFields = []field{
		{Name: "load.efficiency", Label: "Converter efficiency", Units: unitFraction,
			Hint: "0.94 or 94 %; applies to power steps; empty: 1"},
		{Name: "load.repeat", Label: "Repeat the steps", Kind: kindCount, Units: unitCount,
			Hint: "times back to back; empty: 1"},
	}

	conditionFields = []field{
		{Name: "ambient_c", Label: "Ambient temperature", Units: unitCelsius, Hint: "empty: 25 °C"},
		{Name: "cold_c", Label: "Coldest temperature", Units: unitCelsius, Hint: "raises the ESR by each cell's cold factor; empty: no cold case"},
		{Name: "life_years", Label: "Required service life", Units: unitYear, Hint: "empty: not checked"},
		{Name: "standby_h", Label: "Standby hold without charger", Units: unitHour, Hint: "empty: not checked"},
	}

	eolFields = []field{
		{Name: "eol.capacitance_factor", Label: "Capacitance at end of life", Units: unitFactor,
			Hint: "× rated, e.g. 0.8 or 80 %; empty: 0.8"},
		{Name: "eol.esr_factor", Label: "ESR at end of life", Units: unitFactor,
			Hint: "× rated, e.g. 2; empty: 2"},
	}

	balancingFields = []field{
		{Name: "balancing.kind", Label: "Balancing", Kind: kindChoice, Choices: []choice{
			{"", "passive resistors (default)"}, {"passive", "passive resistors"}, {"active", "active circuits"}, {"none", "none"},
		}},
		{Name: "balancing.current_multiple", Label: "Resistor current", Units: unitFactor,
			Hint: "× the leakage spread; empty: 10"},
		{Name: "balancing.leakage_spread_a", Label: "Leakage spread", Units: unitAmp,
			Hint: "worst difference between two cells; empty: the cell's leakage"},
		{Name: "balancing.series", Label: "Resistor series", Kind: kindChoice, Choices: []choice{
			{"", "E24 (default)"}, {"E12", "E12"}, {"E24", "E24"}, {"E96", "E96"},
		}},
		{Name: "balancing.quiescent_a", Label: "Active circuit draw", Units: unitAmp,
			Hint: "per cell; needed for active balancing"},
	}

	lifeFields = []field{
		{Name: "life.temp_step_k", Label: "Life halves every", Units: unitKelvin, Hint: "of cell temperature; empty: 10 K"},
		{Name: "life.voltage_step_v", Label: "Life halves every", Units: unitVolt, Hint: "of cell voltage; empty: 0.2 V"},
	}

	boqFields = []field{
		{Name: "boq.currency", Label: "Currency", Kind: kindText, Hint: "a label for every price, e.g. EUR; no conversion"},
		{Name: "boq.link_unit_price", Label: "Interconnect link", Units: unitCurrencyEa, Hint: "price of one link"},
		{Name: "boq.resistor_unit_price", Label: "Balancing resistor", Units: unitCurrencyEa},
		{Name: "boq.balancer_unit_price", Label: "Active balancing circuit", Units: unitCurrencyEa},
		{Name: "boq.bleeder_unit_price", Label: "Service bleeder resistor", Units: unitCurrencyEa},
		{Name: "boq.bleeder_time_s", Label: "Bleeder discharge time", Units: unitSecond,
			Hint: "to the service voltage; empty: 300 s"},
	}

	rankField = field{Name: "rank_by", Label: "Recommend the bank with", Kind: kindChoice, Choices: []choice{
		{"", "lowest price (default)"}, {"cells", "fewest cells"}, {"mass", "least mass"}, {"volume", "least volume"},
	}}

	// stepKinds are the kinds of a load step and the unit of each value.
	stepKinds = []choice{
		{"power", "Power"}, {"current", "Current"}, {"resistance", "Resistance"}, {"rest", "Rest"},
	}

	pulseFields = []field{
		{Name: "pulse.kind", Label: "Pulse kind", Kind: kindChoice, Choices: stepKinds[:3]},
		{Name: "pulse.value", Label: "Pulse value", Units: unitNone, Hint: "W, A or Ω by the kind"},
		{Name: "pulse.duration_s", Label: "Pulse length", Units: unitSecond},
		{Name: "pulse.rest_s", Label: "Rest between pulses", Units: unitSecond},
		{Name: "pulse.count", Label: "Number of pulses", Kind: kindCount, Units: unitCount},
	}

	// inlineFields are the keys of one cell typed into the design form,
	// named inline.<cell key>.
	inlineFields = cellFields("inline.")

	// cellSources are where a cell's figures come from.
	cellSources = []choice{{"", "not said"}, {"datasheet", "a datasheet"}, {"measured", "a measurement"}, {"demo", "demo (invented)"}}

	// extraFields are the columns of a user's own line of the bill of
	// quantities, named boq.extras[i].<key>.
	extraFields = []field{
		{Name: "item", Label: "Item", Kind: kindText},
		{Name: "description", Label: "Description", Kind: kindText},
		{Name: "quantity", Label: "Quantity", Units: unitNone},
		{Name: "unit", Label: "Unit", Kind: kindText},
		{Name: "unit_price", Label: "Unit price", Units: unitCurrencyEa},
	}
)

// cellFields are the inputs of one cell, named prefix + its design-file key
// (the design form types one cell under "inline."; the library's cell form
// uses the bare keys).
func cellFields(prefix string) []field {
	return []field{
		{Name: prefix + "id", Label: "Id", Kind: kindText, Hint: "short and unique, e.g. my-cell"},
		{Name: prefix + "name", Label: "Name", Kind: kindText},
		{Name: prefix + "source", Label: "Figures from", Kind: kindChoice, Choices: cellSources},
		{Name: prefix + "rated_v", Label: "Rated voltage", Units: unitVolt},
		{Name: prefix + "surge_v", Label: "Surge voltage", Units: unitVolt},
		{Name: prefix + "capacitance_f", Label: "Capacitance", Units: unitFarad},
		{Name: prefix + "capacitance_tolerance_pct[0]", Label: "Capacitance tolerance, minus", Units: unitPercent, Hint: "e.g. -10"},
		{Name: prefix + "capacitance_tolerance_pct[1]", Label: "Capacitance tolerance, plus", Units: unitPercent, Hint: "e.g. 20"},
		{Name: prefix + "esr_ohm", Label: "ESR (DC)", Units: unitOhm},
		{Name: prefix + "cold_esr_factor", Label: "Cold ESR factor", Units: unitFactor, Hint: "ESR cold ÷ ESR at 25 °C"},
		{Name: prefix + "cold_esr_temp_c", Label: "Cold ESR measured at", Units: unitCelsius},
		{Name: prefix + "leakage_a", Label: "Leakage current", Units: unitAmp},
		{Name: prefix + "max_current_a", Label: "Continuous current", Units: unitAmp},
		{Name: prefix + "peak_current_a", Label: "Peak current", Units: unitAmp},
		{Name: prefix + "thermal_resistance_k_per_w", Label: "Thermal resistance", Units: unitKPerW},
		{Name: prefix + "min_temp_c", Label: "Lowest operating temperature", Units: unitCelsius},
		{Name: prefix + "max_temp_c", Label: "Highest operating temperature", Units: unitCelsius},
		{Name: prefix + "mass_kg", Label: "Mass", Units: unitKilogram},
		{Name: prefix + "volume_l", Label: "Volume", Units: unitLitre},
		{Name: prefix + "unit_price", Label: "Unit price", Units: unitCurrencyEa, Hint: "in your currency"},
		{Name: prefix + "rated_life_h", Label: "Rated life", Units: unitHour},
		{Name: prefix + "rated_life_temp_c", Label: "Rated life at", Units: unitCelsius},
		{Name: prefix + "specific_heat_j_per_kg_k", Label: "Specific heat", Units: unitJPerKgK, Hint: "empty: 1000"},
		{Name: prefix + "electrolyte", Label: "Electrolyte", Kind: kindChoice, Choices: []choice{
			{"", "not given"}, {"organic", "organic"}, {"aqueous", "aqueous"}, {"ionic-liquid", "ionic liquid"}, {"hybrid", "hybrid"},
		}},
		{Name: prefix + "notes", Label: "Notes", Kind: kindText, Hint: "free text, e.g. the datasheet's revision"},
	}
}

// stepValueUnit is the unit of a step's value by its kind.
func stepValueUnit(kind string) unitSpec {
	switch kind {
	case "power":
		return unitWatt
	case "current":
		return unitAmp
	case "resistance":
		return unitOhm
	}
	return unitNone
}

// fieldLabels maps every field name (and group name) to its label, for
// the problem summary.
var fieldLabels = func() map[string]string {
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
	}
	for _, group := range [][]field{{nameField, rankField}, windowFields, loadFields, conditionFields, eolFields, pulseFields, inlineFields, balancingFields, lifeFields, boqFields} {
		for _, f := range group {
			if _, ok := m[f.Name]; !ok {
				m[f.Name] = f.Label
			}
		}
	}
	return m
}()

// domID turns a field name into an HTML id fragment: load.steps[2].value
// becomes load-steps-2-value.
func domID(name string) string {
	r := strings.NewReplacer(".", "-", "[", "-", "]", "")
	return r.Replace(name)
}
