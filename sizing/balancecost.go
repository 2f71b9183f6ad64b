package sizing

import (
	"fmt"
	"strings"
)

// balancingCost judges what a feasible candidate's passive balancing
// costs, against two thresholds (common practice, no source; both
// settable in balancing): its standing loss, the whole bank at the window
// top, as a share of the load's mean power over the pass (1 %), and the
// self-discharge time constant R·C of each cell with its resistor (a
// day). Too little headroom below the cells' ceiling forces resistors of a
// few ohms and watts of standing drain; one more cell in series or active
// balancing avoids it. When either threshold is passed it raises the
// balancing-loss warning and sizes both alternatives.
func (p *plan) balancingAlternatives(cand *Candidate, c *Cell) {
	b := cand.Balancing
	if !cand.Feasible || b == nil || b.Kind != "passive" || b.ResistorOhm == nil || b.TimeConstantS == nil {
		return
	}
	share, minTC := DefaultBalancingMaxLossShare, DefaultBalancingMinTimeConstantH
	if d := p.d.Balancing; d != nil {
		if d.MaxLossShare != nil {
			share = *d.MaxLossShare
		}
		if d.MinTimeConstantH != nil {
			minTC = *d.MinTimeConstantH
		}
	}
	pass := p.period * float64(p.repeat)
	meanW := 0.0
	if pass > 0 {
		meanW = cand.BankEnergyJ / pass
	}
	tcH := *b.TimeConstantS / 3600
	lossy := meanW > 0 && b.BankLossW > share*meanW
	fast := tcH < minTC
	if !lossy && !fast {
		return
	}
	var why []string
	if lossy {
		why = append(why, fmt.Sprintf("%.3g %% of the load's mean power over the pass (%s), above the %.3g %% threshold",
			100*b.BankLossW/meanW, Quantity(meanW, "W", 3), 100*share))
	}
	if fast {
		why = append(why, fmt.Sprintf("each cell with its resistor self-discharges with a time constant R·C of %s, under the %s threshold",
			hoursText(tcH), hoursText(minTC)))
	}
	hold := "never falls to the window bottom"
	if b.ShelfHoldH != nil {
		hold = "falls to the window bottom in " + hoursText(*b.ShelfHoldH)
	}
	msg := fmt.Sprintf("Passive balancing draws %s from the bank at the window top (%d resistors of %s, %s each; %s per string): %s. Charged and left alone, the bank %s.",
		Quantity(b.BankLossW, "W", 3), b.BankCount, Quantity(*b.ResistorOhm, "Ω", 3), Quantity(b.BankLossW/float64(max(1, b.BankCount)), "W", 3),
		Quantity(b.LossW, "W", 3), strings.Join(why, "; and "), hold)

	// One more cell (one more module) in series, passive: more headroom,
	// larger resistors.
	step, _ := p.d.seriesStep(c)
	more := p.forSeries(c, cand.Series+step).sizeCellWith(c, limitOptions{series: cand.Series + step, hotC: cand.CeilingTempC})
	alt := alternativeOf("passive", &more)
	b.Alternatives = append(b.Alternatives, alt)
	msg += " " + alternativeText(fmt.Sprintf("%d in series", more.Series), alt)

	// Active balancing at the candidate's series count.
	act := Balancing{Kind: "active"}
	q, assumed := AssumedActiveQuiescentA, true
	if d := p.d.Balancing; d != nil && d.QuiescentA != nil {
		q, assumed = *d.QuiescentA, false
	}
	act.QuiescentA = &q
	active := p.sizeCellWith(c, limitOptions{series: cand.Series, balancing: &act, hotC: cand.CeilingTempC})
	alt = alternativeOf("active", &active)
	alt.QuiescentAssumed = assumed
	b.Alternatives = append(b.Alternatives, alt)
	how := fmt.Sprintf("Active balancing (%s per cell", Quantity(q, "A", 3))
	if assumed {
		how += ", assumed; set balancing.quiescent_a"
	}
	msg += " " + alternativeText(how+")", alt)

	// Drawing a share of the load's power costs runtime and heat: a
	// warning. A fast self-discharge alone matters off the charger (the
	// self-discharge flag judges it against standby_h): a note.
	sev := Info
	if lossy {
		sev = Warning
	}
	cand.Flags = append(cand.Flags, Flag{Code: "balancing-loss", Severity: sev, Message: msg + " Thresholds: balancing.max_loss_share and balancing.min_time_constant_h (common practice, no source)."})
}

// alternativeOf is the summary of a candidate sized as an alternative.
func alternativeOf(kind string, c *Candidate) BalancingAlternative {
	a := BalancingAlternative{Kind: kind, Series: c.Series, Parallel: c.Parallel, Cells: c.Cells, Feasible: c.Feasible,
		RuntimeS: c.RuntimeS, TotalPrice: c.TotalPrice}
	if b := c.Balancing; b != nil {
		a.ResistorOhm, a.QuiescentA, a.BankLossW, a.ShelfHoldH = b.ResistorOhm, b.QuiescentA, b.BankLossW, b.ShelfHoldH
	}
	return a
}

// alternativeText says an alternative's figures in a sentence.
func alternativeText(head string, a BalancingAlternative) string {
	if !a.Feasible {
		return head + " the cell cannot carry the load."
	}
	strs := "strings"
	if a.Parallel == 1 {
		strs = "string"
	}
	parts := []string{fmt.Sprintf("%d %s, %d cells", a.Parallel, strs, a.Cells)}
	if a.ResistorOhm != nil {
		parts = append(parts, Quantity(*a.ResistorOhm, "Ω", 3)+" resistors")
	}
	parts = append(parts, "drain "+Quantity(a.BankLossW, "W", 3))
	if a.ShelfHoldH != nil {
		parts = append(parts, "shelf hold "+hoursText(*a.ShelfHoldH))
	} else {
		parts = append(parts, "holds above the window bottom for good")
	}
	if a.RuntimeS != nil {
		parts = append(parts, "runtime "+Quantity(*a.RuntimeS, "s", 3))
	}
	return head + ": " + strings.Join(parts, ", ") + "."
}

// hoursText writes a time given in hours: in days from two days up.
func hoursText(h float64) string {
	if h >= 48 {
		return fmt.Sprintf("%.3g days", h/24)
	}
	if h < 1 {
		return fmt.Sprintf("%.3g min", h*60)
	}
	return fmt.Sprintf("%.3g h", h)
}

// worstCaseText says what the worst case of cell c applied, in words.
func (p *plan) worstCaseText(c *Cell, l *cellLimits) string {
	parts := []string{fmt.Sprintf("end of life: capacitance ×%g, ESR ×%g", p.capF, p.esrF)}
	switch t := c.CapacitanceTolerancePct; {
	case len(t) != 2 || t[0] == 0:
		parts = append(parts, "no minus tolerance given")
	case !p.tolOn:
		parts = append(parts, fmt.Sprintf("tolerance −%g %% not applied (eol.apply_tolerance is false)", -t[0]))
	default:
		parts = append(parts, fmt.Sprintf("tolerance −%g %%", -t[0]))
	}
	if cold := p.d.ColdC; cold != nil && *cold < roomC {
		s := "at " + strings.Replace(fmt.Sprintf("%g", *cold), "-", "−", 1) + " °C: "
		if c.ColdESRFactor != nil {
			s += fmt.Sprintf("ESR ×%.3g", l.coldK)
		} else {
			s += "ESR not raised (the cell gives no cold ESR)"
		}
		if c.ColdCapacitanceFactor != nil {
			s += fmt.Sprintf(", capacitance ×%.3g", l.coldCK)
		} else {
			s += ", capacitance not derated (the cell gives no cold factor)"
		}
		parts = append(parts, s)
	}
	return strings.Join(parts, "; ")
}
