package sizing

// Report is the outcome of sizing a design: one Candidate per cell, in rank
// order (feasible first, best first), and the recommended cell.
type Report struct {
	// Design is the design's name.
	Design string `json:"design"`
	// Recommended is the id of the best feasible cell, or nil when no
	// candidate can carry the load.
	Recommended *string `json:"recommended"`
	// SeriesRule says how the series count was judged.
	RankBy string `json:"rank_by"`
	// Window and the worst-case assumptions, as applied.
	MaxV                 float64  `json:"max_v"`
	MinV                 float64  `json:"min_v"`
	EOLCapacitanceFactor float64  `json:"eol_capacitance_factor"`
	EOLESRFactor         float64  `json:"eol_esr_factor"`
	ColdC                *float64 `json:"cold_c"`
	// ProfileDurationS, in s, is one pass of the steps; PassDurationS is the
	// sizing pass, steps × repeat.
	ProfileDurationS float64     `json:"profile_duration_s"`
	PassDurationS    float64     `json:"pass_duration_s"`
	Repeat           int         `json:"repeat"`
	Candidates       []Candidate `json:"candidates"`
	// Curve is the worst-case pass of the recommended bank, for charts;
	// nil when nothing is recommended.
	Curve *Curve `json:"curve,omitempty"`
}

// Candidate is one cell sized for the design. Bank figures are at the bank
// terminals. "Worst case" means end of life (and cold, when the design gives
// a cold temperature); figures not marked so are at beginning of life.
type Candidate struct {
	CellID   string `json:"cell_id"`
	CellName string `json:"cell_name,omitempty"`
	// Feasible is true when the bank carries the whole sizing pass at worst
	// case; otherwise Reason says why not.
	Feasible bool   `json:"feasible"`
	Reason   string `json:"reason,omitempty"`
	// Series is the cell count per string, Parallel the string count, Cells
	// their product.
	Series   int `json:"series"`
	Parallel int `json:"parallel"`
	Cells    int `json:"cells"`
	// CellCeilingV, in V, is the per-cell ceiling the series count used;
	// CellV the per-cell voltage at the window top (max_v / series).
	CellCeilingV float64 `json:"cell_ceiling_v"`
	CellV        float64 `json:"cell_v"`
	// Limit names what set the parallel count: "voltage" (terminal voltage
	// reaches min_v), "power" (maximum-power point), "peak_current",
	// "rms_current", or "" when one string is enough with margin.
	Limit string `json:"limit,omitempty"`
	// CapacitanceF, in F, and ESROhm, in Ω: the bank at beginning of life.
	CapacitanceF float64 `json:"capacitance_f"`
	ESROhm       float64 `json:"esr_ohm"`
	// WorstCapacitanceF and WorstESROhm: the bank at worst case.
	WorstCapacitanceF float64 `json:"worst_capacitance_f"`
	WorstESROhm       float64 `json:"worst_esr_ohm"`
	// ColdESRFactor is the cold factor applied to the ESR (1 when none).
	ColdESRFactor float64 `json:"cold_esr_factor"`
	// LeakageOhm, in Ω, is the bank's leakage as a parallel resistance; nil
	// when the cell gives no leakage current.
	LeakageOhm *float64 `json:"leakage_ohm"`
	// StoredEnergyJ = ½·C·max_v², beginning of life, in J.
	StoredEnergyJ float64 `json:"stored_energy_j"`
	// UsableEnergyJ = ½·C_eol·(max_v² − min_v²), in J.
	UsableEnergyJ float64 `json:"usable_energy_j"`
	// RuntimeS, in s, is the worst-case time the steps, repeated back to
	// back, run before the terminal voltage falls to min_v or the power
	// limit is met; nil when not within 10^7 s (RuntimeLimitS).
	RuntimeS *float64 `json:"runtime_s"`
	// RuntimeEnd says what ended the runtime: "voltage", "power", or "" for
	// nil. RuntimeEstimated is true when the runtime came from averaging the
	// drain per period over many periods rather than running each one.
	RuntimeEnd       string `json:"runtime_end,omitempty"`
	RuntimeEstimated bool   `json:"runtime_estimated,omitempty"`
	// MinTerminalV, in V, is the lowest terminal voltage over the sizing
	// pass at worst case; EndCapacitorV the capacitor voltage at its end.
	MinTerminalV  float64 `json:"min_terminal_v"`
	EndCapacitorV float64 `json:"end_capacitor_v"`
	// PeakCurrentA and RMSCurrentA, in A, are the bank's largest and RMS
	// current magnitude over the sizing pass at worst case; the Cell figures
	// divide them by the string count.
	PeakCurrentA     float64 `json:"peak_current_a"`
	RMSCurrentA      float64 `json:"rms_current_a"`
	CellPeakCurrentA float64 `json:"cell_peak_current_a"`
	CellRMSCurrentA  float64 `json:"cell_rms_current_a"`
	// Energy bookkeeping over the sizing pass at worst case, in J: delivered
	// to (+) or taken from (−) the load at the bank terminals, lost in the
	// ESR, lost in the leakage, and offered by charging steps but not
	// absorbed because the bank was held at the window top.
	DeliveredEnergyJ float64 `json:"delivered_energy_j"`
	ESRLossJ         float64 `json:"esr_loss_j"`
	LeakageLossJ     float64 `json:"leakage_loss_j"`
	RejectedEnergyJ  float64 `json:"rejected_energy_j"`
	// Totals for the whole bank; nil when the cell does not give the figure.
	TotalPrice *float64 `json:"total_price"`
	MassKg     *float64 `json:"mass_kg"`
	VolumeL    *float64 `json:"volume_l"`
	Flags      []Flag   `json:"flags"`
}

// Severity grades a Flag.
type Severity string

const (
	Info    Severity = "info"
	Warning Severity = "warning"
	Danger  Severity = "danger"
)

// Flag is a finding about a candidate that the engineer should read.
type Flag struct {
	Code     string   `json:"code"`
	Severity Severity `json:"severity"`
	Message  string   `json:"message"`
}

// Curve is a decimated worst-case trace of the sizing pass: time in s,
// terminal and capacitor voltage in V, bank current in A (positive out of
// the bank). Every point is on the exact solution.
type Curve struct {
	TimeS      []float64 `json:"time_s"`
	TerminalV  []float64 `json:"terminal_v"`
	CapacitorV []float64 `json:"capacitor_v"`
	CurrentA   []float64 `json:"current_a"`
	Decimated  bool      `json:"decimated"`
	MaxV       float64   `json:"max_v"`
	MinV       float64   `json:"min_v"`
}
