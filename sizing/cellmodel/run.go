package cellmodel

import (
	"fmt"
	"math"
)

// Sim runs a model through the steps of a load profile, one after the
// other, carrying the state and the integrator's step size across them.
type Sim struct {
	m  Model
	y  []float64
	t  float64
	it *integrator
}

// NewSim starts m after a long rest at v0 volts (every branch at v0).
func NewSim(m Model, v0 float64, tol Tolerances) *Sim {
	// The state carries quadratures after the branch voltages: the
	// charge and the energy out of the terminals, ∫i²dt and the energy
	// lost in the leakage.
	y := append(m.RestState(v0), 0, 0, 0, 0)
	return &Sim{m: m, y: y, it: newIntegratorQuad(m.Branches(), quadratures, tol)}
}

// State returns a copy of the branch voltages, in V, immediate first.
func (s *Sim) State() []float64 { return append([]float64(nil), s.y[:s.m.Branches()]...) }

// SetState replaces the branch voltages (len must be m.Branches()).
func (s *Sim) SetState(y []float64) {
	if len(y) != s.m.Branches() {
		panic(fmt.Sprintf("cellmodel: state of %d branches for a model of %d", len(y), s.m.Branches()))
	}
	copy(s.y, y)
}

// TimeS is the time, in s, run so far.
func (s *Sim) TimeS() float64 { return s.t }

// Steps is the number of integrator steps taken so far (accepted and
// rejected).
func (s *Sim) Steps() int { return s.it.steps }

// Stop says why a step ended.
type Stop int

// Why a step ended.
const (
	// Completed: the step ran its whole duration.
	Completed Stop = iota
	// WindowBottom: the terminal voltage fell to Limits.MinV.
	WindowBottom
	// Collapse: the power load asked for more than the branches can
	// deliver at any terminal voltage (the peak S²/(4G) fell below it).
	Collapse
	// Ceiling: the terminal voltage rose to Limits.MaxV, or the
	// immediate branch's voltage to Limits.MaxBranchV.
	Ceiling
)

func (s Stop) String() string {
	switch s {
	case Completed:
		return "completed"
	case WindowBottom:
		return "window bottom"
	case Collapse:
		return "collapse"
	case Ceiling:
		return "ceiling"
	}
	return fmt.Sprintf("Stop(%d)", int(s))
}

// Limits are the voltages, in V, that end a step early; 0: none. MinV
// and MaxV are terminal voltages; MaxBranchV is the immediate branch's
// capacitor voltage (the counterpart of the ideal RC's capacitor voltage,
// where a charger's hold at the window top begins).
type Limits struct {
	MinV, MaxV, MaxBranchV float64
}

// StepResult is what a step did.
type StepResult struct {
	// DurationS, in s, is how long it ran (the step's duration unless it
	// stopped early).
	DurationS float64
	Stop      Stop
	// StartTerminalV, EndTerminalV, MinTerminalV and MaxTerminalV, in V,
	// are the terminal voltage once the load is on, at the end, and its
	// extremes over the step.
	StartTerminalV, EndTerminalV, MinTerminalV, MaxTerminalV float64
	// ChargeOutC, in C, and EnergyOutJ, in J, are what left the terminals
	// (negative: taken in), integrated with the branch voltages.
	ChargeOutC, EnergyOutJ float64
	// I2dtA2s, in A²·s, is ∫i²dt of the terminal current; LeakageJ, in J,
	// the energy lost in the leakage across the terminals.
	I2dtA2s, LeakageJ float64
	// PeakCurrentA, in A, is the largest |i| at the terminals seen at the
	// points where the terminal voltage was tracked (exact for steps whose
	// current is monotone in time).
	PeakCurrentA float64
	// SampleTerminalV are the terminal voltages at the sample times asked
	// for (NaN for a sample after the stop).
	SampleTerminalV []float64
}

// Run applies load l for durationS seconds, or until a limit or a power
// collapse ends it, and advances the state. samplesS are times, in s from
// the start of the step, at which the terminal voltage is reported.
//
// The window bottom, the ceiling and the collapse are located as the
// zeros of u − MinV, MaxV − u and (S/2G)² − P/G on the integrator's dense
// output, not by the step size.
func (s *Sim) Run(l Load, durationS float64, lim Limits, samplesS []float64) (StepResult, error) {
	if !(durationS >= 0) || math.IsInf(durationS, 0) {
		return StepResult{}, fmt.Errorf("cellmodel: step duration %g s: must be a finite number ≥ 0", durationS)
	}
	sys := &system{m: s.m, l: l}
	var events []Event
	var kinds []Stop
	if l.Kind == Power {
		events = append(events, func(_ float64, y []float64) float64 { return s.m.collapseMargin(l, y) })
		kinds = append(kinds, Collapse)
	}
	if lim.MinV > 0 {
		events = append(events, func(_ float64, y []float64) float64 {
			u, _, _ := s.m.Terminal(l, y)
			return u - lim.MinV
		})
		kinds = append(kinds, WindowBottom)
	}
	if lim.MaxV > 0 {
		events = append(events, func(_ float64, y []float64) float64 {
			u, _, _ := s.m.Terminal(l, y)
			return lim.MaxV - u
		})
		kinds = append(kinds, Ceiling)
	}
	if lim.MaxBranchV > 0 {
		events = append(events, func(_ float64, y []float64) float64 { return lim.MaxBranchV - y[0] })
		kinds = append(kinds, Ceiling)
	}
	u0, _, _ := s.m.Terminal(l, s.y)
	res := StepResult{StartTerminalV: u0, MinTerminalV: u0, MaxTerminalV: u0}
	res.SampleTerminalV = make([]float64, len(samplesS))
	for i := range res.SampleTerminalV {
		res.SampleTerminalV[i] = math.NaN()
	}
	t0 := s.t
	nb := s.m.Branches()
	for k := range quadratures {
		s.y[nb+k] = 0
	}
	yq := make([]float64, len(s.y))
	note := func(u float64) {
		res.MinTerminalV = math.Min(res.MinTerminalV, u)
		res.MaxTerminalV = math.Max(res.MaxTerminalV, u)
	}
	_, i0, _ := s.m.Terminal(l, s.y)
	res.PeakCurrentA = math.Abs(i0)
	onStep := func(st *Step, tEnd float64) {
		st.At(tEnd, yq)
		u, i, _ := s.m.Terminal(l, yq)
		note(u)
		res.PeakCurrentA = math.Max(res.PeakCurrentA, math.Abs(i))
		for k, ts := range samplesS {
			if ta := t0 + ts; ta >= st.T0 && ta <= tEnd {
				st.At(ta, yq)
				res.SampleTerminalV[k], _, _ = s.m.Terminal(l, yq)
			}
		}
		s.refineExtremes(st, tEnd, l, &res)
	}
	r, err := s.it.solve(sys, s.y, t0, t0+durationS, events, onStep)
	if err != nil {
		return res, err
	}
	if sys.bad != 0 || (s.m.C0F+s.m.KvFPerV*s.y[0]) <= 0 {
		return res, fmt.Errorf("cellmodel: the immediate branch's capacitance C0 + Kv·v fell to zero or below at v = %g V: the model does not hold at this voltage", sys.bad)
	}
	res.ChargeOutC, res.EnergyOutJ, res.I2dtA2s, res.LeakageJ = s.y[nb], s.y[nb+1], s.y[nb+2], s.y[nb+3]
	res.DurationS = r.t - t0
	s.t = r.t
	res.Stop = Completed
	if r.event >= 0 {
		res.Stop = kinds[r.event]
	}
	u1, _, _ := s.m.Terminal(l, s.y)
	switch res.Stop {
	case WindowBottom:
		u1 = lim.MinV
	case Ceiling:
		if lim.MaxV > 0 && math.Abs(u1-lim.MaxV) < math.Abs(s.y[0]-lim.MaxBranchV) {
			u1 = lim.MaxV
		}
	}
	res.EndTerminalV = u1
	note(u1)
	if res.Stop == WindowBottom {
		// Exactly at the limit, not a hair past it from the dense output.
		res.MinTerminalV = math.Max(res.MinTerminalV, lim.MinV)
	}
	return res, nil
}

// refineExtremes looks for a minimum or maximum of the terminal voltage
// inside an integrator step (after a pulse the slow branches can lift the
// terminal under a light load) by golden-section search on the dense
// output, when the midpoint lies outside the range of the ends.
func (s *Sim) refineExtremes(st *Step, tEnd float64, l Load, res *StepResult) {
	y := make([]float64, len(s.y))
	uAt := func(t float64) float64 {
		st.At(t, y)
		u, _, _ := s.m.Terminal(l, y)
		return u
	}
	a, b := st.T0, tEnd
	ua, ub, um := uAt(a), uAt(b), uAt(a+(b-a)/2)
	for _, sign := range [2]float64{-1, 1} {
		// sign −1: a minimum inside, +1: a maximum inside.
		if !(sign*um > math.Max(sign*ua, sign*ub)) {
			continue
		}
		lo, hi := a, b
		const r = 0.6180339887498949
		x1, x2 := hi-r*(hi-lo), lo+r*(hi-lo)
		f1, f2 := sign*uAt(x1), sign*uAt(x2)
		for range 80 {
			if f1 > f2 {
				hi, x2, f2 = x2, x1, f1
				x1 = hi - r*(hi-lo)
				f1 = sign * uAt(x1)
			} else {
				lo, x1, f1 = x1, x2, f2
				x2 = lo + r*(hi-lo)
				f2 = sign * uAt(x2)
			}
		}
		u := uAt((lo + hi) / 2)
		res.MinTerminalV = math.Min(res.MinTerminalV, u)
		res.MaxTerminalV = math.Max(res.MaxTerminalV, u)
	}
}
