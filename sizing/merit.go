package sizing

// CellMerit is a cell's own figures of merit, for comparing datasheets
// side by side before any bank is sized. A figure is nil when the cell does
// not give what it needs (mass, volume, price).
type CellMerit struct {
	// StoredEnergyJ = ½·C·V_R², in J, at the rated capacitance and voltage.
	StoredEnergyJ float64 `json:"stored_energy_j"`
	// EnergyWhPerKg and EnergyWhPerL are StoredEnergyJ / 3600 per kg and
	// per L.
	EnergyWhPerKg *float64 `json:"energy_wh_per_kg"`
	EnergyWhPerL  *float64 `json:"energy_wh_per_l"`
	// MatchedPowerW = V_R² / (4·ESR), in W: the most a charged cell can
	// deliver into a load, reached when the load resistance equals the ESR
	// (maximum power transfer), at which point half the power heats the
	// cell. It is a ceiling for comparison, not a usable rating.
	MatchedPowerW float64 `json:"matched_power_w"`
	// MatchedPowerWPerKg is MatchedPowerW per kg of cell.
	MatchedPowerWPerKg *float64 `json:"matched_power_w_per_kg"`
	// TimeConstantS = ESR·C, in s: how fast the cell gives up its charge
	// through its own resistance; a short one suits pulses, a long one
	// suits slow backup.
	TimeConstantS float64 `json:"time_constant_s"`
	// PricePerWh is the unit price over the stored energy in Wh, in the
	// user's currency per Wh; the bank figure (price per usable Wh of the
	// bank) is BankPricePerUsableWh.
	PricePerWh *float64 `json:"price_per_wh"`
}

// Merit works out the cell's figures of merit from its datasheet figures.
//
//	E = ½·C·V_R²            (energy in a capacitor, any physics text)
//	P_match = V_R² / (4·R)  (maximum power transfer into a resistive load)
//	τ = R·C
func Merit(c Cell) CellMerit {
	e := 0.5 * c.CapacitanceF * c.RatedV * c.RatedV
	m := CellMerit{
		StoredEnergyJ: e,
		MatchedPowerW: c.RatedV * c.RatedV / (4 * c.ESROhm),
		TimeConstantS: c.ESROhm * c.CapacitanceF,
	}
	wh := e / 3600
	per := func(x float64, by *float64) *float64 {
		if by == nil || *by <= 0 {
			return nil
		}
		v := x / *by
		return &v
	}
	m.EnergyWhPerKg = per(wh, c.MassKg)
	m.EnergyWhPerL = per(wh, c.VolumeL)
	m.MatchedPowerWPerKg = per(m.MatchedPowerW, c.MassKg)
	if c.UnitPrice != nil && wh > 0 {
		v := *c.UnitPrice / wh
		m.PricePerWh = &v
	}
	return m
}

// BankPricePerUsableWh is a feasible bank's price over its usable energy
// (UsableEnergyJ / 3600), in the user's currency per Wh; nil when the bank
// has no price or no usable energy.
func BankPricePerUsableWh(c *Candidate) *float64 {
	if c == nil || c.TotalPrice == nil || c.UsableEnergyJ <= 0 {
		return nil
	}
	v := *c.TotalPrice / (c.UsableEnergyJ / 3600)
	return &v
}

// BankMatchedPowerW is a bank's matched-load power at the window top,
// max_v² / (4·ESR_bank) with the worst-case ESR, in W: the power axis of an
// energy–power comparison of banks.
func BankMatchedPowerW(c *Candidate, maxV float64) float64 {
	if c == nil || c.WorstESROhm <= 0 {
		return 0
	}
	return maxV * maxV / (4 * c.WorstESROhm)
}
