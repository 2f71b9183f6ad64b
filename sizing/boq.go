package sizing

import (
	"fmt"
	"math"
)

// BOQ is the bill of quantities of one sized bank: what purchasing orders.
type BOQ struct {
	Design   string    `json:"design"`
	CellID   string    `json:"cell_id"`
	Series   int       `json:"series"`
	Parallel int       `json:"parallel"`
	Currency string    `json:"currency"`
	Lines    []BOQLine `json:"lines"`
	// Total is the sum of the priced lines' extended prices; Complete is
	// false when some line has no price (it is then not in the total).
	Total    float64 `json:"total"`
	Complete bool    `json:"complete"`
	// CellMassKg and CellVolumeL are the cells' mass and volume together
	// (nil when the cell does not give them).
	CellMassKg  *float64    `json:"cell_mass_kg"`
	CellVolumeL *float64    `json:"cell_volume_l"`
	Bleeder     BleederPlan `json:"bleeder"`
}

// BOQLine is one line of a bill of quantities.
type BOQLine struct {
	Item        string  `json:"item"`
	Description string  `json:"description"`
	Quantity    float64 `json:"quantity"`
	Unit        string  `json:"unit"`
	// UnitPrice and ExtendedPrice (quantity × unit price) are nil when no
	// price was given.
	UnitPrice     *float64 `json:"unit_price"`
	ExtendedPrice *float64 `json:"extended_price"`
}

// BleederPlan is the service discharge resistor across the bank.
type BleederPlan struct {
	// ResistorOhm, in Ω, and PowerW, the rating chosen, in W.
	ResistorOhm float64 `json:"resistor_ohm"`
	PowerW      float64 `json:"power_w"`
	// PeakW, in W, is what it dissipates at the window top, max_v²/R.
	PeakW float64 `json:"peak_w"`
	// TargetV, in V, is the service voltage: the 60 V ES1 limit of IEC
	// 62368-1 for a bank above it, else 2 V, below which stored energy is not
	// counted as hazardous (IEC 60950-1 §2.1.1.5, REFERENCES.md 7.6).
	TargetV float64 `json:"target_v"`
	// TimeS, in s, is how long the bank takes to fall from max_v to TargetV
	// through the bleeder at the top of the capacitance tolerance (the
	// slowest; beginning of life, before any fade):
	// t = R·C·ln(max_v/TargetV) (REFERENCES.md 3.6).
	TimeS float64 `json:"time_s"`
	// TimeTo2VS, in s, is the time to 2 V, for banks whose target is 60 V.
	TimeTo2VS float64 `json:"time_to_2v_s"`
	// AskedS, in s, is the time asked for; Slower is true when the 100 W
	// cap on the resistor made the bleeder slower than that.
	AskedS float64 `json:"asked_s"`
	Slower bool    `json:"slower"`
}

// Defaults of the bill of quantities.
const (
	// DefaultBleederTimeS, in s: five minutes to the service voltage
	// (common practice, no source).
	DefaultBleederTimeS = 300.0
	// maxBleederW, in W: the largest common resistor rating in
	// resistorPowerRatings; a bleeder that needs more is made slower.
	maxBleederW = 100.0
)

// BillOfQuantities lists what to order for candidate cellID of the report
// (the recommended one when cellID is empty), from the design it came from:
//
//   - cells: series × parallel;
//   - balancing: one resistor (value, power rating) or active circuit per
//     cell, as the report's balancing says;
//   - interconnect links: (series − 1) cell-to-cell links per string, plus
//     two string-end connections per string to the bank's busbars;
//   - a service bleeder resistor (see BleederPlan);
//   - the design's extra lines.
//
// Prices come from the cell and the design's boq options; a line without a
// price is listed but left out of the total, which is then marked
// incomplete.
func BillOfQuantities(d *Design, r *Report, cellID string) (*BOQ, error) {
	if cellID == "" {
		if r.Recommended == nil {
			return nil, fmt.Errorf("no candidate is feasible, so there is no bank to list; choose a cell id")
		}
		cellID = *r.Recommended
	}
	var cand *Candidate
	for i := range r.Candidates {
		if r.Candidates[i].CellID == cellID {
			cand = &r.Candidates[i]
		}
	}
	var cell *Cell
	for i := range d.Cells {
		if d.Cells[i].ID == cellID {
			cell = &d.Cells[i]
		}
	}
	if cand == nil || cell == nil {
		return nil, fmt.Errorf("cell %q is not a candidate of this design", cellID)
	}
	if !cand.Feasible {
		return nil, fmt.Errorf("cell %q cannot carry the load (%s); there is no bank to list", cellID, cand.Reason)
	}
	opt := BOQOptions{}
	if d.BOQ != nil {
		opt = *d.BOQ
	}
	b := &BOQ{Design: d.Name, CellID: cellID, Series: cand.Series, Parallel: cand.Parallel, Currency: opt.Currency,
		CellMassKg: cand.MassKg, CellVolumeL: cand.VolumeL, Complete: true}
	add := func(item, desc string, qty float64, unit string, price *float64) {
		l := BOQLine{Item: item, Description: desc, Quantity: qty, Unit: unit, UnitPrice: price}
		if price != nil {
			x := qty * *price
			l.ExtendedPrice = &x
			b.Total += x
		} else {
			b.Complete = false
		}
		b.Lines = append(b.Lines, l)
	}
	name := cell.Name
	if name == "" {
		name = cell.ID
	}
	cellDesc := fmt.Sprintf("%s: %g F, %g V, ESR %s; %d in series × %d strings", name, cell.CapacitanceF, cell.RatedV,
		ohms(cell.ESROhm), cand.Series, cand.Parallel)
	if m := cand.Modules; m != nil {
		// The cells come in the modules: the modules are what is ordered.
		mname := m.Name
		if mname == "" {
			mname = "module"
		}
		add("module", fmt.Sprintf("%s: %d in series × %d in parallel of %s; %d modules in series × %d strings of modules",
			mname, m.Series, m.Parallel, name, m.InSeries, m.Strings), float64(m.Count), "pc", cell.Module.UnitPrice)
		if cell.Module.UnitPrice == nil && cell.UnitPrice != nil {
			// An unpriced module of priced cells: the cells carry the price.
			add("cell", cellDesc+", in the modules", float64(cand.Cells), "pc", cell.UnitPrice)
		} else {
			b.Lines = append(b.Lines, BOQLine{Item: "cell", Description: cellDesc + ", in the modules (not ordered apart)", Quantity: float64(cand.Cells), Unit: "pc"})
		}
	} else {
		add("cell", cellDesc, float64(cand.Cells), "pc", cell.UnitPrice)
	}

	if bal := cand.Balancing; bal != nil {
		switch {
		case bal.Kind == "passive" && bal.ResistorOhm != nil:
			rating := "rating beyond common parts"
			if bal.ResistorPowerW != nil {
				rating = fmt.Sprintf("%g W", *bal.ResistorPowerW)
			}
			add("balancing resistor", fmt.Sprintf("%s %s, %s (dissipates %.3g W at %.4g V), one across each cell",
				ohms(*bal.ResistorOhm), bal.Series, rating, ptr0(bal.DissipationW), cand.CellV),
				float64(cand.Cells), "pc", opt.ResistorUnitPrice)
		case bal.Kind == "active":
			add("active balancing circuit", fmt.Sprintf("one per cell, quiescent %.3g A, limiting each cell to %.4g V",
				ptr0(bal.QuiescentA), cand.CellCeilingV), float64(cand.Cells), "pc", opt.BalancerUnitPrice)
		}
	}

	if m := cand.Modules; m != nil {
		links := m.Strings*(m.InSeries-1) + 2*m.Strings
		add("interconnect link", fmt.Sprintf("%d module-to-module links per string of modules × %d strings, plus 2 string-end connections per string to the bank busbars (the links inside the modules come with them)",
			m.InSeries-1, m.Strings), float64(links), "pc", opt.LinkUnitPrice)
	} else {
		links := cand.Parallel*(cand.Series-1) + 2*cand.Parallel
		add("interconnect link", fmt.Sprintf("%d cell-to-cell links per string (series − 1) × %d strings, plus 2 string-end connections per string to the bank busbars",
			cand.Series-1, cand.Parallel), float64(links), "pc", opt.LinkUnitPrice)
	}

	bt := DefaultBleederTimeS
	if opt.BleederTimeS != nil {
		bt = *opt.BleederTimeS
	}
	// The slowest bank to bleed is the one at the top of the capacitance
	// tolerance: t = R·C·ln(V0/V1) grows with C.
	plus := 0.0
	if t := cell.CapacitanceTolerancePct; len(t) == 2 {
		plus = t[1] / 100
	}
	b.Bleeder = PlanBleeder(r.MaxV, cand.CapacitanceF*(1+plus), bt)
	bl := b.Bleeder
	desc := fmt.Sprintf("%s, %g W, switched across the bank for service: %.4g V → %g V in %s",
		ohms(bl.ResistorOhm), bl.PowerW, r.MaxV, bl.TargetV, duration(bl.TimeS))
	if plus > 0 {
		desc += fmt.Sprintf(" at the capacitance's +%g %% tolerance, the slowest case", 100*plus)
	}
	if bl.Slower {
		desc += fmt.Sprintf(" (slower than the %s asked: %s in %s would dissipate over %g W at first; use a larger resistor bank or accept the wait)",
			duration(bl.AskedS), fmt.Sprintf("%.4g V → %g V", r.MaxV, bl.TargetV), duration(bl.AskedS), maxBleederW)
	}
	add("bleeder resistor", desc, 1, "pc", opt.BleederUnitPrice)

	for _, x := range opt.Extras {
		unit := x.Unit
		if unit == "" {
			unit = "pc"
		}
		add(x.Item, x.Description, x.Quantity, unit, x.UnitPrice)
	}
	return b, nil
}

// PlanBleeder chooses a service bleeder for a bank of capacitance c (F)
// charged to maxV (V) that should reach its service voltage in about
// timeS seconds. Through R the bank falls as V0·e^(−t/RC) (REFERENCES.md
// 3.6), so R = t / (C·ln(V0/V_target)), rounded down to E24 (IEC 60063) so
// the bank is never slower than asked; the rating is the smallest common one
// at least the peak max_v²/R. A bleeder that would need more than 100 W is
// made larger in resistance (and slower) to fit a 100 W part.
func PlanBleeder(maxV, c, timeS float64) BleederPlan {
	target := hazardousEnergyV
	if maxV > es1LimitV {
		target = es1LimitV
	}
	bp := BleederPlan{TargetV: target, AskedS: timeS}
	if maxV <= target {
		// Already below the service voltage: a bleeder for the shelf.
		target = maxV / 2
		bp.TargetV = target
	}
	lnR := math.Log(maxV / target)
	r := PreferredFloor(timeS/(c*lnR), seriesE24)
	if !(r > 0) {
		r = timeS / (c * lnR)
	}
	if maxV*maxV/r > maxBleederW {
		r = preferredCeil(maxV*maxV/maxBleederW, seriesE24)
		bp.Slower = true
	}
	bp.ResistorOhm = r
	bp.PeakW = maxV * maxV / r
	bp.PowerW = ResistorRating(bp.PeakW, 1)
	bp.TimeS = r * c * lnR
	bp.TimeTo2VS = r * c * math.Log(maxV/math.Min(hazardousEnergyV, target))
	return bp
}

// preferredCeil returns the smallest value of the series at least x.
func preferredCeil(x float64, series []float64) float64 {
	f := PreferredFloor(x, series)
	if f >= x*(1-1e-9) {
		return f
	}
	exp := math.Floor(math.Log10(f))
	for i, v := range series {
		if roundTo12Digits(v*math.Pow(10, exp)) == f {
			if i+1 < len(series) {
				return roundTo12Digits(series[i+1] * math.Pow(10, exp))
			}
			return roundTo12Digits(series[0] * math.Pow(10, exp+1))
		}
	}
	return x
}

// ohms writes a resistance for a description.
func ohms(r float64) string { return Quantity(r, "Ω", 3) }

// duration formats seconds for a description.
func duration(s float64) string {
	switch {
	case s >= 7200:
		return fmt.Sprintf("%.3g h", s/3600)
	case s >= 120:
		return fmt.Sprintf("%.3g min", s/60)
	}
	return fmt.Sprintf("%.3g s", s)
}
