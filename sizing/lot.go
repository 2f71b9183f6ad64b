package sizing

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// Statistics asks for the lot analysis: banks built from cells drawn from
// a production lot (each cell's capacitance, ESR and leakage spread around
// its nominal figures by the cell's *_sigma_pct), simulated Samples times.
// Every field is optional; a design without the key is analysed with the
// defaults on the recommended candidate only.
type Statistics struct {
	// Samples is the number of lots drawn. nil: DefaultLotSamples.
	Samples *int `json:"samples,omitempty" validate:"omitempty,gte=100,lte=1000000"`
	// Seed starts the random draws; the same seed gives the same report.
	// nil: 1.
	Seed *int64 `json:"seed,omitempty" validate:"omitempty,gte=0"`
	// TargetYield is the share of lots that must carry the whole pass for
	// ParallelForTarget, in (0, 1). nil: DefaultTargetYield.
	TargetYield *float64 `json:"target_yield,omitempty" validate:"omitempty,finite,gt=0,lt=1"`
	// Candidates: "recommended" (default), "all" (every feasible
	// candidate) or "none" (no lot analysis, for sweeps).
	Candidates string `json:"candidates,omitempty" validate:"omitempty,oneof=recommended all none"`
}

// Defaults of the lot analysis.
const (
	// DefaultLotSamples is the number of lots drawn: 10⁴ puts the Monte
	// Carlo standard error of a 99.9 % yield at 0.03 %.
	DefaultLotSamples = 10000
	// DefaultTargetYield is the share of lots that must carry the pass.
	DefaultTargetYield = 0.999
	// DefaultCapacitanceSigmaPct is the lot standard deviation of the
	// capacitance, in percent of nominal: published lot measurements
	// show production cells within about 1–2 % of each other, far tighter
	// than their tolerance band (REFERENCES.md 5.10).
	DefaultCapacitanceSigmaPct = 2.0
	// DefaultESRSigmaPct and DefaultLeakageSigmaPct are the lot standard
	// deviations of the ESR and of the leakage current, in percent of
	// nominal (common practice, no source: the ESR of a lot scatters a
	// little more than its capacitance, the leakage far more).
	DefaultESRSigmaPct     = 5.0
	DefaultLeakageSigmaPct = 30.0
	// lotTruncSigmas is how far a draw may go from nominal where the cell
	// gives no tolerance band for that figure, in standard deviations.
	lotTruncSigmas = 4.0
)

// LotModel is the spread of a lot's cells as the analysis used it.
type LotModel struct {
	// CapacitanceSigmaPct, ESRSigmaPct, LeakageSigmaPct: lot standard
	// deviations, in percent of nominal.
	CapacitanceSigmaPct float64 `json:"capacitance_sigma_pct"`
	ESRSigmaPct         float64 `json:"esr_sigma_pct"`
	LeakageSigmaPct     float64 `json:"leakage_sigma_pct"`
	// CapacitanceBandPct is the band the capacitance draws are truncated
	// to, [minus, plus] in percent: the cell's tolerance, or ±4σ.
	CapacitanceBandPct [2]float64 `json:"capacitance_band_pct"`
	// Defaulted lists the keys the cell left out, for which the defaults
	// were used.
	Defaulted []string `json:"defaulted"`
}

// SpreadText is the lot model's spreads in words: "capacitance σ 2 %
// within −10…+20 %, ESR σ 5 %, leakage σ 30 %".
func (m LotModel) SpreadText() string {
	return fmt.Sprintf("capacitance σ %g %% within %s…+%g %%, ESR σ %g %%, leakage σ %g %%", m.CapacitanceSigmaPct,
		minusText(m.CapacitanceBandPct[0]), m.CapacitanceBandPct[1], m.ESRSigmaPct, m.LeakageSigmaPct)
}

// lotModel returns the spread of cell c's lot.
func lotModel(c *Cell) LotModel {
	m := LotModel{Defaulted: []string{}}
	get := func(p *float64, def float64, key string) float64 {
		if p != nil {
			return *p
		}
		m.Defaulted = append(m.Defaulted, key)
		return def
	}
	m.CapacitanceSigmaPct = get(c.CapacitanceSigmaPct, DefaultCapacitanceSigmaPct, "capacitance_sigma_pct")
	m.ESRSigmaPct = get(c.ESRSigmaPct, DefaultESRSigmaPct, "esr_sigma_pct")
	m.LeakageSigmaPct = get(c.LeakageSigmaPct, DefaultLeakageSigmaPct, "leakage_sigma_pct")
	if t := c.CapacitanceTolerancePct; len(t) == 2 {
		m.CapacitanceBandPct = [2]float64{t[0], t[1]}
	} else {
		k := lotTruncSigmas * m.CapacitanceSigmaPct
		m.CapacitanceBandPct = [2]float64{-k, k}
	}
	return m
}

// lotDraw draws the cells of lots: each figure a normal factor around 1
// with the lot's standard deviation, truncated to its band by drawing
// again (the truncated normal: REFERENCES.md 5.10).
type lotDraw struct {
	cSigma, rSigma, gSigma float64 // standard deviations as fractions
	cLo, cHi               float64 // capacitance factor band
	rLo, rHi               float64
	gLo, gHi               float64
}

func newLotDraw(m LotModel) lotDraw {
	d := lotDraw{cSigma: m.CapacitanceSigmaPct / 100, rSigma: m.ESRSigmaPct / 100, gSigma: m.LeakageSigmaPct / 100}
	d.cLo, d.cHi = 1+m.CapacitanceBandPct[0]/100, 1+m.CapacitanceBandPct[1]/100
	d.rLo, d.rHi = band(d.rSigma)
	d.gLo, d.gHi = band(d.gSigma)
	return d
}

// band is ±4σ around 1, kept above 0: a cell with no ESR or a negative
// leakage is not a cell.
func band(sigma float64) (lo, hi float64) {
	return math.Max(1-lotTruncSigmas*sigma, 1e-3), 1 + lotTruncSigmas*sigma
}

// truncNormal draws 1 + sigma·z with z standard normal, again until it
// falls within [lo, hi]; a band so narrow that 64 draws miss it gives
// the nearest edge.
func truncNormal(r *rand.Rand, sigma, lo, hi float64) float64 {
	if sigma == 0 {
		return clamp(1, lo, hi)
	}
	var x float64
	for range 64 {
		x = 1 + sigma*r.NormFloat64()
		if x >= lo && x <= hi {
			return x
		}
	}
	return clamp(x, lo, hi)
}

// lotStream is the random stream of lot n: its own PCG stream, so a lot
// draws the same cells whatever the number of workers and whatever the
// string count (the first strings of a bigger bank are those of a
// smaller one: common random numbers, so the yield is monotone in the
// string count).
func lotStream(pcg *rand.PCG, seed int64, n int) {
	pcg.Seed(uint64(seed), uint64(n))
}
