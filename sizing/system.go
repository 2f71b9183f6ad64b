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
