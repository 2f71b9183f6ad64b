package sizing

import (
	"fmt"
	"math"
)

// Thresholds the safety flags judge against, each with its source.
const (
	// ES1 and ES2 voltage limits for steady DC, V: IEC 62368-1, the table of
	// electrical energy source limits (REFERENCES.md 7.1; the values as
	// commonly cited, the clause not confirmed against the purchased
	// standard).
	es1LimitV = 60.0
	es2LimitV = 120.0
	// Hazardous energy level, J, at 2 V or more: IEC 60950-1 §2.1.1.5
	// (withdrawn, still the usual reference; REFERENCES.md 7.6: 2 V
	// confirmed in a published discussion of the standard, 20 J used as
	// commonly cited, the clause and figure not confirmed against the
	// purchased standard).
	hazardousEnergyJ = 20.0
	hazardousEnergyV = 2.0
	// Short-circuit current, A, above which a slipped tool welds or a ring
	// burns: common practice, no source.
	shortCircuitWarnA = 1000.0
	// UN 3499 energy thresholds per capacitor, Wh: special provision 361
	// (REFERENCES.md 7.15–7.17; 49 CFR 172.102 SP 361, 173.176).
	un3499ExemptWh = 0.3
	un3499StrapWh  = 10.0
	// Hot-spot margin to the maximum operating temperature, K, inside which
	// heat is a warning: common practice, no source.
	hotMarginK = 5.0
	// Stored energy, J, above which an organic-electrolyte bank can start a
	// fire through a short (arc, molten metal, a heated cell venting
	// flammable solvent): common practice, no source.
	fireEnergyJ = 10_000.0
	// Fire margin to the maximum operating temperature, K: common practice,
	// no source.
	fireMarginK = 10.0
)

// cautionCodes is the closing sentence of every caution where someone can
// be hurt.
const cautionCodes = "Local electrical and fire codes and licensed practice decide; capbank's check does not replace them."

// hazardFlags judges the bank's hazards: voltage, stored energy, short
// circuit and transport. cellWh is the per-cell energy of UN SP 361.
func hazardFlags(h Hazards) []Flag {
	var f []Flag
	switch {
	case h.MaxV > es2LimitV:
		f = append(f, Flag{Code: "hazardous-voltage", Severity: Danger, Message: fmt.Sprintf(
			"The bank charges to %.4g V DC, above the %g V limit of class ES2 for steady DC in IEC 62368-1 (ES3: a shock can kill).", h.MaxV, es2LimitV),
			Caution: "Guard every live part against touch, insulate tools, discharge and prove dead before service, and have the design reviewed by a qualified person. " + cautionCodes})
	case h.MaxV > es1LimitV:
		f = append(f, Flag{Code: "hazardous-voltage", Severity: Warning, Message: fmt.Sprintf(
			"The bank charges to %.4g V DC, above the %g V extra-low-voltage limit of class ES1 for steady DC in IEC 62368-1 (ES2: a shock is painful and can cause injury).", h.MaxV, es1LimitV),
			Caution: "Keep live parts out of reach behind a guard or enclosure and discharge the bank before service. " + cautionCodes})
	}
	if h.StoredEnergyJ >= hazardousEnergyJ && h.MaxV >= hazardousEnergyV {
		f = append(f, Flag{Code: "stored-energy", Severity: Warning, Message: fmt.Sprintf(
			"The bank stores %s at %.4g V, at or above the %g J hazardous energy level of IEC 60950-1 §2.1.1.5 (a withdrawn standard; 20 J at 2 V or more as commonly cited, clause not confirmed): a short can burn, arc and throw molten metal even at low voltage.",
			joules(h.StoredEnergyJ), h.MaxV, hazardousEnergyJ),
			Caution: "Cover the terminals, fit a fuse or breaker close to the bank, remove rings and watches, and use insulated tools. " + cautionCodes})
	}
	if h.ShortCircuitCurrentA > shortCircuitWarnA {
		f = append(f, Flag{Code: "short-circuit-current", Severity: Warning, Message: fmt.Sprintf(
			"A bolted short at the terminals draws up to %.4g A (max_v / bank ESR at beginning of life), above %g A (common practice, no source).",
			h.ShortCircuitCurrentA, shortCircuitWarnA),
			Caution: "Choose the fuse and wiring for this prospective current, and work on the bank only when discharged. " + cautionCodes})
	}
	switch {
	case h.CellEnergyWh > un3499StrapWh:
		f = append(f, Flag{Code: "shipping-energy", Severity: Warning, Message: fmt.Sprintf(
			"Each cell holds %.4g Wh (½·C·U_R², UN special provision 361), above 0.3 Wh, so it ships as UN 3499 (Class 9), and above %g Wh, so each needs a metal strap across its terminals (49 CFR 173.176).",
			h.CellEnergyWh, un3499StrapWh),
			Caution: "Ship cells uncharged, strapped, marked with their Wh rating, under the dangerous-goods rules of each carrier and mode."})
	case h.CellEnergyWh > un3499ExemptWh:
		f = append(f, Flag{Code: "shipping-energy", Severity: Info, Message: fmt.Sprintf(
			"Each cell holds %.4g Wh (½·C·U_R², UN special provision 361), above the 0.3 Wh below which it is not regulated: it ships as UN 3499 (Class 9), uncharged, protected against short circuit or with a terminal strap (it is at most 10 Wh).",
			h.CellEnergyWh),
			Caution: "Check the dangerous-goods rules of each carrier and mode before shipping cells or a charged bank."})
	}
	return f
}

// joules writes an energy for a message.
func joules(j float64) string { return Quantity(j, "J", 4) }

// thermalFlags judges the hot spot against the cell's limit, and the fire
// risk of its electrolyte.
func thermalFlags(c *Cell, t *Thermal, storedJ float64) []Flag {
	var f []Flag
	if t != nil && c.MaxTempC != nil {
		lim := *c.MaxTempC
		switch {
		case t.HotSpotC > lim:
			f = append(f, Flag{Code: "over-temperature", Severity: Danger, Message: fmt.Sprintf(
				"The hottest cell reaches %.1f °C (ambient + %.1f K of ESR heating), above its %g °C maximum operating temperature.", t.HotSpotC, math.Max(t.PeakRiseK, ptr0(t.DutyPeakRiseK)), lim),
				Caution: "An overheated cell ages fast and can vent hot, flammable electrolyte. Add strings, choose a lower-ESR cell, or cool the bank. " + cautionCodes})
		case t.HotSpotC > lim-hotMarginK:
			f = append(f, Flag{Code: "over-temperature", Severity: Warning, Message: fmt.Sprintf(
				"The hottest cell reaches %.1f °C, within %g K of its %g °C maximum operating temperature (margin: common practice, no source).", t.HotSpotC, hotMarginK, lim),
				Caution: "Leave more margin: add strings or improve cooling. " + cautionCodes})
		}
	}
	organic := c.Electrolyte == "" || c.Electrolyte == "organic" || c.Electrolyte == "hybrid"
	if !organic {
		return f
	}
	what := "an organic electrolyte (flammable solvent)"
	if c.Electrolyte == "" {
		what = "an electrolyte it does not name (taken as organic and flammable, the usual EDLC case)"
	} else if c.Electrolyte == "hybrid" {
		what = "a hybrid cell's organic electrolyte (flammable solvent)"
	}
	hot := t != nil && c.MaxTempC != nil && t.HotSpotC > *c.MaxTempC-fireMarginK
	big := storedJ > fireEnergyJ
	if hot || big {
		var why string
		switch {
		case hot && big:
			why = fmt.Sprintf("its hot spot of %.1f °C is within %g K of the %g °C limit and it stores %s (above %s)", t.HotSpotC, fireMarginK, *c.MaxTempC, joules(storedJ), joules(fireEnergyJ))
		case hot:
			why = fmt.Sprintf("its hot spot of %.1f °C is within %g K of the %g °C limit", t.HotSpotC, fireMarginK, *c.MaxTempC)
		default:
			why = fmt.Sprintf("it stores %s, enough to start a fire through a short (above %s)", joules(storedJ), joules(fireEnergyJ))
		}
		f = append(f, Flag{Code: "fire-risk", Severity: Warning, Message: fmt.Sprintf(
			"The bank uses %s and %s (thresholds: common practice, no source).", what, why),
			Caution: "Use a non-combustible enclosure with venting away from people, keep spacing from combustibles, fuse each string and fit a disconnect. " + cautionCodes})
	}
	return f
}

func ptr0(p *float64) float64 {
	if p == nil {
		return 0
	}
	return *p
}
