package sizing

import (
	"capbank/sizing/cellmodel"
	"context"
	"errors"
	"fmt"
	"math"
	"reflect"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
)

// MaxParallel is the most strings the solver will try for one cell.
const MaxParallel = 10000

// MaxPassSteps bounds steps × repeat, the steps one sizing pass runs.
const MaxPassSteps = 10_000_000

// plan is a design made ready to size: defaults applied, steps compiled.
type plan struct {
	d        *Design
	steps    []compiledStep
	repeat   int
	period   float64 // one pass of the steps, s
	maxV     float64
	minV     float64
	capF     float64 // end-of-life capacitance factor
	esrF     float64 // end-of-life ESR factor
	tolOn    bool    // apply each cell's minus capacitance tolerance
	periodS  float64 // load.period_s; 0: the pass repeats back to back
	rankBy   string
	ambientC float64
	work     *atomic.Int64     // steps solved, for the benchmarks
	bound    boundSums         // the cell-independent parts of stringBound
	halt     *atomic.Bool      // set when the sizing is cancelled (SizeContext)
	floors   map[float64]*plan // the plans of raised window bottoms (forSeries)
	floorsMu sync.Mutex
	root     *plan // the plan this one raised the bottom of; nil for the root
	// startV is the capacitor voltage the pass starts from (load.start_v,
	// else maxV).
	startV float64
	// The wiring's link, string-end and bank resistances, Ω (Wiring).
	wLink, wStr, wBank float64
	// imax is the converter's input current limit, A (0: none); curve its
	// efficiency against input voltage (nil: load.efficiency, flat).
	imax  float64
	curve *efficiencyCurve
	// charger charges the bank between events; nil: none.
	charger *chargerPlan
}

func newPlan(d *Design) *plan {
	p := &plan{d: d, repeat: 1, maxV: d.Window.MaxV, minV: d.Window.MinV,
		capF: DefaultEOLCapacitanceFactor, esrF: DefaultEOLESRFactor, rankBy: "price", ambientC: roomC,
		tolOn: true, work: new(atomic.Int64), halt: new(atomic.Bool)}
	if d.EOL != nil && d.EOL.ApplyTolerance != nil {
		p.tolOn = *d.EOL.ApplyTolerance
	}
	if d.Load.PeriodS != nil {
		p.periodS = *d.Load.PeriodS
	}
	if d.Load.Repeat != nil {
		p.repeat = *d.Load.Repeat
	}
	if d.EOL != nil && d.EOL.CapacitanceFactor != nil {
		p.capF = *d.EOL.CapacitanceFactor
	}
	if d.EOL != nil && d.EOL.ESRFactor != nil {
		p.esrF = *d.EOL.ESRFactor
	}
	if d.RankBy != "" {
		p.rankBy = d.RankBy
	}
	if d.AmbientC != nil {
		p.ambientC = *d.AmbientC
	}
	eff := 1.0
	if d.Load.Efficiency != nil {
		eff = *d.Load.Efficiency
	}
	if cv := d.Converter; cv != nil {
		if cv.MinInputV != nil {
			p.minV = max(p.minV, *cv.MinInputV)
		}
		p.imax = ptr0(cv.MaxInputCurrentA)
		p.curve = newEfficiencyCurve(cv.EfficiencyCurve)
	}
	p.startV = p.maxV
	if d.Load.StartV != nil {
		p.startV = *d.Load.StartV
	}
	p.wLink, p.wStr, p.wBank = d.wiringOhm()
	p.charger = newChargerPlan(d.Charger)
	p.steps = compileSteps(d.Load.StepList(), eff, p.curve != nil)
	for _, s := range p.steps {
		p.period += s.dur
	}
	p.gatherBound()
	return p
}

// forCell returns the plan cell c is sized on at its own series count.
func (p *plan) forCell(c *Cell) *plan {
	var flags []Flag
	return p.forSeries(c, p.limits(c, &flags).s)
}

// forSeries returns the plan cell c is sized on with s in series: the root
// plan itself, or, for a cell whose own floor (min_v, a hybrid cell's
// lowest voltage) times s lies above the window bottom, a copy of it with
// the bottom raised to that. The copies share the root's cancel flag and
// step count, and are made once per floor.
func (p *plan) forSeries(c *Cell, s int) *plan {
	root := p
	if p.root != nil {
		root = p.root
	}
	if c.MinV == nil {
		return root
	}
	floor := float64(s) * *c.MinV
	if !(floor > root.minV) {
		return root
	}
	root.floorsMu.Lock()
	defer root.floorsMu.Unlock()
	if q, ok := root.floors[floor]; ok {
		return q
	}
	q := &plan{d: root.d, steps: root.steps, repeat: root.repeat, period: root.period, maxV: root.maxV, minV: floor,
		capF: root.capF, esrF: root.esrF, tolOn: root.tolOn, periodS: root.periodS, rankBy: root.rankBy, ambientC: root.ambientC,
		work: root.work, halt: root.halt, root: root, startV: root.startV,
		wLink: root.wLink, wStr: root.wStr, wBank: root.wBank, imax: root.imax, curve: root.curve,
		charger: root.charger}
	q.gatherBound()
	if root.floors == nil {
		root.floors = map[float64]*plan{}
	}
	root.floors[floor] = q
	return q
}

// compileSteps turns the design's steps into what the bank sees. A
// discharging power step draws P/η from the bank; a charging one delivers
// |P|·η into it. Zero power or current is a rest. With an efficiency
// curve (curved) a power step keeps the load's own power P, and the bank
// model applies the curve at each terminal voltage (powerCurveStep).
func compileSteps(steps []Step, eff float64, curved bool) []compiledStep {
	if curved {
		eff = 1
	}
	out := make([]compiledStep, len(steps))
	for i, s := range steps {
		c := compiledStep{kind: kindRest, dur: s.DurationS, toLoad: 1}
		switch {
		case s.PowerW != nil && *s.PowerW > 0:
			c.kind, c.x, c.toLoad = kindPower, *s.PowerW/eff, eff
		case s.PowerW != nil && *s.PowerW < 0:
			c.kind, c.x, c.toLoad = kindPower, *s.PowerW*eff, 1/eff
		case s.CurrentA != nil && *s.CurrentA != 0:
			c.kind, c.x = kindCurrent, *s.CurrentA
		case s.ResistanceOhm != nil:
			c.kind, c.x = kindResistance, *s.ResistanceOhm
		}
		out[i] = c
	}
	return out
}

// Size validates the design and sizes every candidate cell: for each, the
// fewest cells in series that keep every cell within its ceiling at the
// window top (SeriesCount), then the fewest parallel strings that carry
// every step × repeat at worst case from rest at the window top, with the
// terminal voltage never below the window bottom, never past the
// maximum-power point, and each cell within its peak and RMS current
// ratings. Runtime and the lowest terminal voltage only improve with more
// strings, so the count is found by a bracketing search: by doubling, then
// bisection, or, for a pass that never charges the bank, by trials that
// each trial's energy balance places (see searchByEstimate). Where the
// search starts and steps changes only how many trials it takes.
//
// Candidates are sized in parallel (up to GOMAXPROCS); the report does not
// depend on the order they finish in. A design that fails Validate returns
// its ValidationError and no report.
func Size(d *Design) (*Report, error) {
	return SizeContext(context.Background(), d)
}

// SizeContext is Size that stops when ctx is done: every loop over the
// steps checks a flag once every haltEvery (1024) steps, a mask and a
// predictable branch per step, so the workers return within about a
// thousand steps (well under a millisecond) of the cancellation. A cancelled sizing returns
// ctx's error, wrapped, and no report.
func SizeContext(ctx context.Context, d *Design) (*Report, error) {
	r, _, err := sizeWith(ctx, d, runtime.GOMAXPROCS(0))
	return r, err
}

// size is Size, also returning the number of steps it solved.
func size(d *Design) (*Report, int64, error) {
	return sizeWith(context.Background(), d, runtime.GOMAXPROCS(0))
}

// sizeWith is SizeContext with the candidates shared among workers
// goroutines (at least one; never more than there are cells), also
// returning the number of steps solved. Each candidate is sized on its
// own and written to its own slot, so the report is the same for any
// number of workers.
func sizeWith(ctx context.Context, d *Design, workers int) (*Report, int64, error) {
	if err := Validate(d); err != nil {
		return nil, 0, err
	}
	if err := ctx.Err(); err != nil {
		return nil, 0, fmt.Errorf("sizing: %w", err)
	}
	p := newPlan(d)
	stop := context.AfterFunc(ctx, func() { p.halt.Store(true) })
	defer stop()
	cands := make([]Candidate, len(d.Cells))
	workers = max(1, min(workers, len(d.Cells)))
	var wg sync.WaitGroup
	next := make(chan int)
	for range workers {
		wg.Go(func() {
			for i := range next {
				c := &d.Cells[i]
				cands[i] = p.forCell(c).sizeCell(c)
			}
		})
	}
	for i := range d.Cells {
		if p.halt.Load() {
			break
		}
		next <- i
	}
	close(next)
	wg.Wait()
	if p.halt.Load() {
		return nil, 0, fmt.Errorf("sizing: %w", context.Cause(ctx))
	}

	rank(cands, p.rankBy)
	r := &Report{
		Design: d.Name, RankBy: p.rankBy, MaxV: p.maxV, MinV: p.minV,
		EOLCapacitanceFactor: p.capF, EOLESRFactor: p.esrF, ColdC: d.ColdC,
		ProfileDurationS: p.period, PassDurationS: p.period * float64(p.repeat), Repeat: p.repeat, PeriodS: d.Load.PeriodS,
		Candidates: cands,
	}
	if d.BOQ != nil {
		r.Currency = d.BOQ.Currency
	}
	if len(cands) > 0 && cands[0].Feasible {
		id := cands[0].CellID
		r.Recommended = &id
		r.Curve = p.curveOf(&cands[0])
	}
	p.analyseCandidates(cands)
	if p.halt.Load() {
		return nil, 0, fmt.Errorf("sizing: %w", context.Cause(ctx))
	}
	if err := checkFinite(r); err != nil {
		return nil, 0, err
	}
	return r, p.work.Load(), nil
}

// analyseCandidates runs the lot analysis on the recommended candidate, on
// every feasible one when the design asks for "all", or on none.
func (p *plan) analyseCandidates(cands []Candidate) {
	which := statOptions(p.d).which
	for i := range cands {
		if which == "none" || !cands[i].Feasible || (i > 0 && which != "all") || p.halt.Load() || p.cell(cands[i].CellID).Model != nil {
			continue
		}
		if c := p.cell(cands[i].CellID); c != nil {
			p.analyseLots(&cands[i], c)
		}
	}
}

// curveOf traces the worst-case pass of a candidate's bank.
func (p *plan) curveOf(c *Candidate) *Curve {
	cell := p.cell(c.CellID)
	if cell == nil {
		return nil
	}
	q := p.forCell(cell)
	var flags []Flag
	l := q.limits(cell, &flags)
	m := l.bank(c.Parallel)
	return m.curve(q.steps, q.repeat, q.startV, q.maxV, q.minV, curvePoints, l.heatModel(c.Parallel), q.ambientC)
}

// cell is the design's cell of the id, nil when there is none.
func (p *plan) cell(id string) *Cell {
	for i := range p.d.Cells {
		if p.d.Cells[i].ID == id {
			return &p.d.Cells[i]
		}
	}
	return nil
}

// CandidateCurve returns the worst-case curve of the sizing pass for the
// report's candidate cellID (the report carries only the recommended
// one's), as Size would draw it. The design must be the one sized.
func CandidateCurve(d *Design, r *Report, cellID string) (*Curve, error) {
	for i := range r.Candidates {
		c := &r.Candidates[i]
		if c.CellID != cellID {
			continue
		}
		if !c.Feasible {
			return nil, fmt.Errorf("cell %q cannot carry the load (%s), so its bank has no curve", cellID, c.Reason)
		}
		cv := newPlan(d).curveOf(c)
		if cv == nil {
			return nil, fmt.Errorf("cell %q is not in the design", cellID)
		}
		return cv, nil
	}
	return nil, fmt.Errorf("cell %q is not a candidate of this report", cellID)
}

// cellLimits are a cell's worst-case figures, ready for any string count.
type cellLimits struct {
	s       int
	ceiling float64
	cw, rw  float64 // worst-case cell capacitance (F) and ESR (Ω)
	gCell   float64 // leakage conductance of one cell, S
	// model is the cell's model (nil: the ideal RC), and cellC, cellR its
	// rated capacitance (F) and ESR (Ω), which cw and rw derate.
	model        *cellmodel.Model
	cellC, cellR float64
	coldK        float64 // cold factor of the ESR (1: none)
	coldCK       float64 // cold factor of the capacitance (1: none)
	tolK         float64 // the minus tolerance as a factor (1: none or not applied)
	peakA        float64 // 0: not given
	contA        float64 // 0: not given
	passTime     float64
	rmsTime      float64 // what the RMS current is taken over: the period, or the pass
	gLeak        float64 // leakage conductance of one cell alone, S
	bal          balancingPlan
	heat         *heatModel // nil: the cell gives no thermal resistance
	maxTempC     float64    // the cell's maximum temperature, a sizing limit with heat; NaN: none
	ambientC     float64
	halt         *atomic.Bool // the plan's cancel flag, passed to every bank model
	// ceilingTempC is the cell temperature (°C) the voltage derating was
	// read at, and derated whether it lowered the ceiling; parStep the
	// whole number of strings a module holds (1: single cells).
	ceilingTempC float64
	derated      bool
	parStep      int
	// The wiring (Ω) and the converter's input current limit and
	// efficiency curve, passed to every bank model.
	wLink, wStr, wBank float64
	imax               float64
	effCurve           *efficiencyCurve
}

// limitOptions change what limits assumes, for the alternatives a report
// shows beside a candidate: zero values keep the design's choices.
type limitOptions struct {
	series    int        // cells in series; 0: SeriesCount at the ceiling
	balancing *Balancing // nil: the design's balancing
	// hotC is the cell temperature (°C) the voltage derating is read at;
	// nil: the ambient.
	hotC *float64
}

func (p *plan) limits(c *Cell, flags *[]Flag) cellLimits {
	return p.limitsWith(c, limitOptions{}, flags)
}

func (p *plan) limitsWith(c *Cell, o limitOptions, flags *[]Flag) cellLimits {
	l := cellLimits{ceiling: c.RatedV, coldK: 1, coldCK: 1, tolK: 1, passTime: p.period * float64(p.repeat),
		maxTempC: math.NaN(), ambientC: p.ambientC, halt: p.halt,
		wLink: p.wLink, wStr: p.wStr, wBank: p.wBank, imax: p.imax, effCurve: p.curve}
	l.rmsTime = max(l.passTime, p.periodS)
	if c.Model != nil {
		m := c.Model.Model()
		l.model, l.cellC, l.cellR = &m, c.CapacitanceF, c.ESROhm
	}
	if p.d.CellMaxV != nil {
		if *p.d.CellMaxV <= c.RatedV {
			l.ceiling = *p.d.CellMaxV
		} else {
			*flags = append(*flags, Flag{Code: "ceiling-above-rating", Severity: Info, Message: fmt.Sprintf(
				"The design's per-cell ceiling (%g V) is above this cell's rated voltage (%g V); the rated voltage is used for the series count.",
				*p.d.CellMaxV, c.RatedV)})
		}
	}
	if len(c.VoltageDerating) > 0 {
		l.ceilingTempC = p.ambientC
		if o.hotC != nil {
			l.ceilingTempC = *o.hotC
		}
		if v := derate(c.VoltageDerating, l.ceilingTempC); v < l.ceiling {
			l.ceiling, l.derated = v, true
		}
	}
	var ms int
	ms, l.parStep = p.d.seriesStep(c)
	l.s = roundUp(SeriesCount(p.maxV, l.ceiling), ms)
	if o.series > 0 {
		l.s = o.series
	} else if p.d.Series != nil {
		l.s = *p.d.Series
	}
	if cold := p.d.ColdC; cold != nil {
		if c.ColdESRFactor != nil && c.ColdESRTempC != nil {
			k, beyond := ColdFactor(*cold, *c.ColdESRTempC, *c.ColdESRFactor)
			l.coldK = k
			if beyond {
				*flags = append(*flags, Flag{Code: "cold-beyond-datasheet", Severity: Warning, Message: fmt.Sprintf(
					"The design's cold temperature (%g °C) is below the coldest ESR point the cell gives (%g °C, ×%g); capbank uses ×%g, and the real ESR may be higher. Get the ESR at %g °C from the maker or measure it.",
					*cold, *c.ColdESRTempC, *c.ColdESRFactor, *c.ColdESRFactor, *cold)})
			}
			if c.ColdCapacitanceFactor != nil {
				l.coldCK, _ = ColdFactor(*cold, *c.ColdESRTempC, *c.ColdCapacitanceFactor)
			}
		} else if *cold < roomC {
			*flags = append(*flags, Flag{Code: "no-cold-esr", Severity: Warning, Message: fmt.Sprintf(
				"The cell gives no ESR at a cold temperature, so the worst case at %g °C uses the 25 °C ESR; organic cells commonly show 1.5–10 × the ESR at −40 °C, as their electrolyte conducts less in the cold (common practice, no source). Add cold_esr_factor and cold_esr_temp_c.",
				*cold)})
		}
		if c.MinTempC != nil && *cold < *c.MinTempC {
			*flags = append(*flags, Flag{Code: "cold-below-range", Severity: Warning, Message: fmt.Sprintf(
				"The design's cold temperature (%g °C) is below the cell's operating range (from %g °C).", *cold, *c.MinTempC)})
		}
	}
	if t := c.CapacitanceTolerancePct; p.tolOn && len(t) == 2 {
		l.tolK = 1 + t[0]/100
	}
	l.cw = c.CapacitanceF * p.capF * l.tolK * l.coldCK
	l.rw = c.ESROhm * p.esrF * l.coldK
	if c.LeakageA != nil {
		l.gLeak = *c.LeakageA / c.RatedV
	}
	// The balancing drain acts across each cell like its leakage.
	b := Balancing{}
	if p.d.Balancing != nil {
		b = *p.d.Balancing
	}
	if o.balancing != nil {
		b = *o.balancing
	}
	l.bal = p.planBalancing(c, b, l.s, l.ceiling)
	*flags = append(*flags, l.bal.flags...)
	l.gCell = l.gLeak + l.bal.gCell
	if c.PeakCurrentA != nil {
		l.peakA = *c.PeakCurrentA
	}
	if c.MaxCurrentA != nil {
		l.contA = *c.MaxCurrentA
	}
	if c.ThermalResistanceKPerW != nil {
		h := &heatModel{rth: *c.ThermalResistanceKPerW, rCell: l.rw}
		if c.MassKg != nil {
			cp := DefaultSpecificHeat
			if c.SpecificHeatJPerKgK != nil {
				cp = *c.SpecificHeatJPerKgK
			}
			h.tau = h.rth * *c.MassKg * cp
		}
		l.heat = h
		if c.MaxTempC != nil {
			l.maxTempC = *c.MaxTempC
		}
	}
	return l
}

// heatModel returns the thermal model of a cell in a bank of par strings,
// or nil when the cell gives no thermal resistance.
func (l *cellLimits) heatModel(par int) *heatModel {
	if l.heat == nil {
		return nil
	}
	h := *l.heat
	h.par = float64(par)
	return &h
}

// bankESR is the series resistance (Ω) of par strings of cells of ESR
// cellOhm with the design's wiring.
func (l *cellLimits) bankESR(cellOhm float64, par int) float64 {
	return WiredBankESR(cellOhm, l.s, par, l.wLink, l.wStr, l.wBank)
}

func (l *cellLimits) bank(par int) bankModel {
	m := newBankModel(BankCapacitance(l.cw, l.s, par), l.bankESR(l.rw, par), l.gCell*float64(par)/float64(l.s))
	m.halt, m.imax, m.effCurve = l.halt, l.imax, l.effCurve
	return m
}

// hotSpot runs the thermal model of bank m (par strings) over the sizing
// pass and returns its result and the hot spot, °C: ambient plus the
// larger of the pass's peak rise and the periodic steady state's.
func (p *plan) hotSpot(l *cellLimits, m *bankModel, par int) (heatResult, float64) {
	hr := m.heat(p.steps, p.repeat, p.startV, p.maxV, p.minV, *l.heatModel(par), p.periodS)
	return hr, l.ambientC + math.Max(hr.peak, ptr0(hr.dutyPeak))
}

// trial is one string count tried.
type trial struct {
	par   int
	ok    bool
	limit string // what failed: voltage, power, peak_current, rms_current, temperature
	stats passStats
	model *modelRun // the pass on the cell's model; nil: the ideal RC
}

// try runs the sizing pass on par strings and judges it: the window
// bottom, the maximum-power point, the cell's peak current, its
// continuous (RMS) current over the period, and, where the cell gives a
// thermal resistance and a maximum temperature, the hot spot.
func (p *plan) try(l *cellLimits, par int) trial {
	m := l.bank(par)
	var mr *modelRun
	var s passStats
	if l.model != nil {
		mr = p.runModel(l, par)
		s = mr.stats
	} else {
		s = m.run(p.steps, p.repeat, p.startV, p.minV, p.maxV)
	}
	p.work.Add(int64(s.steps))
	tr := trial{par: par, stats: s, ok: true, model: mr}
	switch {
	case s.stop != stopNone:
		tr.ok, tr.limit = false, s.stop.String()
	case l.peakA > 0 && s.peakI/float64(par) > l.peakA:
		tr.ok, tr.limit = false, "peak_current"
	case l.contA > 0 && math.Sqrt(s.i2dt/l.rmsTime)/float64(par) > l.contA:
		tr.ok, tr.limit = false, "rms_current"
	case l.heat != nil && !math.IsNaN(l.maxTempC):
		// Each step heats at its mean loss, so the rise never passes the
		// steady rise of the lossiest step, R_th·R_cell·max(i²)/p²: only a
		// bank that could pass the limit by that bound is run through the
		// thermal model.
		bound := l.ambientC + l.heat.rth*l.heat.rCell*s.maxI2/float64(par*par)
		if bound <= l.maxTempC {
			break
		}
		if _, hot := p.hotSpot(l, &m, par); hot > l.maxTempC {
			tr.ok, tr.limit = false, "temperature"
		}
	}
	return tr
}

// sizeCell sizes cell c on the design's choices, and where passive
// balancing costs too much, sizes the alternatives the report shows
// beside it.
func (p *plan) sizeCell(c *Cell) Candidate {
	cand := p.sizeCellWith(c, limitOptions{})
	if len(c.VoltageDerating) > 0 {
		cand = p.deratedAtHotSpot(c, cand)
	}
	p.balancingAlternatives(&cand, c)
	return cand
}

func (p *plan) sizeCellWith(c *Cell, o limitOptions) Candidate {
	cand := Candidate{CellID: c.ID, CellName: c.Name, Flags: []Flag{}}
	l := p.limitsWith(c, o, &cand.Flags)
	cand.Series = l.s
	cand.CellCeilingV = l.ceiling
	if len(c.VoltageDerating) > 0 {
		t := l.ceilingTempC
		cand.CeilingTempC = &t
	}
	cand.CellV = p.maxV / float64(l.s)
	cand.MinV = p.minV
	cand.ColdESRFactor = l.coldK
	cand.ColdCapacitanceFactor = l.coldCK
	cand.ToleranceFactor = l.tolK
	cand.WorstCase = p.worstCaseText(c, &l)
	if c.MinV != nil && p.minV > p.d.Window.MinV {
		cand.Flags = append(cand.Flags, Flag{Code: "cell-floor", Severity: Info, Message: fmt.Sprintf(
			"This cell may not be discharged below %g V (its min_v: a hybrid cell's negative electrode is damaged below it); with %d in series its own floor raises the bottom of the window from %s to %s for this candidate.",
			*c.MinV, l.s, Quantity(p.d.Window.MinV, "V", 4), Quantity(p.minV, "V", 4))})
	}
	if tau, ok := SelfDischargeTime(c); ok && tau < LeakageWarnS {
		cand.Flags = append(cand.Flags, Flag{Code: "leakage-high", Severity: Warning, Message: fmt.Sprintf(
			"The cell's leakage (%s at %g V, %g F) gives a self-discharge time constant C·U_R/I of %s, under about four days, where supercapacitors commonly hold their charge for days to months (common practice, no source). Check the datasheet figure and its unit.",
			Quantity(*c.LeakageA, "A", 3), c.RatedV, c.CapacitanceF, hoursText(tau/3600))})
	}
	if l.heat != nil && !math.IsNaN(l.maxTempC) && l.ambientC >= l.maxTempC {
		cand.Reason = fmt.Sprintf("The ambient temperature (%g °C) is already at or above the cell's maximum operating temperature (%g °C); no number of strings helps. Cool the bank or choose a cell rated hotter.", l.ambientC, l.maxTempC)
		cand.Limit = "temperature"
		p.fillFigures(&cand, c, &l, p.try(&l, 1))
		p.bind(&cand, c, &l, trial{})
		return cand
	}
	if t, ok := p.drainAlone(&l); ok {
		cand.Reason = fmt.Sprintf("The leakage and balancing drain alone (time constant C/g = %.3g h, the same for any string count) brings the bank from %g V to the window bottom (%g V) in %.4g s, within the %.4g s pass, and no step charges it; no number of strings helps. Choose active balancing (balancing.kind), a cell with less leakage, or a shorter pass.",
			l.cw/l.gCell/3600, p.startV, p.minV, t, l.passTime)
		p.fillFigures(&cand, c, &l, p.try(&l, MaxParallel))
		p.bind(&cand, c, &l, trial{})
		return cand
	}
	lo, hi, ok := p.search(&l)
	if !ok {
		cand.Reason = p.infeasibleReason(&l, lo)
		p.fillFigures(&cand, c, &l, lo)
		p.bind(&cand, c, &l, trial{})
		return cand
	}
	if hi.par%l.parStep != 0 {
		// Whole modules: more strings carry the pass too.
		hi = p.try(&l, roundUp(hi.par, l.parStep))
	}
	cand.Feasible = true
	cand.Limit = lo.limit
	p.fillFigures(&cand, c, &l, hi)
	p.bind(&cand, c, &l, lo)
	if cand.Limit == "rms_current" && p.periodS == 0 {
		cand.Flags = append(cand.Flags, Flag{Code: "rms-back-to-back", Severity: Info, Message: fmt.Sprintf(
			"The cell's continuous-current rating (%g A, a heating limit) set the string count, with the RMS current taken over the %s pass as if it repeated back to back for ever. If the event repeats less often, give load.period_s, the time from the start of one event to the start of the next: the RMS is then taken over the period, and a one-shot event may need fewer strings.",
			l.contA, Quantity(l.passTime, "s", 4))})
	}
	return cand
}

// search finds the fewest strings that carry the pass. It returns the
// trial at that count (hi) and the one at a string fewer (lo, taken from
// the bound when that is below it), or ok false with lo the failing trial
// at MaxParallel. Every count below the bound p0 fails; lo always fails
// and hi always carries the load, and the search ends when they are one
// string apart, so the answer does not depend on where it starts.
func (p *plan) search(l *cellLimits) (lo, hi trial, ok bool) {
	p0, why, guess := p.stringBound(l)
	if p0 > 1 {
		lo = trial{par: p0 - 1, limit: why}
	}
	if !p.bound.charges {
		return p.searchByEstimate(l, lo, guess)
	}
	// A pass that charges the bank: start at the estimate, step outwards
	// (1, 2, 4, … strings) until the answer is bracketed, then bisect.
	if t := p.try(l, guess); t.ok {
		hi = t
		for step := 1; hi.par-lo.par > 1; step *= 2 {
			t := p.try(l, max(lo.par+1, hi.par-step))
			if !t.ok {
				lo = t
				break
			}
			hi = t
		}
	} else {
		lo = t
		for step := 1; ; step *= 2 {
			if lo.par >= MaxParallel {
				return lo, hi, false
			}
			t := p.try(l, min(MaxParallel, lo.par+step))
			if t.ok {
				hi = t
				break
			}
			lo = t
		}
	}
	for hi.par-lo.par > 1 {
		mid := p.try(l, lo.par+(hi.par-lo.par)/2)
		if mid.ok {
			hi = mid
		} else {
			lo = mid
		}
	}
	return lo, hi, true
}

// searchByEstimate is search for a pass that never charges the bank,
// where each trial says roughly how many strings would just carry it
// (parEstimate). The trials look for the root of φ(p) = estimate(p) − p,
// positive below the answer and negative above it, by the secant through
// the last two trials (the first estimate alone at the start), rounded up
// and kept inside the bracket; where three trials in a row have not
// halved the bracket, a bisection step is taken instead, and until a trial
// carries the load the count grows by at least 1, 2, 4, … strings a step.
// So the search ends within a few times log₂(MaxParallel) trials whatever
// the estimates say, and in two or three when they are good. It starts at
// guess with lo from the bound.
func (p *plan) searchByEstimate(l *cellLimits, lo trial, guess int) (trial, trial, bool) {
	var hi trial
	carried := false
	probe, grow, slow := guess, 1, 0
	var prevPar, prevPhi float64 // the trial before the last, par 0: none
	for {
		before := hi.par - lo.par
		t := p.try(l, probe)
		if t.ok {
			hi, carried = t, true
		} else {
			lo = t
		}
		if !carried && lo.par >= MaxParallel {
			return lo, hi, false
		}
		if carried && hi.par-lo.par <= 1 {
			return lo, hi, true
		}
		// Where the estimates put the root of φ.
		par := float64(t.par)
		phi := p.parEstimate(l, t) - par
		root := par + phi
		if prevPar != 0 && prevPhi != phi && !math.IsNaN(prevPhi) {
			root = par - phi*(par-prevPar)/(phi-prevPhi)
		}
		prevPar, prevPhi = par, phi
		if !carried {
			next := lo.par + grow
			grow *= 2
			if r := math.Ceil(root); r > float64(next) {
				next = int(min(r, MaxParallel))
			}
			probe = min(next, MaxParallel)
			continue
		}
		w := hi.par - lo.par
		if before > 0 && 2*w > before+1 {
			slow++ // this trial did not halve the bracket
		} else {
			slow = 0
		}
		switch r := math.Ceil(root); {
		case slow >= 3 || math.IsNaN(r):
			probe = lo.par + w/2
		case r <= float64(lo.par):
			probe = lo.par + 1
		case r >= float64(hi.par):
			probe = hi.par - 1 // the estimate says hi: check the count below it
		default:
			probe = int(r)
		}
	}
}

// parEstimate is the number of strings (not rounded) that trial t says
// would just carry a pass that never charges the bank; NaN when it says
// nothing. By the trial's energy balance (REFERENCES.md 3.11 with the
// drain), its capacitor gave D = ½·C·(max_v² − v²) = E_load + E_ESR +
// E_drain, v its end voltage. A string holds c = ½·(C/p)·(max_v² − v_cut²)
// above the capacitor voltage v_cut where the terminal reaches min_v, and
// drains d = E_drain/p; the ESR loss falls as 1/p for the same current.
// Over the whole pass, p strings then need
//
//	p·(c − d) = E_load + E_ESR·par/p,
//	p = (E_load + √(E_load² + 4·(c − d)·E_ESR·par))/(2·(c − d))
//
// with E_load and the drain scaled up to the whole pass for a trial that
// stopped early (E_load = E_pass, boundSums.drawJ; its v is v_cut), and for
// one that carried it v_cut = v − m, m the lowest terminal voltage's height
// above min_v (taken to fall near the end, where v is lowest). A current
// limit needs the strings that bring the cell's peak or RMS current to its
// rating. These only place the next trial (see searchByEstimate): where
// the lowest voltage falls and how the drain spreads over the pass make
// them approximate.
func (p *plan) parEstimate(l *cellLimits, t trial) float64 {
	s := &t.stats
	par := float64(t.par)
	rms := math.Sqrt(s.i2dt / l.rmsTime)
	if !t.ok && t.limit == "peak_current" {
		return s.peakI / l.peakA
	}
	if !t.ok && t.limit == "rms_current" {
		return rms / l.contA
	}
	if !t.ok && t.limit != "voltage" || !(s.t > 0) {
		return math.NaN()
	}
	m := l.bank(t.par)
	top2 := p.maxV * p.maxV
	esr := m.r * s.i2dt
	drain := max(0, 0.5*m.c*(top2-s.v*s.v)-s.eLoad-esr)
	load, cut, scale := s.eLoad, s.v, l.passTime/s.t
	if t.ok {
		cut = s.v - (s.minU - p.minV)
	} else {
		load = p.bound.drawJ
	}
	c := 0.5 * m.c / par * (top2 - cut*cut)
	a := c - drain*scale/par
	esr *= scale
	est := math.NaN()
	if a > 0 && cut > 0 && load > 0 {
		est = (load + math.Sqrt(load*load+4*a*esr*par)) / (2 * a)
	}
	if t.ok && l.peakA > 0 {
		est = max(nanTo0(est), s.peakI/l.peakA)
	}
	if t.ok && l.contA > 0 {
		est = max(nanTo0(est), rms/l.contA)
	}
	return est
}

// nanTo0 returns x, or 0 for NaN (max and min pass NaN on).
func nanTo0(x float64) float64 {
	if math.IsNaN(x) {
		return 0
	}
	return x
}

// stringBound returns the fewest strings that can possibly carry the pass,
// and what sets it, from bounds that need no simulation:
//
//   - energy: the capacitor stays at or above min_v (its terminal voltage
//     does, and v ≥ u while discharging), so p strings give at most
//     ½·C_w·(p/s)·(max_v² − min_v²); the pass needs at least the largest
//     running deficit of energy drawn, with every step's draw taken at its
//     least (constant current I·min_v, resistor min_v²/R_L, power P) and
//     every charge at its most, the deficit never below zero since the bank
//     is held at the top;
//   - current: each cell's peak and RMS current at p strings is at least
//     the bank current's lower bound (I; P/max_v; min_v/(R_L + R_string))
//     divided by p.
//
// Leakage and ESR losses only add to the need, so every count below the
// bound fails; the bound is taken 1e-9 low so rounding never skips the
// answer.
func (p *plan) stringBound(l *cellLimits) (int, string, int) {
	rString := l.bankESR(l.rw, 1) // one string: the largest R of any count
	need, perString, peak, rms := p.boundFigures(l)
	vMid := (p.maxV + p.minV) / 2
	i2est := p.bound.i2est // ∫i²dt with the current at mid-window, for the ESR loss
	bound, why := need/perString, "voltage"
	if l.peakA > 0 && peak/l.peakA > bound {
		bound, why = peak/l.peakA, "peak_current"
	}
	if l.contA > 0 && rms/l.contA > bound {
		bound, why = rms/l.contA, "rms_current"
	}
	n := math.Ceil(bound * (1 - 1e-9))
	if !(n >= 1) {
		n, why = 1, ""
	}
	n = min(n, MaxParallel)
	// The estimate adds the ESR loss, which falls as 1/p for the same bank
	// current: p·A = D + L/p with A the energy per string, D the need and
	// L = R_string·∫i²dt, so p = (D + √(D² + 4·A·L))/(2A).
	ld := rString * i2est
	est := math.Ceil((need + math.Sqrt(need*need+4*perString*ld)) / (2 * perString))
	// The drain (leakage and balancing) grows with the string count like
	// the capacity does: each string loses (g_cell/s)·v² (W), taken at
	// mid-window, so p strings need D(p), the largest running deficit of
	// the draws plus p times that. A few rounds of
	// p = (D(p) + √(D(p)² + 4·A·L))/(2A) settle it; it is only where the
	// search starts, so it need not be exact.
	if drainW := l.gCell / float64(l.s) * vMid * vMid; drainW > 0 {
		for range 4 {
			if !(est < MaxParallel) {
				break
			}
			d := p.deficit(rString, est*drainW)
			next := math.Ceil((d + math.Sqrt(d*d+4*perString*ld)) / (2 * perString))
			if next == est {
				break
			}
			est = next
		}
	}
	guess := n
	if est > n && est < MaxParallel {
		guess = est
	}
	return int(n), why, int(guess)
}

// drainAlone reports whether the drain alone (leakage and balancing, the
// same time constant C/g for any string count, v = max_v·e^(−t·g/C))
// brings the bank to min_v within the pass when no step charges it, so no
// number of strings can carry the pass; and when it does.
func (p *plan) drainAlone(l *cellLimits) (float64, bool) {
	if l.gCell <= 0 {
		return 0, false
	}
	for _, st := range p.steps {
		if st.x < 0 {
			return 0, false
		}
	}
	t := l.cw / l.gCell * math.Log(p.startV/p.minV)
	return t, t < l.passTime
}

func (p *plan) infeasibleReason(l *cellLimits, t trial) string {
	j := t.stats.stopStep
	at := fmt.Sprintf("%.4g s into the pass (step %d)", t.stats.t, j+1)
	switch t.limit {
	case "voltage":
		if p.steps[j].kind == kindRest {
			return fmt.Sprintf("Leakage alone brings the bank below the window bottom (%g V) during a rest, %s; more strings do not help: shorten the rest, recharge before it, or choose a cell with less leakage.", p.minV, at)
		}
		if l.gCell > 0 {
			return fmt.Sprintf("Even %d strings reach the window bottom (%g V) %s. With that many strings the load hardly matters: the leakage and balancing drain, whose time constant C/g = %.3g h is the same for any string count, empties the bank. Choose active balancing (balancing.kind), a cell with less leakage, or recharge sooner.",
				t.par, p.minV, at, l.cw/l.gCell/3600)
		}
		return fmt.Sprintf("Even %d strings reach the window bottom (%g V) %s.", t.par, p.minV, at)
	case "power":
		return fmt.Sprintf("Even %d strings pass the maximum-power point of the load %s.", t.par, at)
	case "input_current":
		st := p.steps[j]
		need := st.x / l.imax
		if p.curve != nil {
			need = st.x / p.curve.max() / l.imax
		}
		if need >= p.startV {
			return fmt.Sprintf("The converter's input current limit (%g A) needs at least %s at its input for step %d (%s ÷ %g A), at or above the voltage the bank starts from (%s): no number of strings helps. Raise converter.max_input_current_a or the bank voltage.",
				l.imax, Quantity(need, "V", 4), j+1, Quantity(st.x, "W", 4), l.imax, Quantity(p.startV, "V", 4))
		}
		return fmt.Sprintf("Even %d strings let the terminal voltage fall to where the converter would draw more than its input current limit (%g A) %s.", t.par, l.imax, at)
	case "peak_current":
		return fmt.Sprintf("Even with %d strings the cell current peaks at %.4g A, above its peak rating of %g A.", t.par, t.stats.peakI/float64(t.par), l.peakA)
	case "temperature":
		m := l.bank(t.par)
		_, hot := p.hotSpot(l, &m, t.par)
		return fmt.Sprintf("Even with %d strings the hottest cell reaches %.1f °C, above its %g °C maximum operating temperature.", t.par, hot, l.maxTempC)
	}
	return fmt.Sprintf("Even with %d strings the cell RMS current exceeds its continuous rating of %g A.", t.par, l.contA)
}

// fillFigures writes the bank figures of the chosen string count.
func (p *plan) fillFigures(cand *Candidate, c *Cell, l *cellLimits, t trial) {
	par, s := t.par, l.s
	cand.Parallel = par
	cand.Cells = s * par
	cand.CapacitanceF = BankCapacitance(c.CapacitanceF, s, par)
	cand.ESROhm = l.bankESR(c.ESROhm, par)
	m := l.bank(par)
	cand.WorstCapacitanceF, cand.WorstESROhm = m.c, m.r
	if m.g > 0 {
		rp := 1 / m.g
		cand.LeakageOhm = &rp
	}
	cand.StoredEnergyJ = StoredEnergy(cand.CapacitanceF, p.maxV)
	cand.UsableEnergyJ = UsableEnergy(m.c, p.maxV, p.minV)
	st := t.stats
	cand.MinTerminalV = st.minU
	cand.MinCellV = st.minU / float64(s)
	cand.EndCapacitorV = st.v
	cand.PeakCurrentA = st.peakI
	over := st.t // a pass that stopped early: over the time it ran
	if t.ok {
		over = l.rmsTime
	}
	if over > 0 {
		cand.RMSCurrentA = math.Sqrt(st.i2dt / over)
	}
	cand.RMSOverS = over
	cand.CellPeakCurrentA = cand.PeakCurrentA / float64(par)
	cand.CellRMSCurrentA = cand.RMSCurrentA / float64(par)
	cand.BankEnergyJ = st.eLoad
	cand.LoadEnergyJ = st.eOut
	// The series loss splits between the cells' ESR and the wiring.
	cellR := BankESR(l.rw, s, par)
	cand.ESRLossJ = cellR * st.i2dt
	cand.WiringLossJ = (m.r - cellR) * st.i2dt
	// The leakage loss by energy balance: ½C(v0² − v1²) = load + series
	// loss + leakage.
	cand.LeakageLossJ = math.Max(0, 0.5*m.c*(p.startV-st.v)*(p.startV+st.v)-st.eLoad-m.r*st.i2dt)
	if m.g == 0 {
		cand.LeakageLossJ = 0
	}
	cand.RejectedEnergyJ = st.reject
	if t.model != nil {
		p.fillModelFigures(cand, c, t.model)
	}
	// Totals: the modules' own figures where the module gives them (cells
	// included), else the cells'.
	cand.Modules = moduleCount(c, s, par)
	total := func(cell, module *float64) *float64 {
		if m := cand.Modules; m != nil && module != nil {
			v := *module * float64(m.Count)
			return &v
		}
		if cell != nil {
			v := *cell * float64(cand.Cells)
			return &v
		}
		return nil
	}
	var mod Module
	if c.Module != nil {
		mod = *c.Module
	}
	cand.TotalPrice, cand.MassKg, cand.VolumeL = total(c.UnitPrice, mod.UnitPrice), total(c.MassKg, mod.MassKg), total(c.VolumeL, mod.VolumeL)
	if cand.TotalPrice == nil {
		cand.Flags = append(cand.Flags, Flag{Code: "no-price", Severity: Info,
			Message: "The cell has no unit price, so it ranks after priced candidates when ranking by price."})
	}
	bal := l.bal.res
	bal.BankCount = bal.Count * par
	bal.BankLossW = bal.LossW * float64(par)
	cand.Balancing = &bal
	p.fillSafety(cand, c, l, m)
	p.fillCharge(cand, c, l, m, st, t.ok)
	if !t.ok {
		return
	}
	p.fillHeatAndLife(cand, c, l, m)
	if t.model != nil {
		p.fillModelRuntime(cand, t.model)
	} else {
		// The runtime's first repeats are the sizing pass just run: go on from
		// where it ended.
		rt := m.runtimeFrom(p.steps, p.period, p.minV, p.maxV, runtimeStepBudget, st.v, st.t)
		p.work.Add(int64(m.work))
		if rt.within {
			v := rt.t
			cand.RuntimeS = &v
			cand.RuntimeEnd = rt.end.String()
			if cand.RuntimeEnd == "" {
				cand.RuntimeEnd = "voltage"
			}
			cand.RuntimeEstimated = rt.estimated
			if rt.estimated {
				cand.Flags = append(cand.Flags, Flag{Code: "runtime-estimated", Severity: Info, Message: fmt.Sprintf(
					"The runtime (%.4g s) spans too many repeats of the steps to run one by one; the periods past the first %d steps were counted by averaging the voltage drop per period.",
					rt.t, runtimeStepBudget)})
			}
		}
	}
	if st.reject > 0 {
		cand.Flags = append(cand.Flags, Flag{Code: "energy-rejected", Severity: Warning, Message: fmt.Sprintf(
			"Charging steps offer %.4g J that the bank cannot absorb because it is held at the window top (%g V); a brake resistor, a charger current limit or a larger window must take it.",
			st.reject, p.maxV)})
	}
	// Common practice, no source: ESR losses above ~10 % of the energy
	// delivered mean the cell is working far from its efficient range.
	if st.eLoad > 0 && cand.ESRLossJ > 0.1*st.eLoad {
		cand.Flags = append(cand.Flags, Flag{Code: "esr-loss-high", Severity: Info, Message: fmt.Sprintf(
			"ESR losses are %.1f %% of the energy delivered over the pass (%.4g J of %.4g J); a lower-ESR cell or more strings would waste less and run cooler (10 %% is a rule of thumb, no source).",
			100*cand.ESRLossJ/st.eLoad, cand.ESRLossJ, st.eLoad)})
	}
}

// rank orders feasible candidates first, best first by the chosen figure
// (ties: fewer cells, then id); infeasible ones follow in input order.
func rank(c []Candidate, by string) {
	key := func(x *Candidate) (float64, bool) {
		switch by {
		case "cells":
			return float64(x.Cells), true
		case "mass":
			if x.MassKg != nil {
				return *x.MassKg, true
			}
		case "volume":
			if x.VolumeL != nil {
				return *x.VolumeL, true
			}
		default:
			if x.TotalPrice != nil {
				return *x.TotalPrice, true
			}
		}
		return 0, false
	}
	sort.SliceStable(c, func(i, j int) bool {
		a, b := &c[i], &c[j]
		if a.Feasible != b.Feasible {
			return a.Feasible
		}
		if !a.Feasible {
			return false
		}
		ka, oka := key(a)
		kb, okb := key(b)
		if oka != okb {
			return oka
		}
		if ka != kb {
			return ka < kb
		}
		if a.Cells != b.Cells {
			return a.Cells < b.Cells
		}
		return a.CellID < b.CellID
	})
}

// ErrNotFinite reports a figure that came out NaN or Inf. Validate refuses
// every input that could give one (FuzzDesign holds it to that), so it
// means an extreme input capbank does not yet check; it is never passed on
// as a number.
var ErrNotFinite = errors.New("sizing: a computed figure is not finite")

// checkFinite walks every number of the report, by reflection so that a
// figure added later is covered too, and returns ErrNotFinite naming the
// first that is NaN or infinite, by its JSON path and its cell.
func checkFinite(r *Report) error {
	fail := func(where string) error {
		return fmt.Errorf("%w (%s); look for an extreme value in the design", ErrNotFinite, where)
	}
	for i := range r.Candidates {
		if path, bad := nonFinite(reflect.ValueOf(&r.Candidates[i]), fmt.Sprintf("candidates[%d]", i)); bad {
			return fail(fmt.Sprintf("cell %q: %s", r.Candidates[i].CellID, path))
		}
	}
	rest := *r
	rest.Candidates = nil
	if path, bad := nonFinite(reflect.ValueOf(&rest), ""); bad {
		return fail(path)
	}
	return nil
}

// nonFinite returns the JSON path, below path, of the first NaN or
// infinite float64 in v. The path is written only when one is found: a
// report holds thousands of figures, and writing each one's path cost a
// fifth of a small sizing answer.
func nonFinite(v reflect.Value, path string) (string, bool) {
	var back []pathStep // the steps from the bad figure up to v
	if !findNonFinite(v, &back) {
		return "", false
	}
	for i := len(back) - 1; i >= 0; i-- {
		switch st := back[i]; {
		case st.field == "":
			path += "[" + strconv.Itoa(st.index) + "]"
		case path != "":
			path += "." + st.field
		default:
			path = st.field
		}
	}
	return path, true
}

// pathStep is one step of a JSON path: a struct field's key, or (field
// empty) a list index.
type pathStep struct {
	field string
	index int
}

// findNonFinite reports whether v holds a NaN or infinite float64, and
// appends the path to it to back, innermost step first.
func findNonFinite(v reflect.Value, back *[]pathStep) bool {
	switch v.Kind() {
	case reflect.Float64:
		return !Finite(v.Float())
	case reflect.Pointer, reflect.Interface:
		return !v.IsNil() && findNonFinite(v.Elem(), back)
	case reflect.Slice, reflect.Array:
		for i := range v.Len() {
			if findNonFinite(v.Index(i), back) {
				*back = append(*back, pathStep{index: i})
				return true
			}
		}
	case reflect.Struct:
		t := v.Type()
		for i := range v.NumField() {
			f := t.Field(i)
			if !f.IsExported() {
				continue
			}
			if findNonFinite(v.Field(i), back) {
				name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
				if name == "" || name == "-" {
					name = f.Name
				}
				*back = append(*back, pathStep{field: name})
				return true
			}
		}
	}
	return false
}

// fillSafety writes the hazard figures, the string's voltage spread and
// balancing figures, and their flags.
func (p *plan) fillSafety(cand *Candidate, c *Cell, l *cellLimits, m bankModel) {
	cand.Hazards = Hazards{
		MaxV:                 p.maxV,
		StoredEnergyJ:        cand.StoredEnergyJ,
		ShortCircuitCurrentA: p.maxV / cand.ESROhm,
		CellEnergyWh:         StoredEnergy(c.CapacitanceF, c.RatedV) / 3600,
	}
	cand.Flags = append(cand.Flags, hazardFlags(cand.Hazards)...)

	minus, plus := 0.0, 0.0
	if t := c.CapacitanceTolerancePct; len(t) == 2 {
		minus, plus = -t[0]/100, t[1]/100
	}
	sp := &Spread{WorstCellV: WorstSpreadVoltage(p.maxV, l.s, minus, plus), MinusPct: -minus * 100, PlusPct: plus * 100}
	if sp.MinusPct == 0 {
		sp.MinusPct = 0 // not −0
	}
	cand.Spread = sp
	// Charge sharing only spreads the cells on a charge from empty: within
	// the window every cell gives and takes back the same charge (charge
	// conservation, REFERENCES.md 5.1). Spread is the extreme stack of the
	// tolerance, a bound; the cell-overvoltage flag is judged on the lot
	// figures instead (analyseLots, overvoltageFlags).
	// Shelf hold: the charged bank, no load and no charger, at worst-case
	// capacitance, from the window top to the window bottom.
	vTop, vMin := p.maxV/float64(l.s), p.minV/float64(l.s)
	iq := 0.0
	g := l.gCell
	if b := cand.Balancing; b.Kind == "active" && b.QuiescentA != nil {
		iq, g = *b.QuiescentA, l.gLeak
	}
	if ts := shelfHold(l.cw, g, iq, vTop, vMin); ts > 0 {
		h := ts / 3600
		cand.Balancing.ShelfHoldH = &h
	}
	if p.d.StandbyH != nil {
		hold := cand.Balancing.ShelfHoldH
		if hold != nil && *hold < *p.d.StandbyH {
			cand.Flags = append(cand.Flags, Flag{Code: "self-discharge", Severity: Warning, Message: fmt.Sprintf(
				"Through leakage and balancing, the charged bank falls to the window bottom (%g V) in %.4g h on the shelf, shorter than the %g h standby the design asks for.",
				p.minV, *hold, *p.d.StandbyH)})
		}
	}
	// The power limit: the string count was set by the load's maximum-power point.
	if cand.Limit == "power" {
		cand.Flags = append(cand.Flags, Flag{Code: "power-limit", Severity: Info, Message: fmt.Sprintf(
			"With one string fewer the load would pass the bank's maximum-power point (terminal voltage √(P·R), the most power a source behind its ESR can deliver) and collapse; the %d strings are set by power, not energy.", cand.Parallel)})
	}
	if !cand.Feasible && strings.Contains(cand.Reason, "maximum-power") {
		cand.Flags = append(cand.Flags, Flag{Code: "power-limit", Severity: Danger, Message: "The load passes the bank's maximum-power point (terminal voltage √(P·R), the most power a source behind its ESR can deliver): the converter's input collapses. " + cand.Reason})
	}
	if !cand.Feasible && strings.Contains(cand.Reason, "current") {
		cand.Flags = append(cand.Flags, Flag{Code: "over-current", Severity: Danger, Message: cand.Reason,
			Caution: "A cell run past its current rating overheats. " + cautionCodes})
	}
}

// fillHeatAndLife writes the thermal figures and the expected life of a
// feasible bank, and their flags.
func (p *plan) fillHeatAndLife(cand *Candidate, c *Cell, l *cellLimits, m bankModel) {
	if hp := l.heatModel(cand.Parallel); hp != nil {
		h := *hp
		th := &Thermal{CellRMSCurrentA: cand.CellRMSCurrentA, CellPeakCurrentA: cand.CellPeakCurrentA,
			SpecificHeatJPerKgK: DefaultSpecificHeat, SpecificHeatDefault: c.SpecificHeatJPerKgK == nil}
		if c.SpecificHeatJPerKgK != nil {
			th.SpecificHeatJPerKgK = *c.SpecificHeatJPerKgK
		}
		if h.tau > 0 {
			tau := h.tau
			th.TimeConstantS = &tau
		}
		th.CellLossW = cand.CellRMSCurrentA * cand.CellRMSCurrentA * l.rw
		th.BankLossW = th.CellLossW * float64(cand.Cells)
		th.SteadyRiseK = th.CellLossW * h.rth
		th.BackToBack = p.periodS == 0
		hr, hot := p.hotSpot(l, &m, cand.Parallel)
		th.PeakRiseK, th.DutyPeakRiseK = hr.peak, hr.dutyPeak
		th.HotSpotC = hot
		cand.Thermal = th
	} else {
		cand.Flags = append(cand.Flags, Flag{Code: "heat-unchecked", Severity: Info, Message: "The cell gives no thermal resistance, so its ESR heating and hot spot are not checked; add thermal_resistance_k_per_w."})
	}
	cand.Flags = append(cand.Flags, thermalFlags(c, cand.Thermal, cand.StoredEnergyJ)...)
	if c.Electrolyte == "" {
		cand.Flags = append(cand.Flags, Flag{Code: "electrolyte-unknown", Severity: Info, Message: "The cell does not name its electrolyte; the fire check takes it as organic (flammable), the usual EDLC case."})
	}

	if c.RatedLifeH == nil {
		cand.Flags = append(cand.Flags, Flag{Code: "life-unchecked", Severity: Info, Message: "The cell gives no rated life, so its expected life is not estimated; add rated_life_h and rated_life_temp_c."})
		return
	}
	tStep, vStep := DefaultLifeTempStepK, DefaultLifeVoltageStepV
	if lm := p.d.Life; lm != nil {
		if lm.TempStepK != nil {
			tStep = *lm.TempStepK
		}
		if lm.VoltageStepV != nil {
			vStep = *lm.VoltageStepV
		}
	}
	temp := p.ambientC
	if cand.Thermal != nil {
		temp = cand.Thermal.HotSpotC
	}
	ceiling := DefaultLifeMaxYears
	if lm := p.d.Life; lm != nil && lm.MaxYears != nil {
		ceiling = *lm.MaxYears
	}
	hours := ExpectedLife(*c.RatedLifeH, *c.RatedLifeTempC, c.RatedV, temp, cand.CellV, tStep, vStep)
	life := &Life{ExpectedH: hours, ExpectedYears: hours / hoursPerYear, TemperatureC: temp, CellV: cand.CellV, DesignYears: p.d.LifeYears, CeilingYears: ceiling}
	if !(hours <= ceiling*hoursPerYear) {
		// Also catches a figure past the largest float64.
		life.ExpectedH, life.ExpectedYears, life.AtLeast = ceiling*hoursPerYear, ceiling, true
		cand.Flags = append(cand.Flags, Flag{Code: "life-beyond-rules", Severity: Info, Message: fmt.Sprintf(
			"At %.3g V per cell and %.1f °C the life rules of thumb (×2 per %g K cooler and per %g V lower than rated %g h at %g °C and %g V; common practice, no source) give more than the %g-year calendar ceiling (life.max_years): neither voltage nor temperature limits this bank's life, and electrolyte and seals age in any case. capbank reports at least %g years and does not rank by it.",
			cand.CellV, temp, tStep, vStep, *c.RatedLifeH, *c.RatedLifeTempC, c.RatedV, ceiling, ceiling)})
	}
	cand.Life = life
	if p.d.LifeYears != nil && life.ExpectedYears < *p.d.LifeYears {
		if life.AtLeast {
			cand.Flags = append(cand.Flags, Flag{Code: "life-short", Severity: Warning, Message: fmt.Sprintf(
				"The design asks for %g years, beyond the %g-year calendar ceiling of the life estimate (life.max_years; common practice, no source): capbank cannot confirm it. Get the maker's calendar-life data for this cell.",
				*p.d.LifeYears, ceiling)})
		} else {
			cand.Flags = append(cand.Flags, Flag{Code: "life-short", Severity: Warning, Message: fmt.Sprintf(
				"Expected life %.3g years at %.1f °C and %.3g V per cell, shorter than the %g years the design asks for (rated %g h at %g °C and %g V, scaled ×2 per %g K cooler and per %g V lower: rules of thumb, common practice, no source). The end of life is the usual criterion: capacitance −20 %% or ESR ×2 (common practice, no source).",
				life.ExpectedYears, temp, cand.CellV, *p.d.LifeYears, *c.RatedLifeH, *c.RatedLifeTempC, c.RatedV, tStep, vStep)})
		}
	}
	if p.capF > DefaultEOLCapacitanceFactor || p.esrF < DefaultEOLESRFactor {
		cand.Flags = append(cand.Flags, Flag{Code: "eol-stricter", Severity: Info, Message: fmt.Sprintf(
			"The design's end-of-life factors (capacitance ×%g, ESR ×%g) are stricter than the usual criteria (×0.8, ×2; common practice, no source) a rated life refers to, so the bank reaches them sooner than the expected life says.", p.capF, p.esrF)})
	}
}

// minusText writes a minus tolerance in percent with a true minus sign.
func minusText(pct float64) string {
	if pct == 0 {
		return "0"
	}
	return "−" + fmt.Sprintf("%g", -pct)
}
