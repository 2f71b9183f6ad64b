// Package explore lays out a design's whole space at once: every candidate
// cell at every series count from the least the window allows to a stated
// number more, each with the fewest strings that carry the pass at worst
// case (the sizing solver's own answer, as capbank size gives it with the
// design's series key set), and the front of the points no other point
// beats on every chosen objective (price, mass and volume down and life up
// by default).
//
// A point's figures are the bank's: total price, mass and volume, the
// expected life, the runtime margin over the sizing pass, the standing
// loss of the leakage and balancing at the window top, the worst
// temperature rise and the most severe finding. Like sizing it imports
// only the standard library and sizing.
package explore

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"

	"capbank/sizing"
)

// Point is one bank of the sweep: one cell at one series count with its
// fewest strings.
type Point struct {
	CellID   string `json:"cell_id"`
	CellName string `json:"cell_name,omitempty"`
	// Series is the cells per string, Parallel the strings (the fewest
	// that carry the pass; for an infeasible point, the most tried).
	Series   int `json:"series"`
	Parallel int `json:"parallel"`
	// CellV, in V, is each cell's voltage at the window top: max_v/series.
	CellV    float64 `json:"cell_v"`
	Feasible bool    `json:"feasible"`
	// Price is the bank's total price in the design's currency; MassKg,
	// in kg, and VolumeL, in L, its totals. nil: the cell does not give
	// the figure.
	Price   *float64 `json:"price"`
	MassKg  *float64 `json:"mass_kg"`
	VolumeL *float64 `json:"volume_l"`
	// LifeYears, in years, is the expected life at the hottest cell's
	// temperature and CellV (at most the life model's calendar ceiling);
	// nil when the cell gives no rated life or the point is infeasible.
	LifeYears *float64 `json:"life_years"`
	// MarginPct is the worst-case runtime's margin over the sizing pass,
	// 100·(runtime − pass)/pass; nil when the runtime is not within the
	// runtime limit (the bank does not run out) or the point is
	// infeasible.
	MarginPct *float64 `json:"margin_pct"`
	// StandingLossW, in W, is what the leakage and the balancing draw from
	// the charged bank at the window top, max_v²/R_drain.
	StandingLossW float64 `json:"standing_loss_w"`
	// RiseK, in K, is the hottest cell's rise over the ambient; nil when
	// the cell gives no thermal resistance or the point is infeasible.
	RiseK *float64 `json:"rise_k"`
	// WorstSeverity is the most severe finding of the bank: "danger",
	// "warning", "info" or "" for none.
	WorstSeverity string `json:"worst_severity"`
	// Pareto is true for a point on the front.
	Pareto bool `json:"pareto"`
	// Limit and Why are the candidate's: what set the strings, and the
	// one-line reason for the bank.
	Limit string `json:"limit,omitempty"`
	Why   string `json:"why"`
}

// Exploration is the sweep's answer: every point, and the indexes of the
// front's points in Points, ascending.
type Exploration struct {
	Objectives  []string `json:"objectives"`
	ExtraSeries int      `json:"extra_series"`
	Points      []Point  `json:"points"`
	Front       []int    `json:"front"`
}

// Result is what capbank explore and POST /api/v1/explore answer.
type Result struct {
	Design   string `json:"design"`
	Currency string `json:"currency"`
	// MaxV and MinV, in V, are the window; PassDurationS, in s, the
	// sizing pass the margins are over.
	MaxV          float64     `json:"max_v"`
	MinV          float64     `json:"min_v"`
	PassDurationS float64     `json:"pass_duration_s"`
	Explore       Exploration `json:"explore"`
}

// Options override the design's explore key; zero values keep it.
type Options struct {
	// Objectives, when given, replace explore.objectives (validated the same way).
	Objectives []string
	// Workers sizes points at once; 0: GOMAXPROCS.
	Workers int
}

// Explore validates d and sweeps it. A design that fails validation
// returns its sizing.ValidationError; a ctx done first returns its
// error, wrapped.
func Explore(ctx context.Context, d *sizing.Design, o Options) (*Result, error) {
	if len(o.Objectives) > 0 {
		dc := *d
		e := sizing.ExploreOptions{}
		if d.Explore != nil {
			e = *d.Explore
		}
		e.Objectives = o.Objectives
		dc.Explore = &e
		d = &dc
	}
	z, err := sizing.NewSeriesSizer(d)
	if err != nil {
		return nil, err
	}
	d = z.Design()
	extra := sizing.DefaultExtraSeries
	objectives := sizing.DefaultObjectives
	if e := d.Explore; e != nil {
		if e.ExtraSeries != nil {
			extra = *e.ExtraSeries
		}
		if len(e.Objectives) > 0 {
			objectives = e.Objectives
		}
	}
	type job struct{ cell, series int }
	var jobs []job
	for i := range d.Cells {
		least, step := z.LeastSeries(i)
		for k := 0; k <= extra; k++ {
			if s := least + k*step; s <= sizing.MaxSeries {
				jobs = append(jobs, job{i, s})
			}
		}
	}
	pass, err := passDuration(d)
	if err != nil {
		return nil, err
	}
	points := make([]Point, len(jobs))
	errs := make([]error, len(jobs))
	workers := o.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = max(1, min(workers, len(jobs)))
	next := make(chan int)
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			for k := range next {
				cand, err := z.Size(ctx, jobs[k].cell, jobs[k].series)
				if err != nil {
					errs[k] = err
					continue
				}
				points[k] = pointOf(&cand, d, pass)
			}
		})
	}
	for k := range jobs {
		if ctx.Err() != nil {
			break
		}
		next <- k
	}
	close(next)
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("explore: %w", context.Cause(ctx))
	}
	for _, err := range errs {
		if err != nil {
			return nil, err
		}
	}
	front := Front(points, objectives)
	for _, k := range front {
		points[k].Pareto = true
	}
	r := &Result{Design: d.Name, MaxV: d.Window.MaxV, MinV: d.Window.MinV, PassDurationS: pass,
		Explore: Exploration{Objectives: slices.Clone(objectives), ExtraSeries: extra, Points: points, Front: front}}
	if d.BOQ != nil {
		r.Currency = d.BOQ.Currency
	}
	return r, nil
}

// passDuration is the sizing pass, steps × repeat, in s.
func passDuration(d *sizing.Design) (float64, error) {
	steps := d.Load.StepList()
	total := 0.0
	for _, s := range steps {
		total += s.DurationS
	}
	if d.Load.Repeat != nil {
		total *= float64(*d.Load.Repeat)
	}
	if !(total > 0) {
		return 0, fmt.Errorf("explore: the design's pass has no duration")
	}
	return total, nil
}

// pointOf takes a point's figures from its candidate.
func pointOf(c *sizing.Candidate, d *sizing.Design, pass float64) Point {
	p := Point{CellID: c.CellID, CellName: c.CellName, Series: c.Series, Parallel: c.Parallel, CellV: c.CellV,
		Feasible: c.Feasible, Price: c.TotalPrice, MassKg: c.MassKg, VolumeL: c.VolumeL, Limit: c.Limit, Why: c.Why}
	if c.LeakageOhm != nil && *c.LeakageOhm > 0 {
		p.StandingLossW = d.Window.MaxV * d.Window.MaxV / *c.LeakageOhm
	}
	for _, f := range c.Flags {
		if rank(string(f.Severity)) > rank(p.WorstSeverity) {
			p.WorstSeverity = string(f.Severity)
		}
	}
	if !c.Feasible {
		return p
	}
	if c.Life != nil {
		y := c.Life.ExpectedYears
		p.LifeYears = &y
	}
	if c.RuntimeS != nil {
		m := 100 * (*c.RuntimeS - pass) / pass
		p.MarginPct = &m
	}
	if c.Thermal != nil {
		amb := 25.0
		if d.AmbientC != nil {
			amb = *d.AmbientC
		}
		r := c.Thermal.HotSpotC - amb
		p.RiseK = &r
	}
	return p
}

func rank(sev string) int {
	switch sev {
	case "danger":
		return 3
	case "warning":
		return 2
	case "info":
		return 1
	}
	return 0
}

// Value is a point's figure for an objective, oriented so that less is
// better (an objective where more is better is negated), and false when
// the point does not give it.
func Value(p *Point, objective string) (float64, bool) {
	var v *float64
	switch objective {
	case "price":
		v = p.Price
	case "mass_kg":
		v = p.MassKg
	case "volume_l":
		v = p.VolumeL
	case "life_years":
		v = p.LifeYears
	case "margin_pct":
		v = p.MarginPct
	case "standing_loss_w":
		x := p.StandingLossW
		v = &x
	case "rise_k":
		v = p.RiseK
	}
	if v == nil {
		return 0, false
	}
	if sizing.Objectives[objective] {
		return -*v, true
	}
	return *v, true
}

// score is a point's oriented figures; a figure it does not give is +Inf,
// the worst, so a point is never judged better on a figure it lacks.
func score(p *Point, objectives []string) []float64 {
	s := make([]float64, len(objectives))
	for k, o := range objectives {
		v, ok := Value(p, o)
		if !ok {
			v = math.Inf(1)
		}
		s[k] = v
	}
	return s
}

// Dominates reports whether a is at least as good as b on every objective
// and better on one (figures oriented by Value).
func Dominates(a, b []float64) bool {
	better := false
	for k := range a {
		if a[k] > b[k] {
			return false
		}
		if a[k] < b[k] {
			better = true
		}
	}
	return better
}

// Front returns the indexes, ascending, of the feasible points no other
// feasible point dominates on the objectives. Infeasible points are never
// on it. Points with the same figures on every objective are all on it or
// all off it. It sorts the points by their first figure, so a point is
// only compared with the ones before it that could dominate it.
func Front(points []Point, objectives []string) []int {
	type scored struct {
		i int
		s []float64
	}
	var c []scored
	for i := range points {
		if points[i].Feasible {
			c = append(c, scored{i, score(&points[i], objectives)})
		}
	}
	slices.SortStableFunc(c, func(a, b scored) int {
		for k := range a.s {
			if a.s[k] != b.s[k] {
				if a.s[k] < b.s[k] {
					return -1
				}
				return 1
			}
		}
		return 0
	})
	// In this lexicographic order a dominating point always comes first,
	// so each point need only be checked against the front so far.
	var front []scored
	for _, x := range c {
		dominated := false
		for _, f := range front {
			if Dominates(f.s, x.s) {
				dominated = true
				break
			}
		}
		if !dominated {
			front = append(front, x)
		}
	}
	out := make([]int, len(front))
	for k, f := range front {
		out[k] = f.i
	}
	slices.Sort(out)
	return out
}
