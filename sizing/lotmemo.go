package sizing

import (
	"crypto/sha256"
	"encoding/binary"
	"hash"
	"math"
	"sync"
	"sync/atomic"
)

// The lot analysis is a pure function of what it is given: the bank's
// nominal cell figures at worst case, its drains and ratings, the lot
// model, the profile as the bank sees it, the window and the statistics
// options. A page typing a design sends the same bank again at every
// keystroke that does not change it (a name, a price, a line of the bill
// of quantities), and a service sizes the same designs again and again;
// each analysis costs tens of milliseconds. lotMemo keeps the last
// lotMemoSize analyses by a hash of every one of those inputs, so the same
// inputs give the same figures without running the lots again.

// lotMemoSize bounds the analyses kept (each a few kilobytes).
const lotMemoSize = 256

// lotKey is the SHA-256 of an analysis's inputs.
type lotKey [sha256.Size]byte

var lotMemo = struct {
	sync.Mutex
	m     map[lotKey]*LotStatistics
	order []lotKey // oldest first, to drop
}{m: map[lotKey]*LotStatistics{}}

// lotRuns counts the analyses run (not served from lotMemo), for the tests.
var lotRuns atomic.Int64

// key hashes every input of the analysis of par strings with options o.
func (ls *lotSim) key(o lotOptions, par int) lotKey {
	h := sha256.New()
	f := func(xs ...float64) {
		var b [8]byte
		for _, x := range xs {
			binary.LittleEndian.PutUint64(b[:], math.Float64bits(x))
			h.Write(b[:])
		}
	}
	q, m := ls.q, ls.model
	f(float64(ls.s), float64(par), float64(o.samples), float64(o.seed), o.target, b2f(o.explicit),
		ls.cNom, ls.rNom, ls.gDrain, ls.gBal, ls.gLeak, b2f(ls.active), b2f(ls.hasLeak), ls.peakA, ls.contA, ls.rmsTime,
		m.CapacitanceSigmaPct, m.ESRSigmaPct, m.LeakageSigmaPct, m.CapacitanceBandPct[0], m.CapacitanceBandPct[1],
		q.maxV, q.minV, q.period, float64(q.repeat), float64(len(q.steps)),
		q.startV, ls.rWire, ls.l.wBank, ls.l.imax)
	if c := ls.l.effCurve; c != nil {
		f(float64(len(c.v)))
		f(c.v...)
		f(c.eta...)
	}
	for _, st := range q.steps {
		f(float64(st.kind), st.x, st.dur, st.toLoad)
	}
	writeStrings(h, m.Defaulted)
	var k lotKey
	h.Sum(k[:0])
	return k
}

func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// writeStrings hashes each string with its length, so that no two lists
// hash alike by running together.
func writeStrings(h hash.Hash, ss []string) {
	var b [8]byte
	for _, s := range ss {
		binary.LittleEndian.PutUint64(b[:], uint64(len(s)))
		h.Write(b[:])
		h.Write([]byte(s))
	}
}

// memoLots returns the analysis kept under k, a copy of its own, or nil.
func memoLots(k lotKey) *LotStatistics {
	lotMemo.Lock()
	defer lotMemo.Unlock()
	if st, ok := lotMemo.m[k]; ok {
		return st.clone()
	}
	return nil
}

// keepLots keeps a copy of st under k, dropping the oldest beyond
// lotMemoSize.
func keepLots(k lotKey, st *LotStatistics) {
	lotMemo.Lock()
	defer lotMemo.Unlock()
	if _, ok := lotMemo.m[k]; ok {
		return
	}
	lotMemo.m[k] = st.clone()
	lotMemo.order = append(lotMemo.order, k)
	if len(lotMemo.order) > lotMemoSize {
		delete(lotMemo.m, lotMemo.order[0])
		lotMemo.order = lotMemo.order[1:]
	}
}

// clone is a deep copy: no caller shares a slice or a pointer with
// another.
func (st *LotStatistics) clone() *LotStatistics {
	c := *st
	c.ParallelForTarget = clonePtr(st.ParallelForTarget)
	c.RuntimeS = RuntimePercentiles{P01: clonePtr(st.RuntimeS.P01), P50: clonePtr(st.RuntimeS.P50), P99: clonePtr(st.RuntimeS.P99)}
	c.StandbyMaxCellV = clonePtr(st.StandbyMaxCellV)
	c.CellSurgeV = clonePtr(st.CellSurgeV)
	c.Model.Defaulted = append([]string{}, st.Model.Defaulted...)
	c.Notes = append([]string{}, st.Notes...)
	if h := st.Histograms.RuntimeS; h != nil {
		hc := *h
		hc.Counts = append([]int(nil), h.Counts...)
		c.Histograms.RuntimeS = &hc
	}
	c.Histograms.FirstChargeMaxCellV.Counts = append([]int(nil), st.Histograms.FirstChargeMaxCellV.Counts...)
	return &c
}

func clonePtr[T any](p *T) *T {
	if p == nil {
		return nil
	}
	v := *p
	return &v
}
