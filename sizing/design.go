package sizing

import "capbank/sizing/cellmodel"

// Design is everything capbank needs to size a bank: the voltage window, the
// load profile, the worst-case factors and the candidate cells. It is the
// design file read by `capbank size` and posted to the web API.
//
// Optional numbers are pointers: nil means "not given" and takes the default
// documented on the field; a given zero is checked like any other value.
type Design struct {
	// Name labels the design in reports.
	Name string `json:"name" validate:"max=200"`
	// Window is the voltage window at the bank terminals.
	Window Window `json:"window"`
	// CellMaxV, in V, is the per-cell ceiling the series count is judged
	// against. nil: each cell's rated voltage. A ceiling above a cell's
	// rating is not used for that cell (its rating applies, with a flag).
	CellMaxV *float64 `json:"cell_max_v,omitempty" validate:"omitempty,finite,gt=0,gte=0.1,lte=1000"`
	// Load is the load profile the bank must carry.
	Load Load `json:"load"`
	// EOL holds the end-of-life factors. nil: the defaults of EOL.
	EOL *EOL `json:"eol,omitempty"`
	// AmbientC, in °C, is the ambient temperature. nil: 25 °C.
	AmbientC *float64 `json:"ambient_c,omitempty" validate:"omitempty,finite,gte=-100,lte=200"`
	// ColdC, in °C, is the coldest temperature the bank must work at. When
	// given, each cell's ESR is raised by its cold factor (see Cell).
	ColdC *float64 `json:"cold_c,omitempty" validate:"omitempty,finite,gte=-100,lte=200"`
	// RankBy orders the feasible candidates: "price" (default, lowest total
	// price), "cells" (fewest cells), "mass" or "volume" (least).
	RankBy string `json:"rank_by,omitempty" validate:"omitempty,oneof=price cells mass volume"`
	// LifeYears, in years, is the service life the bank must reach; when
	// given, a shorter expected life raises the life-short flag.
	LifeYears *float64 `json:"life_years,omitempty" validate:"omitempty,finite,gt=0,lte=100"`
	// StandbyH, in h, is how long the charged bank must hold on the shelf or
	// in standby, with no charger, above the window bottom; when given, a
	// shorter shelf hold time raises the self-discharge flag.
	StandbyH *float64 `json:"standby_h,omitempty" validate:"omitempty,finite,gt=0,lte=1000000"`
	// Balancing chooses how the cells of a string are balanced. nil: passive
	// resistors by the defaults of Balancing.
	Balancing *Balancing `json:"balancing,omitempty"`
	// Life holds the life-model factors. nil: the defaults of LifeModel.
	Life *LifeModel `json:"life,omitempty"`
	// BOQ holds the prices and extra lines of the bill of quantities.
	BOQ *BOQOptions `json:"boq,omitempty"`
	// Statistics sets the lot analysis (see Statistics). nil: the
	// defaults, on the recommended candidate only.
	Statistics *Statistics `json:"statistics,omitempty"`
	// SeriesMultiple rounds every candidate's series count up to a
	// multiple of it (modules of that many cells; a cell's own module
	// takes precedence). nil: 1.
	SeriesMultiple *int `json:"series_multiple,omitempty" validate:"omitempty,gte=1,lte=1000"`
	// Series forces the number of cells in series for every candidate in
	// place of the least the window top allows (see SeriesCount): more
	// cells run each below its ceiling. It is refused, by field, for a
	// cell whose ceiling it would pass at the window top. nil: the least.
	Series *int `json:"series,omitempty" validate:"omitempty,gte=1,lte=10000"`
	// Explore sets the design explorer's sweep (see ExploreOptions). nil:
	// the defaults; capbank size ignores it.
	Explore *ExploreOptions `json:"explore,omitempty"`
	// Charger charges the bank between events (see Charger). nil: no
	// charge figures.
	Charger *Charger `json:"charger,omitempty"`
	// Converter sets the limits of the converter between the bank and a
	// power load (see Converter). nil: none but load.efficiency.
	Converter *Converter `json:"converter,omitempty"`
	// Wiring adds the resistance of links and connections (see Wiring).
	// nil: none.
	Wiring *Wiring `json:"wiring,omitempty"`
	// System is what the bank connects to (see System). nil: nothing known.
	System *System `json:"system,omitempty"`
	// Cells are the candidate cells, each sized on its own.
	Cells []Cell `json:"cells" validate:"min=1,max=1000,dive"`
}

// BOQOptions are the purchasing inputs of a bill of quantities. Prices are
// in Currency, with no conversion; a price left out leaves its line unpriced
// (and the total marked incomplete), never zero.
type BOQOptions struct {
	// Currency is a label for every price, e.g. "EUR"; empty: none shown.
	Currency string `json:"currency,omitempty" validate:"max=12"`
	// LinkUnitPrice is the price of one interconnect link or busbar lug.
	LinkUnitPrice *float64 `json:"link_unit_price,omitempty" validate:"omitempty,finite,gte=0,lte=1e9"`
	// ResistorUnitPrice is the price of one balancing resistor;
	// BalancerUnitPrice of one active balancing circuit.
	ResistorUnitPrice *float64 `json:"resistor_unit_price,omitempty" validate:"omitempty,finite,gte=0,lte=1e9"`
	BalancerUnitPrice *float64 `json:"balancer_unit_price,omitempty" validate:"omitempty,finite,gte=0,lte=1e9"`
	// BleederUnitPrice is the price of the service bleeder resistor.
	BleederUnitPrice *float64 `json:"bleeder_unit_price,omitempty" validate:"omitempty,finite,gte=0,lte=1e9"`
	// BleederTimeS, in s, is how long the bleeder may take to bring the bank
	// to its service voltage (see BleederPlan). nil: 300 s.
	BleederTimeS *float64 `json:"bleeder_time_s,omitempty" validate:"omitempty,finite,gt=0,lte=1e6"`
	// Extras are lines the user adds: enclosure, fuses, monitoring.
	Extras []BOQExtra `json:"extras,omitempty" validate:"max=200,dive"`
}

// BOQExtra is a line the user adds to the bill of quantities.
type BOQExtra struct {
	Item        string   `json:"item" validate:"required,max=100"`
	Description string   `json:"description,omitempty" validate:"max=500"`
	Quantity    float64  `json:"quantity" validate:"finite,gt=0,lte=1e9"`
	Unit        string   `json:"unit,omitempty" validate:"max=20"`
	UnitPrice   *float64 `json:"unit_price,omitempty" validate:"omitempty,finite,gte=0,lte=1e9"`
}

// Balancing is how the cells of each string are kept near equal voltage.
type Balancing struct {
	// Kind: "passive" (a resistor across each cell, the default), "active"
	// (a balancing circuit per cell that draws QuiescentA), or "none".
	Kind string `json:"kind,omitempty" validate:"omitempty,oneof=passive active none"`
	// CurrentMultiple sets the passive resistor's current at the cell voltage
	// as a multiple of the leakage spread. nil: 10, the usual rule
	// (REFERENCES.md 5.4; common practice in supplier application notes).
	CurrentMultiple *float64 `json:"current_multiple,omitempty" validate:"omitempty,finite,gte=1,lte=1000"`
	// LeakageSpreadA, in A, is the worst difference in leakage current
	// between two cells of a string. nil: the cell's leakage_a, as if one
	// cell leaked nothing and another the datasheet maximum (the worst case).
	// At least 1 pA (MinLeakageA), or the resistor would be infinite.
	LeakageSpreadA *float64 `json:"leakage_spread_a,omitempty" validate:"omitempty,finite,gt=0,gte=1e-12,lte=1000"`
	// Series is the preferred-value series the resistor is rounded down to:
	// "E12", "E24" (default) or "E96" (IEC 60063).
	Series string `json:"series,omitempty" validate:"omitempty,oneof=E12 E24 E96"`
	// QuiescentA, in A, is what an active balancing circuit draws from its
	// cell; required for kind "active". Zero, or at least 1 pA
	// (MinLeakageA).
	QuiescentA *float64 `json:"quiescent_a,omitempty" validate:"omitempty,finite,gte=0,lte=10"`
	// MaxLossShare is the passive balancing's standing loss (the whole bank,
	// at the window top) as a share of the load's mean power over the pass
	// above which the balancing-loss warning is raised. nil:
	// DefaultBalancingMaxLossShare (1 %; common practice, no source).
	MaxLossShare *float64 `json:"max_loss_share,omitempty" validate:"omitempty,finite,gt=0,lte=1"`
	// MinTimeConstantH, in h, is the shortest self-discharge time constant
	// R·C of a cell with its passive balancing resistor below which the
	// balancing-loss warning is raised. nil: DefaultBalancingMinTimeConstantH
	// (24 h, a day; common practice, no source).
	MinTimeConstantH *float64 `json:"min_time_constant_h,omitempty" validate:"omitempty,finite,gt=0,lte=100000"`
}

// LifeModel holds the rules of thumb that scale a cell's rated life.
type LifeModel struct {
	// TempStepK, in K: life halves for each TempStepK of cell temperature
	// above the rated-life temperature (and doubles for each below). nil: 10,
	// REFERENCES.md 4.1 (common practice in supplier literature).
	TempStepK *float64 `json:"temp_step_k,omitempty" validate:"omitempty,finite,gte=1,lte=100"`
	// VoltageStepV, in V: life halves for each VoltageStepV of cell voltage
	// above the operating point below rated voltage (doubles for each below
	// the rating). nil: 0.2, the milder of the published steps (REFERENCES.md
	// 4.2 gives 0.1 V to 0.2 V), so derating is not over-credited.
	VoltageStepV *float64 `json:"voltage_step_v,omitempty" validate:"omitempty,finite,gte=0.01,lte=10"`
	// MaxYears, in years, is the calendar ceiling of the expected life: the
	// halving rules scale a rated life far past what any electrolyte and
	// seal are known to last, so a longer figure is reported as "at least
	// MaxYears" and never ranked. nil: DefaultLifeMaxYears (15 years;
	// common practice, no source).
	MaxYears *float64 `json:"max_years,omitempty" validate:"omitempty,finite,gt=0,lte=100"`
}

// Floors of the inputs that may be zero but not tiny: a value between zero
// and the floor is refused by field. Below them a drain's time constant or
// a constant-power step's 1/(P·(1 + R·g)) passes the largest float64.
const (
	// MinPowerW, in W, is the smallest power a step may give other than
	// zero: a femtowatt, far below any load's draw.
	MinPowerW = 1e-15
	// MinLeakageA, in A, is the smallest leakage, leakage spread or
	// balancing draw other than zero: a picoampere, below any cell's
	// leakage (the best leak nanoamperes).
	MinLeakageA = 1e-12
)

// Defaults of Balancing and LifeModel.
const (
	DefaultBalancingMultiple = 10.0
	DefaultBalancingSeries   = "E24"
	DefaultLifeTempStepK     = 10.0
	DefaultLifeVoltageStepV  = 0.2
	// DefaultLifeMaxYears is the calendar ceiling of the expected life
	// (common practice, no source: makers quote 10 to 20 years of
	// calendar life for EDLCs however lightly they are used).
	DefaultLifeMaxYears = 15.0
	// DefaultBalancingMaxLossShare and DefaultBalancingMinTimeConstantH
	// are the thresholds of the balancing-loss warning (common practice, no
	// source): passive balancing should cost under 1 % of the load's mean
	// power and leave each cell a self-discharge time constant of at
	// least a day.
	DefaultBalancingMaxLossShare     = 0.01
	DefaultBalancingMinTimeConstantH = 24.0
	// AssumedActiveQuiescentA, in A, is the draw per cell capbank assumes
	// for an active balancing circuit when it shows active balancing as an
	// alternative and the design gives no balancing.quiescent_a: 10 µA,
	// a typical figure for a shunt-regulator balancer (common practice, no
	// source).
	AssumedActiveQuiescentA = 10e-6
	// DefaultSpecificHeat, in J/(kg·K), is a cell's specific heat when the
	// cell does not give one: REFERENCES.md 8.5, an estimate from the mix of
	// aluminium, carbon and organic solvent (plausible range 900–1300).
	DefaultSpecificHeat = 1000.0
)

// Window is the voltage window at the bank terminals, in V: the bank starts
// at rest at MaxV (fully charged) and must keep its terminal voltage at or
// above MinV (the converter's cut-off) through the whole profile.
//
// Both are at least 1 mV: no converter works from less, and the floor
// bounds the current a power load draws at the window bottom
// (10⁹ W / 1 mV = 10¹² A), so every figure stays a finite number.
type Window struct {
	MaxV float64 `json:"max_v" validate:"finite,gt=0,gte=0.001,lte=100000"`
	MinV float64 `json:"min_v" validate:"finite,gt=0,gte=0.001,lte=100000"`
}

// Load is a load profile: ordered steps, run Repeat times back to back.
type Load struct {
	// Efficiency of the converter between the bank and a power load, as a
	// fraction in (0, 1]. A discharging power step draws power_w / efficiency
	// from the bank; a charging (negative) power step delivers
	// |power_w| × efficiency into it, since the converter loses energy both
	// ways. nil: 1, meaning power_w is already given at the bank terminals.
	// Current and resistance steps are at the bank terminals and ignore it.
	// At least 0.01: no converter runs at under 1 %, and P/η must stay a
	// finite number.
	Efficiency *float64 `json:"efficiency,omitempty" validate:"omitempty,finite,gt=0,gte=0.01,lte=1"`
	// Repeat is how many times the steps run in the sizing check. nil: 1.
	Repeat *int `json:"repeat,omitempty" validate:"omitempty,gte=1,lte=1000000"`
	// PeriodS, in s, is the time from the start of one event (the steps ×
	// repeat, the sizing pass) to the start of the next; between them the
	// bank is idle and held at the window top. The RMS current checked
	// against the cell's continuous rating and the thermal steady state are
	// taken over the period. At least the pass duration. nil: the pass is
	// taken as repeating back to back, the cautious assumption, and the
	// report says so.
	PeriodS *float64 `json:"period_s,omitempty" validate:"omitempty,finite,gt=0,lte=1e9"`
	// StartV, in V, is the capacitor voltage at rest when the sizing pass
	// starts, between window.min_v and window.max_v: a buffer or
	// regenerative bank starts part-charged so that it can absorb its
	// first charging step. nil: window.max_v.
	StartV *float64 `json:"start_v,omitempty" validate:"omitempty,finite,gt=0,lte=100000"`
	// Steps are the profile's steps in order. A load gives exactly one of
	// Steps, ProfileCSV or ProfileCSVText (see Validate).
	// Validate checks each step's tags with a plain loop (stepRules), not
	// by diving into the list.
	Steps []Step `json:"steps,omitempty" validate:"max=1000000"`
	// ProfileCSV names a logged profile CSV file (read by ParseProfileCSV)
	// beside the design file, its path relative to the design file's
	// folder, in place of Steps. sizing reads no files: the program that
	// reads the design file reads this one too and hands its text over
	// with AttachProfileFile; a design whose file was not read is refused.
	ProfileCSV string `json:"profile_csv,omitempty" validate:"max=4096"`
	// ProfileCSVText is a logged profile CSV itself, inline, in place of
	// Steps: Validate reads it with ParseProfileCSV into the steps sized.
	ProfileCSVText string `json:"profile_csv_text,omitempty"`
	// profile is ProfileCSVText read, as Validate left it (see profile.go).
	profile *loadedProfile
}

// Step is one piece of a load profile: exactly one of PowerW, CurrentA,
// ResistanceOhm or Rest, held for DurationS. A negative PowerW or CurrentA is
// energy flowing into the bank (a charger, regenerative braking).
type Step struct {
	// PowerW, in W, is a constant power at the converter output. Zero is
	// a rest; a power of less than 1e-15 W (a femtowatt) either way is
	// refused (see MinPowerW).
	PowerW *float64 `json:"power_w,omitempty" validate:"omitempty,finite,gte=-1e9,lte=1e9"`
	// CurrentA, in A, is a constant current at the bank terminals.
	CurrentA *float64 `json:"current_a,omitempty" validate:"omitempty,finite,gte=-1e6,lte=1e6"`
	// ResistanceOhm, in Ω, is a resistor across the bank terminals.
	ResistanceOhm *float64 `json:"resistance_ohm,omitempty" validate:"omitempty,finite,gt=0,lte=1e12"`
	// Rest means no load: only the bank's own drains act.
	Rest bool `json:"rest,omitempty"`
	// DurationS, in s, is how long the step lasts: at least 1 ns, below
	// which a cell is an inductance and a transmission line, not the
	// capacitor behind a resistance that capbank models.
	DurationS float64 `json:"duration_s" validate:"finite,gt=0,gte=1e-9,lte=1e9"`
}

// EOL holds the end-of-life factors applied to every cell for the worst case.
type EOL struct {
	// CapacitanceFactor multiplies the rated capacitance. nil: 0.8, the
	// usual end-of-life criterion of 80 % of the initial capacitance
	// (REFERENCES.md 4.4; common practice in supplier literature). At least
	// 0.1: a cell that has lost 90 % is far past any end-of-life criterion.
	CapacitanceFactor *float64 `json:"capacitance_factor,omitempty" validate:"omitempty,finite,gt=0,gte=0.1,lte=1"`
	// ESRFactor multiplies the rated ESR. nil: 2.0, the usual end-of-life
	// criterion of 200 % of the initial ESR (REFERENCES.md 4.4; common
	// practice in supplier literature).
	ESRFactor *float64 `json:"esr_factor,omitempty" validate:"omitempty,finite,gte=1,lte=100"`
	// ApplyTolerance: whether the cell's minus capacitance tolerance is
	// applied on top of CapacitanceFactor. End-of-life criteria are
	// relative to the cell's initial measured capacitance, which may sit
	// at the bottom of its tolerance (common practice, no source). nil:
	// true.
	ApplyTolerance *bool `json:"apply_tolerance,omitempty"`
}

// Default end-of-life factors: capacitance down to 80 %, ESR up to 200 % of
// the initial values (REFERENCES.md 4.4, common practice).
const (
	DefaultEOLCapacitanceFactor = 0.8
	DefaultEOLESRFactor         = 2.0
)

// Cell is one candidate cell as its datasheet (or a measurement) gives it.
type Cell struct {
	ID   string `json:"id" validate:"required,max=100"`
	Name string `json:"name,omitempty" validate:"max=200"`
	// Source says where the figures come from: "datasheet", "measured" or
	// "demo" (invented demo data). Empty: not said.
	Source string `json:"source,omitempty" validate:"omitempty,oneof=datasheet measured demo"`
	// Notes is free text: a measured cell's test summary, a datasheet's
	// revision.
	Notes string `json:"notes,omitempty" validate:"max=2000"`
	// RatedV, in V, is the rated (continuous) cell voltage: at least 0.1 V,
	// below any supercapacitor chemistry (aqueous cells rate about 1 V).
	RatedV float64 `json:"rated_v" validate:"finite,gt=0,gte=0.1,lte=1000"`
	// SurgeV, in V, is the surge voltage; at least RatedV.
	SurgeV *float64 `json:"surge_v,omitempty" validate:"omitempty,finite,gt=0,gte=0.1,lte=1000"`
	// CapacitanceF, in F, is the rated capacitance: at least 1 µF, a
	// thousandth of the smallest supercapacitor cells.
	CapacitanceF float64 `json:"capacitance_f" validate:"finite,gt=0,gte=1e-6,lte=1e6"`
	// CapacitanceTolerancePct is [minus, plus] in percent, e.g. [-10, 20].
	CapacitanceTolerancePct []float64 `json:"capacitance_tolerance_pct,omitempty" validate:"omitempty,len=2,dive,finite"`
	// ESROhm, in Ω, is the rated DC ESR (the datasheet maximum): at least
	// 1 µΩ, a hundredth of the lowest-ESR cells made. The floor keeps the
	// bank's short-circuit current max_v/R finite (10⁵ V over
	// 1 µΩ/10⁴ strings is 10¹⁵ A).
	ESROhm float64 `json:"esr_ohm" validate:"finite,gt=0,gte=1e-6,lte=10000"`
	// ColdESRFactor is the ESR at ColdESRTempC divided by the ESR at 25 °C.
	ColdESRFactor *float64 `json:"cold_esr_factor,omitempty" validate:"omitempty,finite,gte=1,lte=100"`
	// ColdESRTempC, in °C, is where ColdESRFactor was measured; below 25 °C.
	ColdESRTempC *float64 `json:"cold_esr_temp_c,omitempty" validate:"omitempty,finite,gte=-100,lt=25"`
	// ColdCapacitanceFactor is the capacitance at ColdESRTempC divided by
	// the capacitance at 25 °C, in (0, 1]; applied at the design's cold_c,
	// interpolated as the ESR factor is (see ColdFactor). Needs
	// ColdESRTempC.
	ColdCapacitanceFactor *float64 `json:"cold_capacitance_factor,omitempty" validate:"omitempty,finite,gt=0,lte=1"`
	// MinV, in V, is the lowest voltage the cell may be discharged to.
	// Required for hybrid (lithium-ion) cells, whose negative electrode is
	// damaged below it; optional for EDLCs, which may go to 0 V. A string
	// of n such cells raises the window bottom to n·MinV where that is
	// higher.
	MinV *float64 `json:"min_v,omitempty" validate:"omitempty,finite,gt=0,lte=1000"`
	// LeakageA, in A, is the leakage current at rated voltage. It is modelled
	// as a resistance RatedV/LeakageA across the capacitor. Zero, or at
	// least 1 pA (see MinLeakageA), and plausible: the self-discharge time
	// constant C·RatedV/LeakageA must be at least an hour
	// (MinSelfDischargeS).
	LeakageA *float64 `json:"leakage_a,omitempty" validate:"omitempty,finite,gte=0,lte=1000"`
	// MaxCurrentA, in A, is the maximum continuous current, checked against
	// the cell's RMS current over the sizing pass (it is a heating limit).
	MaxCurrentA *float64 `json:"max_current_a,omitempty" validate:"omitempty,finite,gt=0,lte=1e6"`
	// PeakCurrentA, in A, is the peak current, checked against the largest
	// cell current in the sizing pass.
	PeakCurrentA *float64 `json:"peak_current_a,omitempty" validate:"omitempty,finite,gt=0,lte=1e7"`
	// ThermalResistanceKPerW, in K/W, is the cell's thermal resistance to
	// ambient.
	ThermalResistanceKPerW *float64 `json:"thermal_resistance_k_per_w,omitempty" validate:"omitempty,finite,gt=0,lte=10000"`
	// MinTempC and MaxTempC, in °C, are the operating temperature range.
	MinTempC *float64 `json:"min_temp_c,omitempty" validate:"omitempty,finite,gte=-100,lte=200"`
	MaxTempC *float64 `json:"max_temp_c,omitempty" validate:"omitempty,finite,gte=-100,lte=200"`
	// MassKg, in kg, VolumeL, in L, and UnitPrice, in the user's currency,
	// are per cell.
	MassKg    *float64 `json:"mass_kg,omitempty" validate:"omitempty,finite,gt=0,lte=10000"`
	VolumeL   *float64 `json:"volume_l,omitempty" validate:"omitempty,finite,gt=0,lte=10000"`
	UnitPrice *float64 `json:"unit_price,omitempty" validate:"omitempty,finite,gte=0,lte=1e9"`
	// RatedLifeH, in h, is the rated life at rated voltage and
	// RatedLifeTempC (°C).
	// libraryRef marks a cell the design file named only by id ("cells":
	// ["id"]); ResolveCells fills it from a cell library.
	libraryRef bool
	// wholeLibrary marks the one reference a design file's "cells":
	// "library" decodes to: every cell of the library (see WantsLibrary).
	wholeLibrary   bool
	RatedLifeH     *float64 `json:"rated_life_h,omitempty" validate:"omitempty,finite,gt=0,lte=1e7"`
	RatedLifeTempC *float64 `json:"rated_life_temp_c,omitempty" validate:"omitempty,finite,gte=-100,lte=200"`
	// SpecificHeatJPerKgK, in J/(kg·K), with MassKg gives the cell's heat
	// capacity. nil: DefaultSpecificHeat.
	SpecificHeatJPerKgK *float64 `json:"specific_heat_j_per_kg_k,omitempty" validate:"omitempty,finite,gte=100,lte=10000"`
	// CapacitanceSigmaPct, ESRSigmaPct and LeakageSigmaPct are the standard
	// deviations of a production lot around the nominal capacitance, ESR
	// and leakage, in percent of nominal, for the lot analysis (see
	// Statistics). nil: DefaultCapacitanceSigmaPct (2 %),
	// DefaultESRSigmaPct (5 %), DefaultLeakageSigmaPct (30 %). Capacitance
	// draws are truncated to the tolerance band where the cell gives one.
	CapacitanceSigmaPct *float64 `json:"capacitance_sigma_pct,omitempty" validate:"omitempty,finite,gte=0,lte=30"`
	ESRSigmaPct         *float64 `json:"esr_sigma_pct,omitempty" validate:"omitempty,finite,gte=0,lte=30"`
	LeakageSigmaPct     *float64 `json:"leakage_sigma_pct,omitempty" validate:"omitempty,finite,gte=0,lte=100"`
	// Module, when the cell comes in modules, rounds the bank to whole
	// modules (see Module). nil: single cells.
	Module *Module `json:"module,omitempty"`
	// Model is the cell's equivalent circuit beyond the ideal RC: a
	// two-branch or three-branch model (see cellmodel.Spec for its keys).
	// nil: the ideal RC of CapacitanceF and ESROhm. With a model, the
	// sizing pass and the runtime are solved on it (see modelpass.go).
	Model *cellmodel.Spec `json:"model,omitempty"`
	// VoltageDerating is [[temp_c, max_cell_v], …] sorted by temperature:
	// the per-cell ceiling at the design's hottest cell temperature
	// (ambient plus the ESR heating), linear between the points and flat
	// outside them (see the report's ceiling_temp_c). nil: the rated
	// voltage at every temperature.
	VoltageDerating [][]float64 `json:"voltage_derating,omitempty" validate:"omitempty,max=100"`
	// Electrolyte: "organic" (flammable solvent, the usual EDLC), "aqueous",
	// "ionic-liquid" or "hybrid". Empty: not given, taken as organic for the
	// fire check (the usual and the more cautious case), with a flag.
	Electrolyte string `json:"electrolyte,omitempty" validate:"omitempty,oneof=organic aqueous ionic-liquid hybrid"`
}

// setReference makes c a reference to the library cell id, as a design
// file gives it ("cells": ["id"]); DecodeStrict calls it for a string
// where a cell is expected.
func (c *Cell) setReference(id string) { *c = Cell{ID: id, libraryRef: true} }

// IsReference reports whether the cell is only an id naming a cell of a
// library (the design file gave "cells": ["id"]), not yet resolved.
func (c *Cell) IsReference() bool { return c.libraryRef }

// ResolveCells replaces each cell the design named only by id with the
// library's cell of that id, as lookup returns it. Cells lookup does not
// know stay references, and Validate reports them.
func (d *Design) ResolveCells(lookup func(id string) (Cell, bool)) {
	for i := range d.Cells {
		if !d.Cells[i].libraryRef || d.Cells[i].wholeLibrary {
			continue
		}
		if c, ok := lookup(d.Cells[i].ID); ok {
			c.libraryRef = false
			d.Cells[i] = c
		}
	}
}

// LibraryCells is the design file's value of cells that asks for every
// cell of the cell library: "cells": "library".
const LibraryCells = "library"

// WantsLibrary reports whether the design file gave "cells": "library",
// asking for every cell of the cell library, not yet filled in.
func (d *Design) WantsLibrary() bool { return len(d.Cells) == 1 && d.Cells[0].wholeLibrary }

// UseLibrary makes the cells of a design that WantsLibrary the library's
// cells, in the order given.
func (d *Design) UseLibrary(cells []Cell) {
	d.Cells = make([]Cell, len(cells))
	copy(d.Cells, cells)
}
