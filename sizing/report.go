package sizing

// Report is the outcome of sizing a design: one Candidate per cell, in rank
// order (feasible first, best first), and the recommended cell.
type Report struct {
	// Design is the design's name.
	Design string `json:"design"`
	// Currency is the design's boq.currency, the label of every price in
	// the report; empty when the design gives none.
	Currency string `json:"currency"`
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
	ProfileDurationS float64 `json:"profile_duration_s"`
	PassDurationS    float64 `json:"pass_duration_s"`
	Repeat           int     `json:"repeat"`
	// PeriodS is the design's load.period_s: the time from the start of one
	// event to the start of the next; nil: the pass repeats back to back.
	PeriodS    *float64    `json:"period_s"`
	Candidates []Candidate `json:"candidates"`
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
	// CeilingTempC, in °C, is the cell temperature the cell's voltage
	// derating was read at for CellCeilingV (the hottest cell: ambient
	// plus the ESR heating); nil for a cell without voltage_derating.
	CeilingTempC *float64 `json:"ceiling_temp_c"`
	// Modules is how the bank is built of the cell's modules; nil for
	// single cells.
	Modules *ModuleCount `json:"modules"`
	CellV   float64      `json:"cell_v"`
	// MinV, in V, is the window bottom this candidate was sized to: the
	// design's window.min_v, or, for a cell with its own floor (min_v),
	// series × that floor where it is higher.
	MinV float64 `json:"min_v"`
	// Limit names what set the parallel count: "voltage" (terminal voltage
	// reaches min_v), "power" (maximum-power point), "input_current" (the
	// converter's input current limit), "peak_current", "rms_current",
	// "temperature", or "" when one string is enough with margin; or, for
	// a bank that carries the pass but cannot be recharged between events,
	// "recharge".
	Limit string `json:"limit,omitempty"`
	// CapacitanceF, in F, and ESROhm, in Ω: the bank at beginning of life.
	CapacitanceF float64 `json:"capacitance_f"`
	ESROhm       float64 `json:"esr_ohm"`
	// WorstCapacitanceF and WorstESROhm: the bank at worst case.
	WorstCapacitanceF float64 `json:"worst_capacitance_f"`
	WorstESROhm       float64 `json:"worst_esr_ohm"`
	// ColdESRFactor is the cold factor applied to the ESR (1 when none),
	// ColdCapacitanceFactor the one applied to the capacitance (1 when
	// none) and ToleranceFactor the minus capacitance tolerance applied
	// (0.9 for −10 %; 1 when none or eol.apply_tolerance is false). The
	// worst-case capacitance is the rated one × the end-of-life factor ×
	// ToleranceFactor × ColdCapacitanceFactor.
	ColdESRFactor         float64 `json:"cold_esr_factor"`
	ColdCapacitanceFactor float64 `json:"cold_capacitance_factor"`
	ToleranceFactor       float64 `json:"tolerance_factor"`
	// WorstCase says in words what the worst case applied, e.g. "end of
	// life: capacitance ×0.8, ESR ×2; tolerance −10 %; at −30 °C: ESR
	// ×2.6, capacitance not derated (the cell gives no cold factor)".
	WorstCase string `json:"worst_case"`
	// LeakageOhm, in Ω, is the bank's leakage and balancing drain together,
	// as one resistance across the capacitor; nil when there is neither.
	LeakageOhm *float64 `json:"leakage_ohm"`
	// StoredEnergyJ = ½·C·max_v², beginning of life, in J.
	StoredEnergyJ float64 `json:"stored_energy_j"`
	// UsableEnergyJ = ½·C_w·(max_v² − min_v²), in J, at the worst-case
	// capacitance C_w and this candidate's window bottom.
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
	// MinCellV, in V, is the lowest cell terminal voltage over the sizing
	// pass: MinTerminalV / series (the cells of a string share it equally).
	MinCellV float64 `json:"min_cell_v"`
	// PeakCurrentA and RMSCurrentA, in A, are the bank's largest and RMS
	// current magnitude over the sizing pass at worst case; the Cell figures
	// divide them by the string count. The RMS is taken over RMSOverS: the
	// design's load.period_s when given (the bank idle between events), else
	// the pass, as if it repeated back to back.
	PeakCurrentA     float64 `json:"peak_current_a"`
	RMSCurrentA      float64 `json:"rms_current_a"`
	CellPeakCurrentA float64 `json:"cell_peak_current_a"`
	CellRMSCurrentA  float64 `json:"cell_rms_current_a"`
	RMSOverS         float64 `json:"rms_over_s"`
	// Energy bookkeeping over the sizing pass at worst case, in J: out of
	// (+) or into (−) the bank terminals (BankEnergyJ), delivered to (+) or
	// taken from (−) the load after the converter's efficiency
	// (LoadEnergyJ; the same as BankEnergyJ for current and resistor steps
	// and an efficiency of 1), lost in the ESR, lost in the leakage, and
	// offered by charging steps but not absorbed because the bank was held
	// at the window top.
	BankEnergyJ float64 `json:"bank_energy_j"`
	LoadEnergyJ float64 `json:"load_energy_j"`
	ESRLossJ    float64 `json:"esr_loss_j"`
	// WiringLossJ, in J, is what the wiring (links, string ends, bank
	// resistance) loses over the pass at worst case, apart from the cells'
	// ESRLossJ; 0 without wiring.
	WiringLossJ     float64 `json:"wiring_loss_j"`
	LeakageLossJ    float64 `json:"leakage_loss_j"`
	RejectedEnergyJ float64 `json:"rejected_energy_j"`
	// The charger's figures (nil without charger): RechargeS, in s, from
	// the end of the sizing pass at worst case back to the end of the
	// constant-voltage phase; FirstChargeS, in s, a new bank (nominal
	// capacitance and ESR) from 0 V to the same end; ChargeEnergyJ, in J,
	// what the recharge draws from the charger's supply (after
	// charger.efficiency); ChargeSeriesLossJ, in J, what it loses in the
	// cells' ESR and the wiring.
	RechargeS         *float64 `json:"recharge_s"`
	FirstChargeS      *float64 `json:"first_charge_s"`
	ChargeEnergyJ     *float64 `json:"charge_energy_j"`
	ChargeSeriesLossJ *float64 `json:"charge_series_loss_j"`
	// InrushCurrentA, in A, is the current into the empty bank when it is
	// connected: max_v over the bank's ESR and wiring at beginning of life
	// (a short through them), or the charger's current limit where lower.
	InrushCurrentA float64 `json:"inrush_current_a"`
	// Precharge is the resistor system.inrush_limit_a asks for; nil
	// without the limit.
	Precharge *Precharge `json:"precharge"`
	// Totals for the whole bank; nil when the cell does not give the figure.
	TotalPrice *float64 `json:"total_price"`
	MassKg     *float64 `json:"mass_kg"`
	VolumeL    *float64 `json:"volume_l"`
	// Thermal is the ESR heating of a cell; nil when the cell gives no
	// thermal resistance.
	Thermal *Thermal `json:"thermal"`
	// Spread is the worst cell voltage from the capacitance tolerance, an
	// extreme-stack bound (see Spread).
	Spread *Spread `json:"spread"`
	// Statistics are the lot figures: nil for a candidate not analysed
	// (by default only the recommended one is; see Design.Statistics).
	Statistics *LotStatistics `json:"statistics"`
	// Balancing is the balancing chosen for the strings.
	Balancing *BalancingResult `json:"balancing"`
	// Life is the expected life; nil when the cell gives no rated life.
	Life *Life `json:"life"`
	// Binding says what set the bank (the limit one string fewer fails
	// by, what set the series count and what one more series cell would
	// give), and Why the same in one line (for a cell no string count
	// carries, the reason and the series count).
	Binding *Binding `json:"binding"`
	Why     string   `json:"why"`
	// Hazards are the figures the safety flags judge.
	Hazards Hazards `json:"hazards"`
	Flags   []Flag  `json:"flags"`
}

// Thermal is the ESR heating of the hottest cell at worst case.
type Thermal struct {
	// CellRMSCurrentA and CellPeakCurrentA, in A, over the sizing pass.
	CellRMSCurrentA  float64 `json:"cell_rms_current_a"`
	CellPeakCurrentA float64 `json:"cell_peak_current_a"`
	// CellLossW and BankLossW, in W: I_rms²·ESR at the worst-case ESR.
	CellLossW float64 `json:"cell_loss_w"`
	BankLossW float64 `json:"bank_loss_w"`
	// SteadyRiseK, in K: ΔT = P·R_th with the RMS loss over the period
	// (load.period_s), or, with no period given, over the pass as if it
	// repeated back to back forever (BackToBack true): then a bound that a
	// one-shot event never reaches.
	SteadyRiseK float64 `json:"steady_rise_k"`
	BackToBack  bool    `json:"back_to_back"`
	// PeakRiseK, in K: the highest rise over the pass by the first-order
	// model from ambient; DutyPeakRiseK the highest rise once the events
	// have reached their periodic steady state: the pass and its idle time
	// repeating every load.period_s, or, with no period, the steps
	// repeating back to back (nil for repeat 1 and no period).
	PeakRiseK     float64  `json:"peak_rise_k"`
	DutyPeakRiseK *float64 `json:"duty_peak_rise_k"`
	// HotSpotC, in °C: ambient + the larger of the two peak rises.
	HotSpotC float64 `json:"hot_spot_c"`
	// TimeConstantS, in s: τ = R_th·m·c_p; nil without the cell's mass (the
	// peak is then the steady rise, the cautious limit).
	TimeConstantS *float64 `json:"time_constant_s"`
	// SpecificHeatJPerKgK used, and whether it was the default.
	SpecificHeatJPerKgK float64 `json:"specific_heat_j_per_kg_k"`
	SpecificHeatDefault bool    `json:"specific_heat_default"`
}

// Spread is the voltage of the worst cell when a string is charged with no
// balancing acting: the cell of lowest capacitance among cells of the
// highest, all carrying the same charge. It is a bound that no real lot
// reaches (its cells spread far less than their tolerance band); the
// cell-overvoltage flag judges the lot figures (LotStatistics) instead.
type Spread struct {
	// WorstCellV, in V, at the window top.
	WorstCellV float64 `json:"worst_cell_v"`
	// MinusPct and PlusPct are the tolerance used.
	MinusPct float64 `json:"minus_pct"`
	PlusPct  float64 `json:"plus_pct"`
}

// BalancingResult is the balancing of each string.
type BalancingResult struct {
	// Kind: "passive", "active" or "none".
	Kind string `json:"kind"`
	// Series is the preferred-value series of a passive resistor.
	Series string `json:"series,omitempty"`
	// ResistorOhm, in Ω, is the resistor across each cell; RuleOhm the value
	// from the current multiple and BoundOhm the worst-case bound (nil when
	// the string has no headroom below the ceiling).
	ResistorOhm *float64 `json:"resistor_ohm"`
	RuleOhm     *float64 `json:"rule_ohm,omitempty"`
	BoundOhm    *float64 `json:"bound_ohm,omitempty"`
	// ResistorPowerW, in W, is the power rating chosen (2 × margin on
	// DissipationW, what each resistor dissipates at the window top).
	ResistorPowerW *float64 `json:"resistor_power_w"`
	DissipationW   *float64 `json:"dissipation_w,omitempty"`
	// QuiescentA, in A, per active circuit.
	QuiescentA *float64 `json:"quiescent_a,omitempty"`
	// Count is the number of resistors or circuits in one string, one per
	// cell; BankCount in the whole bank (Count × strings).
	Count     int `json:"count"`
	BankCount int `json:"bank_count"`
	// LossW, in W, is the standing loss of one string's resistors or
	// circuits at the window top; BankLossW of the whole bank.
	LossW     float64 `json:"loss_w"`
	BankLossW float64 `json:"bank_loss_w"`
	// TimeConstantS, in s: R·C of one cell with its resistor (equalisation).
	TimeConstantS *float64 `json:"time_constant_s"`
	// ShelfHoldH, in h: how long the charged bank takes to fall from the
	// window top to the window bottom through leakage and balancing, at
	// worst-case capacitance, with no load; nil when it never does.
	ShelfHoldH *float64 `json:"shelf_hold_h"`
	// LeakageSpreadA, in A, is the spread the resistor was sized for.
	LeakageSpreadA float64 `json:"leakage_spread_a"`
	// WorstStaticCellV, in V, is the highest cell voltage after a long hold
	// at the window top with that leakage spread (REFERENCES.md 5.5): every
	// other cell leaking the spread more than one, a bound; the lot figure
	// is LotStatistics.StandbyMaxCellV.
	WorstStaticCellV *float64 `json:"worst_static_cell_v"`
	// Alternatives, given with the balancing-loss warning, are the same
	// cell sized with one more cell in series (passive) and with active
	// balancing, so the cost of each choice is visible.
	Alternatives []BalancingAlternative `json:"alternatives,omitempty"`
}

// BalancingAlternative is a candidate's cell sized again with another
// balancing choice.
type BalancingAlternative struct {
	// Kind: "passive" (Series is then one more than the candidate's) or
	// "active".
	Kind     string `json:"kind"`
	Series   int    `json:"series"`
	Parallel int    `json:"parallel"`
	Cells    int    `json:"cells"`
	// Feasible is false when the alternative cannot carry the load.
	Feasible bool `json:"feasible"`
	// ResistorOhm, in Ω, for passive; QuiescentA, in A per cell, for
	// active, with QuiescentAssumed true when the design gave none and
	// capbank took AssumedActiveQuiescentA.
	ResistorOhm      *float64 `json:"resistor_ohm,omitempty"`
	QuiescentA       *float64 `json:"quiescent_a,omitempty"`
	QuiescentAssumed bool     `json:"quiescent_assumed,omitempty"`
	// BankLossW, in W: the standing drain of the whole bank's balancing at
	// the window top.
	BankLossW float64 `json:"bank_loss_w"`
	// ShelfHoldH, in h, and RuntimeS, in s, as the candidate's.
	ShelfHoldH *float64 `json:"shelf_hold_h"`
	RuntimeS   *float64 `json:"runtime_s"`
	// TotalPrice of the cells, as the candidate's.
	TotalPrice *float64 `json:"total_price"`
}

// Life is the expected service life of the cells.
type Life struct {
	// ExpectedH and ExpectedYears: the rules-of-thumb life, capped at
	// CeilingYears (life.max_years); AtLeast is true when it was capped,
	// and the figure then means "at least".
	ExpectedH     float64 `json:"expected_h"`
	ExpectedYears float64 `json:"expected_years"`
	AtLeast       bool    `json:"at_least"`
	CeilingYears  float64 `json:"ceiling_years"`
	// TemperatureC and CellV, the conditions the life was scaled to.
	TemperatureC float64 `json:"temperature_c"`
	CellV        float64 `json:"cell_v"`
	// DesignYears is the design's life_years, if given.
	DesignYears *float64 `json:"design_years"`
}

// Hazards are the figures the safety flags judge, with the thresholds.
type Hazards struct {
	// MaxV, in V, the bank voltage at the window top.
	MaxV float64 `json:"max_v"`
	// StoredEnergyJ, in J, at the window top, beginning of life.
	StoredEnergyJ float64 `json:"stored_energy_j"`
	// ShortCircuitCurrentA, in A: max_v / bank ESR at beginning of life.
	ShortCircuitCurrentA float64 `json:"short_circuit_current_a"`
	// CellEnergyWh, in Wh: ½·C·U_R²/3600 per cell, as UN SP 361 counts it.
	CellEnergyWh float64 `json:"cell_energy_wh"`
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
	// Message says what was found, with the figure, the threshold and its
	// source.
	Message string `json:"message"`
	// Caution, where someone can be hurt, says what to do and defers to
	// local codes and licensed practice.
	Caution string `json:"caution,omitempty"`
}

// Curve is a decimated worst-case trace of the sizing pass: time in s,
// terminal and capacitor voltage in V, bank current in A (positive out of
// the bank). Every point is on the exact solution.
type Curve struct {
	TimeS      []float64 `json:"time_s"`
	TerminalV  []float64 `json:"terminal_v"`
	CapacitorV []float64 `json:"capacitor_v"`
	CurrentA   []float64 `json:"current_a"`
	// TemperatureC is the hottest cell's temperature, °C, by the thermal
	// model (each step heating at its mean loss); absent when the cell gives
	// no thermal resistance.
	TemperatureC []float64 `json:"temperature_c,omitempty"`
	Decimated    bool      `json:"decimated"`
	MaxV         float64   `json:"max_v"`
	MinV         float64   `json:"min_v"`
}
