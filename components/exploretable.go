package components

import (
	"capbank/components/figures"
	"capbank/sizing/explore"
)

// ExploreColumn is one figure of an explorer point as every output labels
// it: Key is the point's JSON key (and the sort and axis name), Label the
// column heading, Unit the unit the figure is written in ("" when it
// carries its own).
type ExploreColumn struct{ Key, Label string }

// ExploreColumns are the explorer table's columns, in order.
var ExploreColumns = []ExploreColumn{
	{"cell_id", "Cell"},
	{"series", "Series"},
	{"parallel", "Strings"},
	{"cell_v", "Per cell"},
	{"price", "Price"},
	{"mass_kg", "Mass"},
	{"volume_l", "Volume"},
	{"life_years", "Life"},
	{"margin_pct", "Runtime margin"},
	{"standing_loss_w", "Standing loss"},
	{"rise_k", "Rise"},
	{"worst_severity", "Worst finding"},
}

// ExploreObjectiveLabel is an objective's label for an axis or a choice.
func ExploreObjectiveLabel(key string) string {
	for _, c := range ExploreColumns {
		if c.Key == key {
			return c.Label
		}
	}
	return key
}

// ExploreCells writes a point's figures for reading, one per
// ExploreColumns; currency labels the price.
func ExploreCells(p *explore.Point, currency string) []string {
	money := func(v float64) string {
		if currency != "" {
			return figures.Money(v) + " " + currency
		}
		return figures.Money(v)
	}
	sev := p.WorstSeverity
	if sev == "" {
		sev = "none"
	}
	out := []string{
		p.CellID,
		figures.Count(p.Series),
		figures.Count(p.Parallel),
		figures.SI(p.CellV, "V", 4),
		figures.Opt(p.Price, money),
		figures.Opt(p.MassKg, func(v float64) string { return figures.SI(v, "kg", 3) }),
		figures.Opt(p.VolumeL, func(v float64) string { return figures.SI(v, "L", 3) }),
		figures.Opt(p.LifeYears, func(v float64) string { return figures.Number(v, 3) + " years" }),
		figures.Opt(p.MarginPct, func(v float64) string { return figures.Fixed(v, 1) + " %" }),
		figures.SI(p.StandingLossW, "W", 3),
		figures.Opt(p.RiseK, figures.Kelvin),
		sev,
	}
	if !p.Feasible {
		out[2] = "none carries it"
	}
	return out
}
