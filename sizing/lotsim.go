package sizing

import (
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
	"sync/atomic"
)

// The lot analysis builds each sampled bank from its own cells and runs the
// worst-case pass on it.
//
// The strings of a sampled bank differ: string k has capacitance
// C_k = 1/Σ_j(1/C_kj) and ESR R_k = Σ_j R_kj. In parallel, the strings
// share the current by conductance at the first instant and by capacitance
// once the redistribution between them has settled (time constants of the
// order of a cell's R·C, a second or less for most cells). capbank runs the
// bank as one equivalent RC with C = Σ C_k and the settled sharing's
// resistance R = Σ C_k²·R_k / C² (each string carrying i·C_k/C,
// REFERENCES.md 5.11): exact for
// equal strings, and for a sampled three-string lot within 0.1 % of ngspice
// simulating the strings as separate branches (TestLotThreeStringsNgspice),
// the condition the lot analysis sets for an equivalent circuit.
//
// A cell's terminal voltage in the pass is then, from a balanced start at
// max_v/n, V_kj = max_v/n − (C_k/C)·(Q/C_kj + i·R_kj), Q the charge the
// bank has given since the start and i its current; the lowest cell is
// found at the pass's lowest terminal voltage and at its deepest charge.

// lotSim is one candidate's lot analysis.
type lotSim struct {
	q      *plan
	l      *cellLimits
	s      int
	model  LotModel
	draw   lotDraw
	seed   int64
	cNom   float64 // worst-case cell capacitance without the tolerance: the draws replace it, F
	rNom   float64 // worst-case cell ESR, Ω
	rWire  float64 // a string's links and end connections, Ω
	gDrain float64 // the drain of one cell during the pass (leakage and balancing), S
	// The standby hold at the window top: the balancing's conductance per
	// cell (S), the cell's nominal leakage conductance (S), and whether
	// active balancing holds every cell at max_v/n.
	gBal, gLeak float64
	active      bool
	hasLeak     bool
	// The cell's peak and continuous current ratings (A, 0: none) and the
	// time the RMS current is taken over (s), as the deterministic pass.
	peakA, contA, rmsTime float64
}

// lotMode is how much of a lot is worked out.
type lotMode int

const (
	lotYield   lotMode = iota // whether it carries the pass, and its cell voltages
	lotFigures                // and its lowest cell during the pass
	lotRuntime                // and its runtime
)

// lotOutcome is what one sampled bank did.
type lotOutcome struct {
	ok         bool    // carried the whole pass
	runtime    float64 // s; +Inf beyond RuntimeLimitS
	firstMax   float64 // highest cell voltage on a first charge from empty, V
	standbyMax float64 // highest cell voltage after a long hold, V
	minCell    float64 // lowest cell terminal voltage over the pass, V
	// passWork and rtWork count the work the lot took (steps solved, plus
	// three per cell for its draws) for the pass and for the runtime.
	passWork, rtWork int
}

// lotBuf holds one worker's draws, reused from lot to lot.
type lotBuf struct {
	x, y, w []float64 // capacitance, ESR and leakage factors, string by string
	ck, rk  []float64 // string capacitance (F) and ESR (Ω)
	pcg     rand.PCG
	r       *rand.Rand
	m       bankModel
}

func newLotSim(q *plan, l *cellLimits, c *Cell, bal *BalancingResult, seed int64) *lotSim {
	ls := &lotSim{q: q, l: l, s: l.s, model: lotModel(c), seed: seed}
	ls.draw = newLotDraw(ls.model)
	ls.cNom = c.CapacitanceF * q.capF * l.coldCK
	ls.rNom = l.rw
	ls.rWire = float64(l.s-1)*l.wLink + l.wStr
	ls.gDrain = l.gCell
	ls.gLeak = l.gLeak
	ls.hasLeak = l.gLeak > 0
	ls.peakA, ls.contA, ls.rmsTime = l.peakA, l.contA, l.rmsTime
	switch bal.Kind {
	case "passive":
		if bal.ResistorOhm != nil {
			ls.gBal = 1 / *bal.ResistorOhm
		}
	case "active":
		ls.active = true
	}
	return ls
}

// sample draws lot n with par strings and runs it as far as mode asks.
// It allocates nothing once b has grown to the bank.
func (ls *lotSim) sample(n, par int, mode lotMode, b *lotBuf) lotOutcome {
	s := ls.s
	cells := s * par
	if cap(b.x) < cells {
		b.x, b.y, b.w = make([]float64, cells), make([]float64, cells), make([]float64, cells)
	}
	if cap(b.ck) < par {
		b.ck, b.rk = make([]float64, par), make([]float64, par)
	}
	if b.r == nil {
		b.r = rand.New(&b.pcg)
	}
	x, y, w := b.x[:cells], b.y[:cells], b.w[:cells]
	ck, rk := b.ck[:par], b.rk[:par]
	lotStream(&b.pcg, ls.seed, n)
	r := b.r
	d := &ls.draw
	for i := range cells {
		x[i] = truncNormal(r, d.cSigma, d.cLo, d.cHi)
		y[i] = truncNormal(r, d.rSigma, d.rLo, d.rHi)
		w[i] = truncNormal(r, d.gSigma, d.gLo, d.gHi)
	}
	out := lotOutcome{passWork: 3 * cells}
	maxV := ls.q.maxV
	cBank, shMax := 0.0, 0.0
	for k := range par {
		rs := 0.0
		for _, yi := range y[k*s : (k+1)*s] {
			rs += yi
		}
		inv, xMin := stringSpread(x[k*s : (k+1)*s])
		ck[k] = ls.cNom / inv
		rk[k] = ls.rNom*rs + ls.rWire
		cBank += ck[k]
		out.firstMax = max(out.firstMax, maxV/xMin/inv)
	}
	rBank := 0.0
	for k := range par {
		sh := ck[k] / cBank
		rBank += sh * sh * rk[k]
		shMax = max(shMax, sh)
	}
	out.standbyMax = ls.standby(w)
	b.m = newBankModel(cBank, rBank+ls.l.wBank, ls.gDrain*float64(par)/float64(s))
	m := &b.m
	m.halt, m.imax, m.effCurve = ls.q.halt, ls.l.imax, ls.l.effCurve
	tr := ls.run(m)
	out.passWork += tr.stats.steps
	// The string of most capacitance carries the largest share of the
	// bank's current (settled sharing), each of its cells all of it.
	st := &tr.stats
	out.ok = st.stop == stopNone &&
		!(ls.peakA > 0 && st.peakI*shMax > ls.peakA) &&
		!(ls.contA > 0 && math.Sqrt(st.i2dt/ls.rmsTime)*shMax > ls.contA)
	if mode == lotYield {
		return out
	}
	out.minCell = math.Min(ls.lowestCell(x, y, ck, cBank, tr.uV, tr.uI), ls.lowestCell(x, y, ck, cBank, tr.qV, tr.qI))
	out.runtime = math.NaN()
	if mode == lotRuntime {
		out.runtime = st.t
		if st.stop == stopNone {
			m.work = 0
			rt := m.runtimeFrom(ls.q.steps, ls.q.period, ls.q.minV, maxV, lotRuntimeBudget, st.v, st.t)
			out.rtWork = int(m.work)
			out.runtime = math.Inf(1)
			if rt.within {
				out.runtime = rt.t
			}
		}
	}
	return out
}

// stringSpread returns Σ 1/x_j and the least x_j of a string's
// capacitance factors: the string's capacitance is the cell's nominal
// over the sum (capacitors in series).
func stringSpread(x []float64) (inv, xMin float64) {
	xMin = math.Inf(1)
	for _, xi := range x {
		inv += 1 / xi
		xMin = min(xMin, xi)
	}
	return inv, xMin
}

// firstChargeMax is the highest cell voltage when a string of cells of
// capacitance factors x (each C_j = C·x_j) is charged from empty to v by
// one series current, before any balancing acts: every cell takes the same
// charge Q, so V_j = Q/C_j with Σ V_j = v (charge conservation), and
// V_max = v / (x_min · Σ 1/x_j).
func firstChargeMax(x []float64, v float64) float64 {
	inv, xMin := stringSpread(x)
	return v / xMin / inv
}

// lotRuntimeBudget bounds the steps one lot's runtime runs one by one
// before the remaining periods are counted by averaging (see runtime).
const lotRuntimeBudget = 20000

// lotRun is a pass with the two states where the lowest cell may be: the
// lowest terminal voltage (capacitor voltage uV, current uI) and the
// deepest charge (qV, qI).
type lotRun struct {
	stats          passStats
	uV, uI, qV, qI float64
}

// run is bankModel.run over the sizing pass, keeping the two states.
func (ls *lotSim) run(m *bankModel) lotRun {
	q := ls.q
	tr := lotRun{uV: q.startV, qV: q.startV}
	s := &tr.stats
	s.v, s.minU = q.startV, math.Inf(1)
	var o stepOutcome
	for range q.repeat {
		for j := range q.steps {
			if j%haltEvery == 0 && m.halted() {
				s.stop = stopHalted
				return tr
			}
			v0 := s.v
			m.solveStep(q.steps[j], v0, q.minV, q.maxV, &o)
			if o.uStart < s.minU {
				s.minU, tr.uV, tr.uI = o.uStart, v0, o.iStart
			}
			if o.uEnd < s.minU {
				s.minU, tr.uV, tr.uI = o.uEnd, o.v1, o.iEnd
			}
			if o.v1 < tr.qV {
				tr.qV, tr.qI = o.v1, o.iEnd
			}
			s.peakI = max(s.peakI, o.iPeak)
			s.i2dt += o.i2dt
			s.t += o.t
			s.v = o.v1
			s.steps++
			if o.stop != stopNone {
				s.stop = o.stop
				return tr
			}
		}
	}
	return tr
}

// lowestCell is the lowest cell terminal voltage of the sampled bank at
// capacitor voltage v and current i (see the comment at the top).
func (ls *lotSim) lowestCell(x, y, ck []float64, cBank, v, i float64) float64 {
	s := ls.s
	q := cBank * (ls.q.startV - v)
	worst := math.Inf(-1)
	for k := range ck {
		sh := ck[k] / cBank
		for j := k * s; j < (k+1)*s; j++ {
			worst = max(worst, sh*(q/(ls.cNom*x[j])+i*ls.rNom*y[j]))
		}
	}
	return ls.q.maxV/float64(s) - worst
}

// standby is the highest cell voltage after a long hold at max_v: each
// cell's leakage (conductance g_j, drawn) in parallel with its balancing
// resistor (g_b) carries the string's one current, so V_j ∝ 1/(g_b + g_j)
// with Σ V_j = max_v. Active balancing holds each cell at max_v/n. NaN
// when the cell gives no leakage and there is no balancing resistor.
func (ls *lotSim) standby(w []float64) float64 {
	s, maxV := ls.s, ls.q.maxV
	if ls.active || s == 1 {
		return maxV / float64(s)
	}
	if !ls.hasLeak {
		if ls.gBal > 0 {
			return maxV / float64(s)
		}
		return math.NaN()
	}
	worst := 0.0
	for k := 0; k+s <= len(w); k += s {
		sum, hi := 0.0, 0.0
		for _, wj := range w[k : k+s] {
			h := 1 / (ls.gBal + ls.gLeak*wj)
			sum += h
			hi = max(hi, h)
		}
		worst = max(worst, maxV*hi/sum)
	}
	return worst
}

// lots runs samples lots of par strings over the workers, each lot into
// its own slot, so the outcome does not depend on the worker count.
func (ls *lotSim) lots(samples, par int, mode lotMode) []lotOutcome {
	out := make([]lotOutcome, samples)
	ls.each(samples, func(n int, b *lotBuf) bool {
		out[n] = ls.sample(n, par, mode, b)
		return true
	})
	return out
}

// each calls f for lots 0 … samples−1 over the workers, each with its own
// buffer, until f returns false or the sizing is cancelled.
func (ls *lotSim) each(samples int, f func(n int, b *lotBuf) bool) {
	workers := max(1, min(runtime.GOMAXPROCS(0), samples/256))
	var stop atomic.Bool
	var wg sync.WaitGroup
	for w := range workers {
		wg.Go(func() {
			var b lotBuf
			for n := w; n < samples; n += workers {
				if n%64 == 0 && (ls.q.halt.Load() || stop.Load()) {
					return
				}
				if !f(n, &b) {
					stop.Store(true)
					return
				}
			}
		})
	}
	wg.Wait()
}

// reaches reports whether the yield of samples lots of par strings
// reaches target. It stops as soon as more lots have failed than the
// target allows, so a count far short of it costs little.
func (ls *lotSim) reaches(samples, par int, target float64) bool {
	allowed := allowedFailures(samples, target)
	var fails atomic.Int64
	ls.each(samples, func(n int, b *lotBuf) bool {
		if !ls.sample(n, par, lotYield, b).ok {
			return fails.Add(1) <= allowed
		}
		return true
	})
	return fails.Load() <= allowed
}

// allowedFailures is the most lots of samples that may fail with the yield
// still at or above target.
func allowedFailures(samples int, target float64) int64 {
	return int64(math.Floor(float64(samples)*(1-target) + 1e-9))
}

// failures counts the lots that did not carry the pass.
func failures(o []lotOutcome) int64 {
	var n int64
	for i := range o {
		if !o[i].ok {
			n++
		}
	}
	return n
}
