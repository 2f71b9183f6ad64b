package components

// Option is one choice of a select.
type Option struct{ Value, Label string }

// MeasureRow is one figure of a measurement, display-ready: its label and
// its value with the unit.
type MeasureRow struct{ Name, Value string }

// CompareRow is one measured figure beside the datasheet's.
type CompareRow struct {
	Quantity, Unit, Measured, Stated, Deviation, Note string
	Within                                            bool
}

// MeasureProps feeds the measurement page.
type MeasureProps struct {
	CSS      string
	Methods  []Option
	Cells    []Option
	Values   map[string]string // what was typed
	Messages map[string]string // field → message
	Problems []string
	Done     bool
	Rows     []MeasureRow
	// HoldPoints are a hold's points: time, voltage, dV/dt, leakage,
	// parallel resistance, samples; empty for the other methods.
	HoldPoints [][]string
	Warnings   []string
	Comparison []CompareRow
	CellJSON   string // the measured cell as a library JSON import
	// SaveJSON is the measured cell as one cell's JSON, which "save to the
	// library" posts; CanSave is false when this capbank has no database.
	SaveJSON string
	CanSave  bool
}

func (p MeasureProps) value(k string) string { return p.Values[k] }

// measureFields are the number fields of the page: name, label, unit, hint.
var measureFields = [][4]string{
	{"rated_v", "Rated voltage", "V", "constant-current: sets U1 = 0.8·UR and U2 = 0.4·UR"},
	{"current_a", "Discharge current", "A", "constant-current, when the log has no current_a column"},
	{"resistor_ohm", "Discharge resistor", "Ω", "resistor and timed methods"},
	{"capacitance_f", "Cell capacitance", "F", "hold method: C in I = C·|dV/dt|"},
	{"at_s", "Leakage at times", "s", "hold method, comma separated; empty: 10, 50 and 90 % of the hold"},
	{"start_s", "Discharge start", "s", "optional: the switch-on time, when the log's own rule misses it"},
	{"v0_v", "Start voltage", "V", "timed method"},
	{"v1_v", "End voltage", "V", "timed method"},
	{"duration_s", "Time between readings", "s", "timed method"},
}
