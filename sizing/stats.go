package sizing

import (
	"fmt"
	"math"
	"math/bits"
	"sort"
)

// LotStatistics is what banks built from a production lot give: Samples
// lots, each bank's cells drawn from the lot model, each run through the
// worst-case pass (end of life and cold as the deterministic worst case;
// the draws take the place of the tolerance).
type LotStatistics struct {
	// Yield is the share of lots that carry the whole sizing pass; its
	// Monte Carlo standard error is YieldStdErr, √(y(1 − y)/samples).
	Yield       float64 `json:"yield"`
	YieldStdErr float64 `json:"yield_std_err"`
	// TargetYield is the yield asked for, and ParallelForTarget the fewest
	// strings whose yield reaches it; nil when not within twice the
	// candidate's string count, or where Notes say it was not searched.
	TargetYield       float64 `json:"target_yield"`
	ParallelForTarget *int    `json:"parallel_for_target"`
	// RuntimeS, in s: the runtime's percentiles over the lots (a lot
	// still running at RuntimeLimitS gives nil; all nil where Notes say
	// the runtime was left out).
	RuntimeS RuntimePercentiles `json:"runtime_s"`
	// FirstChargeMaxCellV, in V: the highest cell of the bank when it is
	// charged from empty to max_v by one series current before any
	// balancing acts (V_j = Q/C_j), its percentiles over the lots.
	FirstChargeMaxCellV UpperPercentiles `json:"first_charge_max_cell_v"`
	// StandbyMaxCellV, in V: the 99.9th percentile of the highest cell
	// after a long hold at max_v with the chosen balancing, from the
	// leakage spread; nil when the cell gives no leakage and the string
	// has no balancing resistor.
	StandbyMaxCellV *float64 `json:"standby_max_cell_v"`
	// DischargeMinCellV, in V: the lowest cell terminal voltage during the
	// pass, its 1st and 0.1th percentiles over the lots.
	DischargeMinCellV LowerPercentiles `json:"discharge_min_cell_v"`
	// CellRatedV and CellSurgeV (nil: not given) are the thresholds the
	// cell-overvoltage flag judges the cell voltages against, in V.
	CellRatedV float64  `json:"cell_rated_v"`
	CellSurgeV *float64 `json:"cell_surge_v"`
	// Samples and Seed reproduce the analysis; Model is the lot model.
	Samples int      `json:"samples"`
	Seed    int64    `json:"seed"`
	Model   LotModel `json:"model"`
	// Notes say where the analysis drew fewer lots than asked, or left
	// the runtime out, to keep to its work budget.
	Notes []string `json:"notes"`
	// Histograms hold the lots' runtime (nil where left out) and highest
	// first-charge cell voltage, for drawing.
	Histograms LotHistograms `json:"histograms"`
}

// LotHistograms are the distributions the page draws.
type LotHistograms struct {
	RuntimeS            *Histogram `json:"runtime_s"`
	FirstChargeMaxCellV Histogram  `json:"first_charge_max_cell_v"`
}

// Histogram counts values in HistogramBins equal bins from Lo to Hi (the
// least and greatest finite value); Beyond counts the values past the
// range followed (a runtime beyond RuntimeLimitS).
type Histogram struct {
	Lo     float64 `json:"lo"`
	Hi     float64 `json:"hi"`
	Counts []int   `json:"counts"`
	Beyond int     `json:"beyond"`
}

// HistogramBins is the number of bins of a Histogram.
const HistogramBins = 30

// histogramOf bins sorted values (+Inf counted as Beyond).
func histogramOf(sorted []float64) Histogram {
	h := Histogram{Counts: make([]int, HistogramBins)}
	n := len(sorted)
	for n > 0 && !Finite(sorted[n-1]) {
		n--
	}
	h.Beyond = len(sorted) - n
	if n == 0 {
		return h
	}
	h.Lo, h.Hi = sorted[0], sorted[n-1]
	w := (h.Hi - h.Lo) / HistogramBins
	for _, v := range sorted[:n] {
		k := HistogramBins - 1
		if w > 0 {
			k = min(int((v-h.Lo)/w), HistogramBins-1)
		}
		h.Counts[k]++
	}
	return h
}

// RuntimePercentiles are the 1st, 50th and 99th percentiles, in s.
type RuntimePercentiles struct {
	P01 *float64 `json:"p01"`
	P50 *float64 `json:"p50"`
	P99 *float64 `json:"p99"`
}

// UpperPercentiles are the 50th, 99th and 99.9th percentiles.
type UpperPercentiles struct {
	P50  float64 `json:"p50"`
	P99  float64 `json:"p99"`
	P999 float64 `json:"p999"`
}

// LowerPercentiles are the 1st and 0.1th percentiles.
type LowerPercentiles struct {
	P01  float64 `json:"p01"`
	P001 float64 `json:"p001"`
}

// percentile is the p-quantile (0 ≤ p ≤ 1) of sorted values, linear
// between order statistics (the usual "type 7" definition: Hyndman and
// Fan, REFERENCES.md 5.10).
func percentile(sorted []float64, p float64) float64 {
	n := len(sorted)
	if n == 0 {
		return math.NaN()
	}
	h := p * float64(n-1)
	i := int(h)
	if i >= n-1 {
		return sorted[n-1]
	}
	lo, hi := sorted[i], sorted[i+1]
	if math.IsInf(hi, 1) {
		if h == float64(i) {
			return lo
		}
		return hi
	}
	return lo + (h-float64(i))*(hi-lo)
}

// lotOptions are the design's statistics key with its defaults.
type lotOptions struct {
	samples  int
	explicit bool // the design set samples: no work budget applies
	seed     int64
	target   float64
	which    string // "recommended", "all" or "none"
}

func statOptions(d *Design) lotOptions {
	o := lotOptions{samples: DefaultLotSamples, seed: 1, target: DefaultTargetYield, which: "recommended"}
	if st := d.Statistics; st != nil {
		if st.Samples != nil {
			o.samples, o.explicit = *st.Samples, true
		}
		if st.Seed != nil {
			o.seed = *st.Seed
		}
		if st.TargetYield != nil {
			o.target = *st.TargetYield
		}
		if st.Candidates != "" {
			o.which = st.Candidates
		}
	}
	return o
}

// The work budget of a lot analysis run with the default samples, in work
// units (a step solved, or a cell's three draws counting three): about
// a second on two cores. A long profile or a big bank draws fewer lots,
// never fewer than minLotSamples, and the report says so.
const (
	lotWorkBudget = 4e7
	minLotSamples = 100
	lotPilot      = 16 // lots run to measure the pass's work
	lotRtPilot    = 2  // of which followed to measure the runtime's
)

// lotWork is what a lot analysis runs: how many lots, and whether it
// follows each lot's runtime and searches the string count for the target.
type lotWork struct {
	samples         int
	runtime, search bool
	notes           []string
}

// plan sizes the analysis to its work budget from a pilot of the first
// lots' work: the lots themselves (pass and runtime) and the string-count
// search (the pass alone, about log₂(2·par) + 1 times). Where the default
// samples do not fit, it leaves out the runtime, then the search, then
// draws fewer lots (never fewer than minLotSamples), and says so.
func (ls *lotSim) plan(o lotOptions, par int) lotWork {
	if o.explicit {
		return lotWork{samples: o.samples, runtime: true, search: true}
	}
	pass, rt := 0.0, 0.0
	pilot := ls.lots(lotPilot, par, lotFigures)
	for i := range pilot {
		pass += float64(pilot[i].passWork)
	}
	pass /= lotPilot
	pilot = ls.lots(lotRtPilot, par, lotRuntime)
	for i := range pilot {
		rt += float64(pilot[i].rtWork)
	}
	rt /= lotRtPilot
	evals := float64(bits.Len(uint(2*par)) + 1)
	fits := func(perLot float64) int { return int(min(float64(o.samples), lotWorkBudget/perLot)) }
	w := lotWork{samples: fits(pass*(1+evals) + rt), runtime: true, search: true}
	if w.samples < 1000 && rt > 0 {
		w.samples, w.runtime = fits(pass*(1+evals)), false
		w.notes = append(w.notes, "The runtime percentiles were left out: following every lot's runtime over this profile would take too long. Set statistics.samples to ask for them.")
	}
	if w.samples < 1000 {
		w.samples, w.search = fits(pass), false
		w.notes = append(w.notes, "The strings for the target yield were not searched: running the lots again for each string count would take too long over this profile. Set statistics.samples to ask for them.")
	}
	w.samples = max(w.samples, minLotSamples)
	if w.samples < o.samples {
		n := fmt.Sprintf("%d lots were drawn instead of %d to keep the analysis to about a second (a long profile or a big bank); set statistics.samples to ask for more.", w.samples, o.samples)
		if w.samples < 1000 {
			n += " With fewer than 1000 lots the 99.9th and 0.1th percentiles are the most extreme lot drawn, and a yield of 1 bounds the true yield only loosely."
		}
		w.notes = append(w.notes, n)
	}
	return w
}

// analyseLots fills cand.Statistics for the feasible candidate cand of
// cell c, and judges the cell-overvoltage flag on it.
func (p *plan) analyseLots(cand *Candidate, c *Cell) {
	o := statOptions(p.d)
	if steps := float64(len(p.steps) * p.repeat); !o.explicit && minLotSamples*steps > 2*lotWorkBudget {
		cand.Flags = append(cand.Flags, Flag{Code: "lot-analysis-skipped", Severity: Info, Message: fmt.Sprintf(
			"The lot analysis (yield, and the cell voltages of banks built from a production lot that the cell-overvoltage check judges) was not run: %d steps per pass is too long a profile for it within about a second. Set statistics.samples to run it anyway, or size a shorter stretch of the profile.",
			int(steps))})
		return
	}
	q := p.forSeries(c, cand.Series)
	var discard []Flag
	l := q.limits(c, &discard)
	ls := newLotSim(q, &l, c, cand.Balancing, o.seed)
	k := ls.key(o, cand.Parallel)
	st := memoLots(k)
	if st == nil {
		if st = ls.analyse(o, cand.Parallel); st == nil {
			return // cancelled
		}
		keepLots(k, st)
	}
	st.CellRatedV, st.CellSurgeV = c.RatedV, c.SurgeV
	cand.Statistics = st
	cand.Flags = append(cand.Flags, overvoltageFlags(q.maxV, cand.Series, c, st, cand.Balancing)...)
}

// analyse runs the lot analysis of par strings with options o; nil when
// the sizing was cancelled. The cell's thresholds (CellRatedV, CellSurgeV)
// are the caller's to fill.
func (ls *lotSim) analyse(o lotOptions, par int) *LotStatistics {
	lotRuns.Add(1)
	w := ls.plan(o, par)
	samples := w.samples
	mode := lotFigures
	if w.runtime {
		mode = lotRuntime
	}
	out := ls.lots(samples, par, mode)
	if ls.q.halt.Load() {
		return nil
	}
	st := &LotStatistics{Samples: samples, Seed: o.seed, TargetYield: o.target, Model: ls.model, Notes: append([]string{}, w.notes...)}
	fails := failures(out)
	st.Yield = 1 - float64(fails)/float64(samples)
	st.YieldStdErr = math.Sqrt(st.Yield * (1 - st.Yield) / float64(samples))
	vals := make([]float64, samples)
	collect := func(f func(*lotOutcome) float64) []float64 {
		for i := range out {
			vals[i] = f(&out[i])
		}
		sort.Float64s(vals)
		return vals
	}
	if w.runtime {
		rt := collect(func(o *lotOutcome) float64 { return o.runtime })
		st.RuntimeS = RuntimePercentiles{P01: finitePtr(percentile(rt, 0.01)), P50: finitePtr(percentile(rt, 0.5)), P99: finitePtr(percentile(rt, 0.99))}
		h := histogramOf(rt)
		st.Histograms.RuntimeS = &h
	}
	fc := collect(func(o *lotOutcome) float64 { return o.firstMax })
	st.FirstChargeMaxCellV = UpperPercentiles{P50: percentile(fc, 0.5), P99: percentile(fc, 0.99), P999: percentile(fc, 0.999)}
	st.Histograms.FirstChargeMaxCellV = histogramOf(fc)
	mc := collect(func(o *lotOutcome) float64 { return o.minCell })
	st.DischargeMinCellV = LowerPercentiles{P01: percentile(mc, 0.01), P001: percentile(mc, 0.001)}
	if sb := collect(func(o *lotOutcome) float64 { return o.standbyMax }); !math.IsNaN(sb[0]) {
		st.StandbyMaxCellV = finitePtr(percentile(sb, 0.999))
	}
	if w.search {
		st.ParallelForTarget = ls.parallelForTarget(samples, par, fails <= allowedFailures(samples, o.target), o.target)
	}
	if ls.q.halt.Load() {
		return nil
	}
	return st
}

// parallelForTarget is the fewest strings whose yield reaches target,
// given whether the candidate's count par reaches it. With common random
// numbers (lotStream) a lot's first strings are the same whatever the
// count, so the yield never falls as a string is added and the fewest
// count is found by bisection, as the deterministic string count is:
// between 1 and par when par reaches the target, else between par and
// 2·par. nil: not within 2·par.
//
// A cell in modules of several strings is searched in whole modules: the
// counts are multiples of the module's strings (par is one).
func (ls *lotSim) parallelForTarget(samples, par int, reached bool, target float64) *int {
	step := max(1, ls.l.parStep)
	lo, hi := 0, par/step // in modules' strings: 0 carry nothing; par reaches the target
	if !reached {
		if !ls.reaches(samples, 2*par, target) {
			return nil
		}
		lo, hi = par/step, 2*par/step
	}
	for hi-lo > 1 && !ls.q.halt.Load() {
		mid := lo + (hi-lo)/2
		if ls.reaches(samples, mid*step, target) {
			hi = mid
		} else {
			lo = mid
		}
	}
	n := hi * step
	return &n
}

func finitePtr(x float64) *float64 {
	if !Finite(x) {
		return nil
	}
	return &x
}
