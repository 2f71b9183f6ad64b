package sizing

import (
	"fmt"
	"strings"
)

// overvoltageFlags judges the cell-overvoltage flag on the lot figures of a
// string of s cells of cell c charged to maxV: danger where one bank in a
// thousand (the 99.9th percentile) takes a cell past its surge voltage,
// on the first charge from empty or after a long hold; a warning where it
// passes the rated voltage only. The extreme-stack figures (Spread, and
// the balancing's WorstStaticCellV) stay in the report as bounds; they are
// not the flag's basis, as no real lot stacks its cells so.
func overvoltageFlags(maxV float64, s int, c *Cell, st *LotStatistics, bal *BalancingResult) []Flag {
	if s <= 1 {
		return nil
	}
	var flags []Flag
	lot := lotText(st.Model)
	judge := func(v float64) (Severity, string, float64, bool) {
		switch {
		case c.SurgeV != nil && v > *c.SurgeV:
			return Danger, "surge", *c.SurgeV, true
		case v > c.RatedV*(1+1e-9):
			return Warning, "rated", c.RatedV, true
		}
		return "", "", 0, false
	}
	fc := st.FirstChargeMaxCellV
	if sev, what, limit, ok := judge(fc.P999); ok && bal != nil && bal.Kind == "active" {
		// Active balancing that clamps each cell during the charge clears
		// the case, provided its bypass carries the charge current.
		flags = append(flags, Flag{Code: "cell-overvoltage", Severity: Info, Message: fmt.Sprintf(
			"On a first charge from empty to %s, a string from this lot (%s) left to itself would take one cell in a thousand banks to %s, past its %g V %s voltage (V = Q/C, charge conservation in series); the active balancing must clamp each cell during the charge.",
			Quantity(maxV, "V", 4), lot, Quantity(fc.P999, "V", 4), limit, what),
			Caution: "Check that the balancing circuit clamps each cell while charging and that its bypass current is at least the charge current, or charge the bank that slowly the first time. " + cautionCodes})
	} else if ok {
		remedy := "Active balancing that clamps each cell during the charge clears this case; so does one more cell in series."
		if bal != nil && bal.Kind == "passive" && bal.TimeConstantS != nil && *bal.TimeConstantS <= slowChargeMaxTauS {
			remedy += fmt.Sprintf(" A first charge limited to a current the balancing resistors can steer (a charge taking several times their R·C of %s) also works.",
				hoursText(*bal.TimeConstantS/3600))
		}
		flags = append(flags, Flag{Code: "cell-overvoltage", Severity: sev, Message: fmt.Sprintf(
			"On a first charge from empty (and after a service discharge) to %s, before the balancing settles, each cell of a string takes the same charge, so the cell of least capacitance rises most (V = Q/C, charge conservation in series). In one bank in a thousand built from this lot (%s), a cell reaches %s or more, past its %g V %s voltage; the median bank's highest cell is %s.",
			Quantity(maxV, "V", 4), lot, Quantity(fc.P999, "V", 4), limit, what, Quantity(fc.P50, "V", 4)),
			Caution: cautionFor(sev) + remedy + " " + cautionCodes})
	}
	if sb := st.StandbyMaxCellV; sb != nil {
		if sev, what, limit, ok := judge(*sb); ok {
			kind := "no balancing"
			if bal != nil && bal.Kind == "passive" {
				kind = "the passive balancing resistors"
			}
			flags = append(flags, Flag{Code: "cell-overvoltage", Severity: sev, Message: fmt.Sprintf(
				"After a long hold at %s, the cells share the string voltage by their leakage in parallel with %s; in one bank in a thousand built from this lot (%s), a cell settles at %s or more, past its %g V %s voltage.",
				Quantity(maxV, "V", 4), kind, lot, Quantity(*sb, "V", 4), limit, what),
				Caution: cautionFor(sev) + "Lower the balancing resistor, use active balancing, or add a cell in series. " + cautionCodes})
		}
	}
	return flags
}

// slowChargeMaxTauS is the longest balancing time constant R·C for which
// a current-limited first charge is a practical remedy: a charge over a
// few time constants then fits in a working day (common practice, no
// source).
const slowChargeMaxTauS = 8 * 3600

func cautionFor(sev Severity) string {
	if sev == Danger {
		return "A cell past its surge voltage can vent or rupture. "
	}
	return "A cell held above its rated voltage ages fast. "
}

// lotText says the lot model in words, naming the keys left at their
// defaults.
func lotText(m LotModel) string {
	s := m.SpreadText()
	if len(m.Defaulted) > 0 {
		s += "; " + strings.Join(m.Defaulted, ", ") + " at capbank's defaults"
	}
	return s
}
