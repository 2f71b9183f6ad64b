package sizing

import (
	"fmt"
	"math"
	"sort"
)

// The bank in its system: how it is charged (Charger), what draws from it
// (Converter), what connects it (Wiring) and what it is connected to
// (System). Each is optional; a design without them is sized as before.

// Charger is the bank's charger: constant current (or constant power,
// where PowerW limits) until the terminal voltage reaches window.max_v,
// then constant voltage at window.max_v until the current falls to
// EndCurrentPct of the limit, with the bank's leakage and balancing
// drains acting throughout.
type Charger struct {
	// CurrentA, in A, is the charger's current limit.
	CurrentA float64 `json:"current_a" validate:"finite,gt=0,lte=1e6"`
	// PowerW, in W, is the charger's output power limit; the current is
	// then min(CurrentA, PowerW / terminal voltage). nil: none.
	PowerW *float64 `json:"power_w,omitempty" validate:"omitempty,finite,gt=0,lte=1e9"`
	// EndCurrentPct, in percent of the current limit at window.max_v
	// (min(CurrentA, PowerW/max_v)), ends the constant-voltage phase. nil:
	// DefaultChargerEndCurrentPct (5 %).
	EndCurrentPct *float64 `json:"end_current_pct,omitempty" validate:"omitempty,finite,gt=0,lt=100"`
	// Efficiency, in (0, 1], turns the energy the charger delivers into the
	// energy it draws from its supply. nil: 1 (charge_energy_j is then at
	// the charger's output).
	Efficiency *float64 `json:"efficiency,omitempty" validate:"omitempty,finite,gte=0.01,lte=1"`
}

// DefaultChargerEndCurrentPct is the constant-voltage phase's end current
// in percent of the charger's current limit (common practice, no source:
// chargers commonly end at 2–10 % of their constant-current setting).
const DefaultChargerEndCurrentPct = 5.0

// Converter is the converter between the bank and a power load: it stops
// below MinInputV, cannot draw more than MaxInputCurrentA, and its
// efficiency may follow the input voltage.
type Converter struct {
	// MinInputV, in V, is the lowest input voltage the converter runs
	// from: the window bottom becomes max(window.min_v, MinInputV). nil:
	// window.min_v alone.
	MinInputV *float64 `json:"min_input_v,omitempty" validate:"omitempty,finite,gte=0.001,lte=100000"`
	// MaxInputCurrentA, in A, is the converter's input current limit: a
	// constant-power step fails where P/η / u exceeds it, u the terminal
	// voltage. nil: none.
	MaxInputCurrentA *float64 `json:"max_input_current_a,omitempty" validate:"omitempty,finite,gt=0,lte=1e7"`
	// EfficiencyCurve is [[input_v, efficiency], …] sorted by voltage:
	// the efficiency is linear between points and clamped outside them.
	// It replaces load.efficiency, which the design may then not give.
	EfficiencyCurve [][]float64 `json:"efficiency_curve,omitempty" validate:"omitempty,max=100"`
}

// Wiring is the resistance of what connects the cells, in Ω.
type Wiring struct {
	// LinkResistanceOhm is one cell-to-cell link (busbar, strap and its
	// two contacts); a string of s cells has s − 1.
	LinkResistanceOhm *float64 `json:"link_resistance_ohm,omitempty" validate:"omitempty,finite,gte=0,lte=1000"`
	// StringResistanceOhm is one string's two end connections together.
	StringResistanceOhm *float64 `json:"string_resistance_ohm,omitempty" validate:"omitempty,finite,gte=0,lte=1000"`
	// BankResistanceOhm is in series with the whole bank: busbar, fuse,
	// cable.
	BankResistanceOhm *float64 `json:"bank_resistance_ohm,omitempty" validate:"omitempty,finite,gte=0,lte=1000"`
}

// System is what the bank is connected to.
type System struct {
	// InrushLimitA, in A, is the most current the supply or the DC link
	// may see when an empty bank is connected to it: capbank sizes a
	// precharge resistor to keep the inrush within it. nil: none.
	InrushLimitA *float64 `json:"inrush_limit_a,omitempty" validate:"omitempty,finite,gt=0,lte=1e7"`
}

// wiringOhm returns the wiring's link, string and bank resistances (Ω),
// zero where not given.
func (d *Design) wiringOhm() (link, str, bank float64) {
	if w := d.Wiring; w != nil {
		link, str, bank = ptr0(w.LinkResistanceOhm), ptr0(w.StringResistanceOhm), ptr0(w.BankResistanceOhm)
	}
	return link, str, bank
}

// WiredBankESR returns the series resistance, in Ω, of parallel strings of
// series cells of ESR cellOhm with the wiring: a string is series × cell
// ESR + (series − 1) links + its two end connections, and the bank is the
// strings in parallel plus the bank's own resistance.
func WiredBankESR(cellOhm float64, series, parallel int, link, str, bank float64) float64 {
	s := float64(series)
	return (s*cellOhm+(s-1)*link+str)/float64(parallel) + bank
}

// efficiencyCurve is a converter's efficiency as a function of its input
// voltage: linear between the points, clamped outside them.
type efficiencyCurve struct {
	v, eta []float64
}

// newEfficiencyCurve reads [[input_v, efficiency], …]; nil for no curve.
// Validate has checked the points.
func newEfficiencyCurve(pts [][]float64) *efficiencyCurve {
	if len(pts) == 0 {
		return nil
	}
	c := &efficiencyCurve{v: make([]float64, len(pts)), eta: make([]float64, len(pts))}
	for i, p := range pts {
		c.v[i], c.eta[i] = p[0], p[1]
	}
	return c
}

// at returns the efficiency at input voltage u.
func (c *efficiencyCurve) at(u float64) float64 {
	n := len(c.v)
	if u <= c.v[0] {
		return c.eta[0]
	}
	if u >= c.v[n-1] {
		return c.eta[n-1]
	}
	i := sort.SearchFloat64s(c.v, u) // c.v[i-1] < u <= c.v[i]
	f := (u - c.v[i-1]) / (c.v[i] - c.v[i-1])
	return c.eta[i-1] + f*(c.eta[i]-c.eta[i-1])
}

// max returns the curve's highest efficiency.
func (c *efficiencyCurve) max() float64 {
	m := c.eta[0]
	for _, e := range c.eta[1:] {
		m = math.Max(m, e)
	}
	return m
}

// systemRules are the cross-field rules of the charger, converter, wiring,
// system and load.start_v.
func systemRules(d *Design) ValidationError {
	var errs ValidationError
	add := func(field, rule, format string, a ...any) {
		errs = append(errs, FieldError{Field: field, Rule: rule, Message: fmt.Sprintf(format, a...)})
	}
	w := d.Window
	windowOK := Finite(w.MaxV) && Finite(w.MinV) && w.MinV > 0 && w.MinV < w.MaxV
	if sv := d.Load.StartV; sv != nil && Finite(*sv) && *sv > 0 && windowOK {
		switch {
		case *sv > w.MaxV*(1+1e-12):
			add("load.start_v", "within_window", "is %g V, above window.max_v (%g V): the bank cannot start above the window top", *sv, w.MaxV)
		case *sv < w.MinV*(1-1e-12):
			add("load.start_v", "within_window", "is %g V, below window.min_v (%g V): the bank would start below the window bottom", *sv, w.MinV)
		}
	}
	for i, c := range d.Cells {
		if len(c.VoltageDerating) == 0 || len(cellSystemRules(&c, "")) > 0 || !Finite(w.MaxV) || !(w.MaxV > 0) {
			continue
		}
		lowest := math.Inf(1)
		for _, pt := range c.VoltageDerating {
			lowest = math.Min(lowest, pt[1])
		}
		ms, _ := d.seriesStep(&c)
		if n := SeriesCount(w.MaxV, lowest); n == 0 || roundUp(n, ms) > MaxSeries {
			add(fmt.Sprintf("cells[%d].voltage_derating", i), "series_count",
				"goes down to %g V per cell, which would need more than %d cells in series to hold window.max_v (%g V); check the table's unit (V per cell)", lowest, MaxSeries, w.MaxV)
		}
	}
	if cv := d.Converter; cv != nil {
		if mv := cv.MinInputV; mv != nil && Finite(*mv) && Finite(w.MaxV) && *mv >= w.MaxV {
			add("converter.min_input_v", "below_max_v", "is %g V, at or above window.max_v (%g V): the converter would never run; check both", *mv, w.MaxV)
		}
		if d.Load.Efficiency != nil && len(cv.EfficiencyCurve) > 0 {
			add("converter.efficiency_curve", "one_efficiency", "is given with load.efficiency; give the converter's efficiency once: the curve, or load.efficiency alone")
		}
		for i, pt := range cv.EfficiencyCurve {
			f := fmt.Sprintf("converter.efficiency_curve[%d]", i)
			if len(pt) != 2 {
				add(f, "pair", "must be a pair [input_v, efficiency], e.g. [48, 0.95]; found %d number(s)", len(pt))
				continue
			}
			switch {
			case !Finite(pt[0]) || pt[0] <= 0:
				add(f, "input_v", "has input voltage %g; give a voltage above 0 V", pt[0])
			case !Finite(pt[1]) || pt[1] < 0.01 || pt[1] > 1:
				add(f, "efficiency", "has efficiency %g; give a share between 0.01 and 1 (0.95 for 95 %%)", pt[1])
			case i > 0 && len(cv.EfficiencyCurve[i-1]) == 2 && !(pt[0] > cv.EfficiencyCurve[i-1][0]):
				add(f, "sorted", "has input voltage %g V, not above the point before it (%g V); sort the points by rising voltage, each voltage once", pt[0], cv.EfficiencyCurve[i-1][0])
			}
		}
	}
	return errs
}

// Module is a cell bought as part of a module: Series cells in series by
// Parallel in parallel in one housing. A bank of such cells has a series
// count that is a whole number of modules' Series and a string count that
// is a whole number of modules' Parallel.
type Module struct {
	// Name labels the module in the bill of quantities.
	Name string `json:"name,omitempty" validate:"max=200"`
	// Series and Parallel are the module's cells in series and in
	// parallel; Parallel nil: 1.
	Series   int  `json:"series" validate:"gte=1,lte=1000"`
	Parallel *int `json:"parallel,omitempty" validate:"omitempty,gte=1,lte=1000"`
	// MassKg, VolumeL and UnitPrice are one module's, cells included;
	// where given they take the place of the cells' in the bank's totals.
	MassKg    *float64 `json:"mass_kg,omitempty" validate:"omitempty,finite,gt=0,lte=100000"`
	VolumeL   *float64 `json:"volume_l,omitempty" validate:"omitempty,finite,gt=0,lte=100000"`
	UnitPrice *float64 `json:"unit_price,omitempty" validate:"omitempty,finite,gte=0,lte=1e9"`
}

// ModuleCount is how a candidate's bank is built of modules.
type ModuleCount struct {
	Name string `json:"name,omitempty"`
	// Series and Parallel are one module's cells; InSeries the modules in
	// series in a string of modules, Strings the strings of modules, Count
	// all the modules (InSeries × Strings).
	Series   int `json:"series"`
	Parallel int `json:"parallel"`
	InSeries int `json:"in_series"`
	Strings  int `json:"strings"`
	Count    int `json:"count"`
}

// seriesStep returns the whole number the series count of cell c must be
// a multiple of, and the string count's: the cell's module, else the
// design's series_multiple, else 1.
func (d *Design) seriesStep(c *Cell) (series, parallel int) {
	series, parallel = 1, 1
	if m := c.Module; m != nil {
		series = max(1, m.Series)
		if m.Parallel != nil {
			parallel = max(1, *m.Parallel)
		}
		return series, parallel
	}
	if d.SeriesMultiple != nil {
		series = max(1, *d.SeriesMultiple)
	}
	return series, parallel
}

// roundUp returns the least multiple of step at least n.
func roundUp(n, step int) int {
	if step <= 1 {
		return n
	}
	return (n + step - 1) / step * step
}

// cellSystemRules are the rules of a cell's module and voltage derating;
// p is the cell's path ("cells[2]", or "" for a cell on its own).
func cellSystemRules(c *Cell, p string) ValidationError {
	var errs ValidationError
	add := func(field, rule, format string, a ...any) {
		if p != "" {
			field = p + "." + field
		}
		errs = append(errs, FieldError{Field: field, Rule: rule, Message: fmt.Sprintf(format, a...)})
	}
	for i, pt := range c.VoltageDerating {
		f := fmt.Sprintf("voltage_derating[%d]", i)
		if len(pt) != 2 {
			add(f, "pair", "must be a pair [temp_c, max_cell_v], e.g. [65, 2.5]; found %d number(s)", len(pt))
			continue
		}
		prev := c.VoltageDerating[max(i-1, 0)]
		switch {
		case !Finite(pt[0]) || pt[0] < -100 || pt[0] > 200:
			add(f, "temp_c", "has temperature %g; give one between -100 and 200 °C", pt[0])
		case !Finite(pt[1]) || pt[1] < 0.1 || pt[1] > 1000:
			add(f, "max_cell_v", "has cell voltage %g; give one between 0.1 and 1000 V", pt[1])
		case i > 0 && len(prev) == 2 && !(pt[0] > prev[0]):
			add(f, "sorted", "has temperature %g °C, not above the point before it (%g °C); sort the points by rising temperature, each once", pt[0], prev[0])
		}
	}
	return errs
}

// derate returns the per-cell ceiling the table [[temp_c, max_cell_v], …]
// gives at tempC: linear between the points, flat outside them.
func derate(table [][]float64, tempC float64) float64 {
	n := len(table)
	if tempC <= table[0][0] {
		return table[0][1]
	}
	if tempC >= table[n-1][0] {
		return table[n-1][1]
	}
	i := sort.Search(n, func(i int) bool { return table[i][0] >= tempC })
	a, b := table[i-1], table[i]
	return a[1] + (tempC-a[0])/(b[0]-a[0])*(b[1]-a[1])
}

// moduleCount is the modules of a bank of s × par cells of cell c; nil for
// a cell without a module.
func moduleCount(c *Cell, s, par int) *ModuleCount {
	m := c.Module
	if m == nil {
		return nil
	}
	mp := 1
	if m.Parallel != nil {
		mp = *m.Parallel
	}
	mc := &ModuleCount{Name: m.Name, Series: m.Series, Parallel: mp, InSeries: s / m.Series, Strings: par / mp}
	mc.Count = mc.InSeries * mc.Strings
	return mc
}

// deratedAtHotSpot sizes cell c again where its voltage derating, read at
// the hottest cell temperature of the bank first sized (ambient plus the
// ESR heating), asks for more cells in series than the bank has; it stops
// when the bank's own hot spot allows its cell voltage. The series count
// only grows, so the answer is a bank whose cells are within the derated
// ceiling at its own hot spot. The report says at which temperature the
// ceiling was read (ceiling_temp_c).
func (p *plan) deratedAtHotSpot(c *Cell, cand Candidate) Candidate {
	ms, _ := p.d.seriesStep(c)
	for range 6 {
		if !cand.Feasible || cand.Thermal == nil || p.d.Series != nil {
			break // a series count the design forces is never raised
		}
		hot := cand.Thermal.HotSpotC
		if !(hot > *cand.CeilingTempC) || derate(c.VoltageDerating, hot) >= cand.CellV*(1-1e-12) {
			break
		}
		ceiling := math.Min(c.RatedV, derate(c.VoltageDerating, hot))
		if p.d.CellMaxV != nil && *p.d.CellMaxV <= c.RatedV {
			ceiling = math.Min(ceiling, *p.d.CellMaxV)
		}
		s := max(roundUp(SeriesCount(p.maxV, ceiling), ms), cand.Series)
		if s == cand.Series || s > MaxSeries {
			break
		}
		cand = p.forSeries(c, s).sizeCellWith(c, limitOptions{series: s, hotC: &hot})
	}
	if cand.Thermal != nil && cand.CeilingTempC != nil {
		// The ceiling as the final bank's own hot spot reads it.
		hot := cand.Thermal.HotSpotC
		ceiling := math.Min(c.RatedV, derate(c.VoltageDerating, hot))
		if p.d.CellMaxV != nil && *p.d.CellMaxV <= c.RatedV {
			ceiling = math.Min(ceiling, *p.d.CellMaxV)
		}
		cand.CeilingTempC, cand.CellCeilingV = &hot, ceiling
	}
	if p.d.Series != nil && cand.CeilingTempC != nil && cand.CellV > cand.CellCeilingV*(1+1e-12) {
		cand.Flags = append(cand.Flags, Flag{Code: "series-over-derated", Severity: Danger, Message: fmt.Sprintf(
			"At %.4g °C, the hottest cell's temperature, the cell's derating table allows %s per cell, but the design's series key (%d) puts %s on each cell at the window top; give more in series or leave series out.",
			*cand.CeilingTempC, Quantity(cand.CellCeilingV, "V", 4), cand.Series, Quantity(cand.CellV, "V", 4))})
	}
	if cand.CeilingTempC != nil && cand.CellCeilingV < c.RatedV {
		cand.Flags = append(cand.Flags, Flag{Code: "voltage-derated", Severity: Info, Message: fmt.Sprintf(
			"At %.4g °C, the hottest cell's temperature (ambient plus the ESR heating), the cell's derating table allows %s per cell, below its %s rating; the bank has %d in series (%s per cell at the window top).",
			*cand.CeilingTempC, Quantity(cand.CellCeilingV, "V", 4), Quantity(c.RatedV, "V", 4), cand.Series, Quantity(cand.CellV, "V", 4))})
	}
	return cand
}
