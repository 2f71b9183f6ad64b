package sizing

import (
	"fmt"
	"math"
	"strings"
)

// ExploreOptions set the design explorer's sweep: every candidate cell at
// every series count from the least the window allows to ExtraSeries more
// (in whole modules for a cell that comes in modules), each with its
// fewest strings, and the front of the points no other beats on every
// objective.
type ExploreOptions struct {
	// ExtraSeries is how many series counts past the least the sweep
	// tries (each lowers the per-cell voltage). nil: DefaultExtraSeries.
	ExtraSeries *int `json:"extra_series,omitempty" validate:"omitempty,gte=0,lte=20"`
	// Objectives are the point figures the front is judged on, by their
	// JSON keys (see Objectives for which way each is better). Empty:
	// DefaultObjectives.
	Objectives []string `json:"objectives,omitempty" validate:"omitempty,max=7"`
}

// DefaultExtraSeries is the explorer's series counts past the least.
const DefaultExtraSeries = 3

// Objectives are the figures the explorer's front may be judged on, by a
// point's JSON key, and whether more is better (true) or less.
var Objectives = map[string]bool{
	"price":           false,
	"mass_kg":         false,
	"volume_l":        false,
	"life_years":      true,
	"margin_pct":      true,
	"standing_loss_w": false,
	"rise_k":          false,
}

// ObjectiveKeys are the keys of Objectives in the order the page lists
// them.
var ObjectiveKeys = []string{"price", "mass_kg", "volume_l", "life_years", "margin_pct", "standing_loss_w", "rise_k"}

// DefaultObjectives: price, mass and volume down, life up.
var DefaultObjectives = []string{"price", "mass_kg", "volume_l", "life_years"}

// seriesRules are the rules of the design keys series and explore: a
// forced series count must keep every cell at or below its ceiling at the
// window top (the same ceiling the series count is judged against:
// cell_max_v or the rating, and the voltage derating at the ambient), be
// whole modules, and leave a hybrid cell's floor below the window top.
func seriesRules(d *Design) ValidationError {
	var errs ValidationError
	add := func(field, rule, format string, a ...any) {
		errs = append(errs, FieldError{Field: field, Rule: rule, Message: fmt.Sprintf(format, a...)})
	}
	if e := d.Explore; e != nil {
		seen := map[string]bool{}
		for i, o := range e.Objectives {
			f := fmt.Sprintf("explore.objectives[%d]", i)
			switch {
			case !isObjective(o):
				add(f, "oneof", "is %q, not an objective; give one of %s", o, strings.Join(ObjectiveKeys, ", "))
			case seen[o]:
				add(f, "unique", "repeats %q; give each objective once", o)
			}
			seen[o] = true
		}
		if len(e.Objectives) == 1 {
			add("explore.objectives", "min", "gives one objective; a front needs two or more (or leave it out for price, mass_kg, volume_l and life_years)")
		}
	}
	if d.Series == nil || *d.Series < 1 || *d.Series > MaxSeries || !Finite(d.Window.MaxV) || !(d.Window.MaxV > 0) {
		return errs
	}
	s := *d.Series
	// The cell that needs the most in series names the ceiling problem,
	// once for the field.
	worst, worstLeast := -1, 0
	for i := range d.Cells {
		c := &d.Cells[i]
		if c.libraryRef || !Finite(c.RatedV) || !(c.RatedV >= 0.1) {
			continue
		}
		ceiling, _ := seriesCeiling(d, c)
		if least := SeriesCount(d.Window.MaxV, ceiling); least > s && least > worstLeast {
			worst, worstLeast = i, least
		}
	}
	if worst >= 0 {
		c := &d.Cells[worst]
		ceiling, what := seriesCeiling(d, c)
		add("series", "ceiling", "%d cells in series give %s per cell at the window top (%s), above cell %q's ceiling of %s (%s); give at least %d, or leave series out to take the least",
			s, Quantity(d.Window.MaxV/float64(s), "V", 4), Quantity(d.Window.MaxV, "V", 4), c.ID, Quantity(ceiling, "V", 4), what, worstLeast)
		return errs
	}
	for i := range d.Cells {
		c := &d.Cells[i]
		if c.libraryRef || !Finite(c.RatedV) || !(c.RatedV >= 0.1) {
			continue
		}
		if ms, _ := d.seriesStep(c); s%ms != 0 {
			add("series", "module", "is %d, not a whole number of cell %q's strings of %d in series (its module, or series_multiple); give a multiple of %d", s, c.ID, ms, ms)
			break
		}
		if c.MinV != nil && float64(s)**c.MinV >= d.Window.MaxV {
			add("series", "cell_floor", "%d cells of %q with their floor of %g V (min_v) cannot go below %s, at or above the window top (%s); give fewer in series",
				s, c.ID, *c.MinV, Quantity(float64(s)**c.MinV, "V", 4), Quantity(d.Window.MaxV, "V", 4))
			break
		}
	}
	return errs
}

func isObjective(key string) bool {
	_, ok := Objectives[key]
	return ok
}

// seriesCeiling is the per-cell ceiling (V) the series count of cell c is
// judged against at the ambient, and in words what sets it.
func seriesCeiling(d *Design, c *Cell) (float64, string) {
	ceiling, what := c.RatedV, "its rated voltage"
	if d.CellMaxV != nil && *d.CellMaxV < c.RatedV {
		ceiling, what = *d.CellMaxV, "the design's cell_max_v"
	}
	if len(c.VoltageDerating) > 0 && validDerating(c.VoltageDerating) {
		amb := roomC
		if d.AmbientC != nil {
			amb = *d.AmbientC
		}
		if v := derate(c.VoltageDerating, amb); v < ceiling {
			ceiling, what = v, fmt.Sprintf("its voltage derating at %g °C", amb)
		}
	}
	return ceiling, what
}

// validDerating reports whether a derating table is well formed enough to
// read (its own rules report it otherwise).
func validDerating(t [][]float64) bool {
	for i, row := range t {
		if len(row) != 2 || !Finite(row[0]) || !Finite(row[1]) || !(row[1] > 0) || (i > 0 && !(row[0] > t[i-1][0])) {
			return false
		}
	}
	return true
}

// Binding says what set a candidate's bank, from the figures the solver
// judged it on: the limit one string fewer fails by, and what set the
// series count with what one more series cell (or module) would give.
type Binding struct {
	// Limit is what fails at one string fewer (Candidate.Limit), or "" when
	// one string carries the pass.
	Limit string `json:"limit"`
	// FewerParallel is the string count one fewer, 0 when one string is
	// enough or the cell cannot carry the pass.
	FewerParallel int `json:"fewer_parallel"`
	// FromBound is true when the count one fewer was ruled out by the
	// solver's lower bound (energy or current), without a run.
	FromBound bool `json:"from_bound"`
	// Step, 1-based, and AtS, in s into the pass, are where the bank of
	// FewerParallel strings failed; nil when it was ruled out by the bound.
	Step *int     `json:"step"`
	AtS  *float64 `json:"at_s"`
	// NeedW, in W, is the power the failing step draws from the bank;
	// FewerESROhm, in Ω, the worst-case bank resistance at FewerParallel;
	// CollapseV, in V, the capacitor voltage 2·√(P·R) where that power is
	// the most the bank can give (REFERENCES.md 3.8). Power limit only.
	NeedW       *float64 `json:"need_w,omitempty"`
	FewerESROhm *float64 `json:"fewer_esr_ohm,omitempty"`
	CollapseV   *float64 `json:"collapse_v,omitempty"`
	// NeedJ and HoldJ, in J: what the pass needs from the bank at least
	// and what FewerParallel strings hold above the window bottom at
	// worst case (the energy bound).
	NeedJ *float64 `json:"need_j,omitempty"`
	HoldJ *float64 `json:"hold_j,omitempty"`
	// CellA and RatingA, in A: the cell current FewerParallel strings
	// reach and the rating it passes (current limits).
	CellA   *float64 `json:"cell_a,omitempty"`
	RatingA *float64 `json:"rating_a,omitempty"`
	// SeriesSetBy is what set the series count: "rating", "cell_max_v",
	// "derating", "module" (rounded up to whole modules) or "design" (the
	// design's series key); CeilingV, in V, the ceiling it was judged
	// against.
	SeriesSetBy string  `json:"series_set_by"`
	CeilingV    float64 `json:"ceiling_v"`
	// NextSeries is one more series cell (or module), NextCellV, in V, its
	// per-cell voltage at the window top, and NextLifeFactor the factor
	// the voltage rule of the life model gives at the same temperature
	// (nil when the cell gives no rated life).
	NextSeries     int      `json:"next_series"`
	NextCellV      float64  `json:"next_cell_v"`
	NextLifeFactor *float64 `json:"next_life_factor"`
}

// bind writes cand's Binding and Why from the trials that decided it: lo,
// the count one fewer (failed, or ruled out by the bound when it has no
// run), and the limits l.
func (p *plan) bind(cand *Candidate, c *Cell, l *cellLimits, lo trial) {
	b := &Binding{Limit: cand.Limit, CeilingV: l.ceiling}
	cand.Binding = b
	var why []string
	if cand.Feasible {
		why = append(why, p.stringsWhy(cand, c, l, lo, b))
	} else {
		why = append(why, fmt.Sprintf("No string count up to %d carries the pass: %s", MaxParallel, strings.TrimSuffix(cand.Reason, ".")))
	}
	why = append(why, p.seriesWhy(cand, c, l, b))
	cand.Why = strings.Join(why, "; ") + "."
}

func (p *plan) stringsWhy(cand *Candidate, c *Cell, l *cellLimits, lo trial, b *Binding) string {
	n := cand.Parallel
	head := fmt.Sprintf("%d %s", n, pluralWord(n, "string", "strings"))
	if lo.par < 1 || cand.Limit == "" {
		return head + ": one string carries the whole pass at worst case"
	}
	b.FewerParallel = lo.par
	fewer := fmt.Sprintf("%d %s", lo.par, pluralWord(lo.par, "string", "strings"))
	if lo.stats.t == 0 && lo.stats.steps == 0 {
		b.FromBound = true
		need, perString, peak, rms := p.boundFigures(l)
		switch lo.limit {
		case "peak_current":
			a := peak / float64(lo.par)
			b.CellA, b.RatingA = &a, &l.peakA
			return fmt.Sprintf("%s: set by the cell's peak current, at %s each cell would carry at least %s, above its %s rating",
				head, fewer, Quantity(a, "A", 4), Quantity(l.peakA, "A", 4))
		case "rms_current":
			a := rms / float64(lo.par)
			b.CellA, b.RatingA = &a, &l.contA
			return fmt.Sprintf("%s: set by the cell's continuous current, at %s each cell would carry at least %s RMS, above its %s rating",
				head, fewer, Quantity(a, "A", 4), Quantity(l.contA, "A", 4))
		}
		hold := perString * float64(lo.par)
		b.NeedJ, b.HoldJ = &need, &hold
		return fmt.Sprintf("%s: set by energy, %s %s at most %s above the window bottom at worst case and the pass needs at least %s",
			head, fewer, pluralWord(lo.par, "holds", "hold"), Quantity(hold, "J", 4), Quantity(need, "J", 4))
	}
	st := lo.stats
	step, at := st.stopStep+1, st.t
	b.Step, b.AtS = &step, &at
	where := fmt.Sprintf("in step %d, %s into the pass", step, Quantity(at, "s", 4))
	switch lo.limit {
	case "power":
		m := l.bank(lo.par)
		need := p.steps[st.stopStep].x
		if p.curve != nil {
			need = need / p.curve.max()
		}
		collapse := 2 * math.Sqrt(need*m.r)
		b.NeedW, b.FewerESROhm, b.CollapseV = &need, &m.r, &collapse
		s := fmt.Sprintf("%s: set by the power collapse at %s (step %d draws %s from the bank; behind %s's worst-case %s the most a bank can give, v²/(4·R), falls to that at a capacitor voltage of 2·√(P·R) = %s, %s into the pass)",
			head, fewer, step, Quantity(need, "W", 4), fewer, Quantity(m.r, "Ω", 4), Quantity(collapse, "V", 4), Quantity(at, "s", 4))
		if !p.bound.charges && cand.EndCapacitorV > 0 {
			most := cand.EndCapacitorV * cand.EndCapacitorV / (4 * cand.WorstESROhm)
			s += fmt.Sprintf("; %d strings can still give %s at the end of the pass (capacitor at %s behind %s)",
				n, Quantity(most, "W", 4), Quantity(cand.EndCapacitorV, "V", 4), Quantity(cand.WorstESROhm, "Ω", 4))
		}
		return s
	case "voltage":
		return fmt.Sprintf("%s: set by %s, at %s the terminal voltage reaches %s in step %d, %s into the %s pass; %s keep it at %s or above",
			head, p.bottomText(cand, c), fewer, Quantity(p.minV, "V", 4), step, Quantity(at, "s", 4), Quantity(l.passTime, "s", 4), head, Quantity(cand.MinTerminalV, "V", 4))
	case "input_current":
		return fmt.Sprintf("%s: set by the converter's input current limit (%s), which %s pass %s", head, Quantity(l.imax, "A", 4), fewer, where)
	case "peak_current":
		a := st.peakI / float64(lo.par)
		b.CellA, b.RatingA = &a, &l.peakA
		return fmt.Sprintf("%s: set by the cell's peak current, %s at %s, above its %s rating", head, Quantity(a, "A", 4), fewer, Quantity(l.peakA, "A", 4))
	case "rms_current":
		a := math.Sqrt(st.i2dt/l.rmsTime) / float64(lo.par)
		b.CellA, b.RatingA = &a, &l.contA
		return fmt.Sprintf("%s: set by the cell's continuous current, %s RMS at %s, above its %s rating", head, Quantity(a, "A", 4), fewer, Quantity(l.contA, "A", 4))
	case "temperature":
		return fmt.Sprintf("%s: set by the cell's maximum temperature (%g °C), which the hottest cell passes at %s", head, l.maxTempC, fewer)
	}
	return fmt.Sprintf("%s: set by %s at %s", head, lo.limit, fewer)
}

func (p *plan) seriesWhy(cand *Candidate, c *Cell, l *cellLimits, b *Binding) string {
	s := cand.Series
	ms, _ := p.d.seriesStep(c)
	least := SeriesCount(p.maxV, l.ceiling)
	var head string
	switch {
	case p.d.Series != nil && s != roundUp(least, ms):
		b.SeriesSetBy = "design"
		head = fmt.Sprintf("%d in series as the design's series key asks (%s per cell; the %s ceiling allows %d)", s, Quantity(cand.CellV, "V", 4), Quantity(l.ceiling, "V", 4), least)
	case s > least:
		b.SeriesSetBy = "module"
		head = fmt.Sprintf("%d in series: %d hold the window top at the %s ceiling, rounded up to whole strings of %d", s, least, Quantity(l.ceiling, "V", 4), ms)
	default:
		what := "the cell's rating"
		b.SeriesSetBy = "rating"
		if l.derated {
			b.SeriesSetBy, what = "derating", fmt.Sprintf("the cell's derated ceiling at %.4g °C", l.ceilingTempC)
		} else if l.ceiling < c.RatedV {
			b.SeriesSetBy, what = "cell_max_v", "the design's cell_max_v"
		}
		head = fmt.Sprintf("%d in series: set by %s of %s per cell, window top %s ÷ %s = %.4g, rounded up", s, what, Quantity(l.ceiling, "V", 4), Quantity(p.maxV, "V", 4), Quantity(l.ceiling, "V", 4), p.maxV/l.ceiling)
	}
	b.NextSeries = s + ms
	b.NextCellV = p.maxV / float64(b.NextSeries)
	next := fmt.Sprintf("%d in series would run each cell at %s", b.NextSeries, Quantity(b.NextCellV, "V", 4))
	if c.RatedLifeH != nil && c.RatedLifeTempC != nil {
		vStep := DefaultLifeVoltageStepV
		if lm := p.d.Life; lm != nil && lm.VoltageStepV != nil {
			vStep = *lm.VoltageStepV
		}
		// The voltage factor of ExpectedLife: 2^((U − U')/ΔU).
		f := math.Exp2((cand.CellV - b.NextCellV) / vStep)
		b.NextLifeFactor = &f
		next += fmt.Sprintf(" and give %.3g× the life at the same temperature (×2 per %g V lower)", f, vStep)
		if cand.Life != nil && cand.Life.AtLeast {
			next += fmt.Sprintf(", though this bank's life is already at the %g-year ceiling", cand.Life.CeilingYears)
		}
	}
	return head + "; " + next
}

// boundFigures are the figures of the solver's lower bound on strings
// (stringBound): the least energy the pass needs from the bank (J), what
// one string holds above the window bottom at worst case (J), and the
// least bank peak and RMS current (A).
func (p *plan) boundFigures(l *cellLimits) (need, perString, peak, rms float64) {
	rString := l.bankESR(l.rw, 1)
	b := &p.bound
	need = b.need
	if b.chargeCurrent {
		need = p.deficit(rString, 0)
	}
	peak, i2dt := b.peak, b.i2dt
	for _, st := range b.resistors {
		i := p.minV / (st.x + rString)
		peak = max(peak, i)
		i2dt += i * i * st.dur * float64(p.repeat)
	}
	perString = 0.5 * l.cw / float64(l.s) * (p.maxV - p.minV) * (p.maxV + p.minV)
	return need, perString, peak, math.Sqrt(i2dt / l.rmsTime)
}

func pluralWord(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// bottomText names what set the bottom a candidate's pass may not pass:
// the window's, or above it the cells' own floor (a hybrid cell's min_v
// times the series count) or the converter's minimum input voltage.
func (p *plan) bottomText(cand *Candidate, c *Cell) string {
	if !(p.minV > p.d.Window.MinV) {
		return "the window bottom"
	}
	if c.MinV != nil && float64(cand.Series)**c.MinV == p.minV {
		return fmt.Sprintf("the cells' own floor (%d × %s min_v, above the %s window bottom)", cand.Series, Quantity(*c.MinV, "V", 4), Quantity(p.d.Window.MinV, "V", 4))
	}
	return fmt.Sprintf("the converter's minimum input voltage (above the %s window bottom)", Quantity(p.d.Window.MinV, "V", 4))
}
