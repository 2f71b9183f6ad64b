package explore

import (
	"encoding/csv"
	"io"
	"strconv"
)

// CSVHeader is the header row of WriteCSV: the points' JSON keys.
var CSVHeader = []string{"cell_id", "series", "parallel", "cell_v", "feasible", "price", "mass_kg", "volume_l",
	"life_years", "margin_pct", "standing_loss_w", "rise_k", "worst_severity", "pareto"}

// WriteCSV writes every point of r, one row each under CSVHeader, in the
// order of r.Explore.Points. A figure the point does not give is an
// empty field; numbers are written in full (shortest exact form).
func WriteCSV(w io.Writer, r *Result) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(CSVHeader); err != nil {
		return err
	}
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	opt := func(x *float64) string {
		if x == nil {
			return ""
		}
		return num(*x)
	}
	for _, p := range r.Explore.Points {
		row := []string{p.CellID, strconv.Itoa(p.Series), strconv.Itoa(p.Parallel), num(p.CellV), strconv.FormatBool(p.Feasible),
			opt(p.Price), opt(p.MassKg), opt(p.VolumeL), opt(p.LifeYears), opt(p.MarginPct), num(p.StandingLossW), opt(p.RiseK),
			p.WorstSeverity, strconv.FormatBool(p.Pareto)}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
