package cellmodel

import (
	"fmt"
	"math"
)

// Model is a cell or a bank as parallel branches between its terminals
// (Zubieta & Bonert 2000; Faranda 2007; REFERENCES.md 9.1, 9.2):
//
//   - the immediate branch: resistance RiOhm in series with a capacitance
//     whose differential value rises with its own voltage v₀,
//     C(v₀) = C0F + KvFPerV·v₀, so that its charge is q = C0·v₀ + Kv·v₀²/2;
//   - slower branches, each a resistance in series with a fixed
//     capacitance (none for the ideal RC, one for the two-branch model,
//     two for the three-branch model);
//   - a leakage resistance LeakageOhm across the terminals (0: none).
//
// The state is the voltage of each branch's capacitor, immediate first.
// With current i out of the terminals and terminal voltage u,
//
//	Σₖ gₖ·(vₖ − u) − u/R_leak = i,   gₖ = 1/Rₖ,
//	Cₖ(vₖ)·dvₖ/dt = −gₖ·(vₖ − u).
type Model struct {
	// RiOhm, in Ω, is the immediate branch's resistance.
	RiOhm float64
	// C0F, in F, and KvFPerV, in F/V, give the immediate branch's
	// differential capacitance C0F + KvFPerV·v.
	C0F, KvFPerV float64
	// Slow are the slower branches.
	Slow []Branch
	// LeakageOhm, in Ω, is the leakage across the terminals; 0: none.
	LeakageOhm float64
}

// Branch is a resistance in series with a fixed capacitance.
type Branch struct {
	// ROhm, in Ω, and CF, in F.
	ROhm, CF float64
}

// Bank is the model of series cells in a string times parallel strings,
// all alike: resistances × s/p, capacitances × p/s; the voltage coefficient
// stays on the per-cell voltage, so the bank's charge p·q(V/s) gives
// Kv × p/s² on the bank voltage (REFERENCES.md 9.3).
func (m Model) Bank(series, parallel int) Model {
	if series < 1 || parallel < 1 {
		panic(fmt.Sprintf("cellmodel: bank of %d × %d cells", series, parallel))
	}
	s, p := float64(series), float64(parallel)
	b := Model{
		RiOhm:      m.RiOhm * s / p,
		C0F:        m.C0F * p / s,
		KvFPerV:    m.KvFPerV * p / (s * s),
		LeakageOhm: m.LeakageOhm * s / p,
	}
	for _, br := range m.Slow {
		b.Slow = append(b.Slow, Branch{ROhm: br.ROhm * s / p, CF: br.CF * p / s})
	}
	return b
}

// Derate scales every capacitance (C0, Kv and the slow branches') by
// capFactor and the immediate branch's resistance by riFactor: the
// end-of-life and cold factors capbank applies to an ideal cell's C and ESR.
func (m Model) Derate(capFactor, riFactor float64) Model {
	d := Model{
		RiOhm:      m.RiOhm * riFactor,
		C0F:        m.C0F * capFactor,
		KvFPerV:    m.KvFPerV * capFactor,
		LeakageOhm: m.LeakageOhm,
	}
	for _, br := range m.Slow {
		d.Slow = append(d.Slow, Branch{ROhm: br.ROhm, CF: br.CF * capFactor})
	}
	return d
}

// Branches is the number of state variables: 1 + len(Slow).
func (m Model) Branches() int { return 1 + len(m.Slow) }

// RestState is the state after a long rest at v volts: every branch at v.
// (With a leakage the terminal sits a little below v, by the divider of
// the branch resistances and the leakage.)
func (m Model) RestState(v float64) []float64 {
	y := make([]float64, m.Branches())
	for i := range y {
		y[i] = v
	}
	return y
}

// conductances returns G = Σ gₖ + 1/R_leak and S = Σ gₖ·vₖ for state y.
func (m Model) conductances(y []float64) (g, s float64) {
	g0 := 1 / m.RiOhm
	g, s = g0, g0*y[0]
	for k, br := range m.Slow {
		gk := 1 / br.ROhm
		g += gk
		s += gk * y[k+1]
	}
	if m.LeakageOhm > 0 {
		g += 1 / m.LeakageOhm
	}
	return g, s
}

// Charge returns the charge, in C, held by the branches at state y,
// counted from zero volts: C0·v₀ + Kv·v₀²/2 + Σ Cₖ·vₖ.
func (m Model) Charge(y []float64) float64 {
	q := m.C0F*y[0] + m.KvFPerV*y[0]*y[0]/2
	for k, br := range m.Slow {
		q += br.CF * y[k+1]
	}
	return q
}

// Energy returns the energy, in J, held by the branches at state y:
// C0·v₀²/2 + Kv·v₀³/3 + Σ Cₖ·vₖ²/2.
func (m Model) Energy(y []float64) float64 {
	e := m.C0F*y[0]*y[0]/2 + m.KvFPerV*y[0]*y[0]*y[0]/3
	for k, br := range m.Slow {
		e += br.CF * y[k+1] * y[k+1] / 2
	}
	return e
}

// LoadKind is what a load holds constant at the terminals.
type LoadKind int

// The kinds of load.
const (
	// Rest: no current at the terminals (the leakage still drains).
	Rest LoadKind = iota
	// Current: Value amperes out of the terminals (negative charges).
	Current
	// Power: Value watts out of the terminals (negative charges).
	Power
	// Resistor: Value ohms across the terminals.
	Resistor
	// Voltage: the terminals held at Value volts (a charger's
	// constant-voltage phase).
	Voltage
)

// Load is what the terminals see during a step.
type Load struct {
	Kind  LoadKind
	Value float64
	// PowerAt, for Kind Power, gives the power out of the terminals, in W,
	// at terminal voltage u instead of Value: a converter whose
	// efficiency depends on its input voltage. It must be continuous; the
	// terminal voltage is the highest root of u·i(u) = PowerAt(u).
	PowerAt func(u float64) float64
}

// Terminal returns the terminal voltage u, in V, and the current out of
// the terminals i, in A, at state y under load l. For a power load past
// its collapse (the branches cannot deliver the power at any terminal
// voltage) ok is false and u is the voltage of the peak power S/(2G).
func (m Model) Terminal(l Load, y []float64) (u, i float64, ok bool) {
	g, s := m.conductances(y)
	switch l.Kind {
	case Rest:
		u = s / g
		return u, 0, true
	case Current:
		u = (s - l.Value) / g
		return u, l.Value, true
	case Resistor:
		u = s / (g + 1/l.Value)
		return u, u / l.Value, true
	case Voltage:
		return l.Value, s - g*l.Value, true
	case Power:
		if l.PowerAt != nil {
			return m.powerAtTerminal(l.PowerAt, g, s)
		}
		// G·u² − S·u + P = 0, the root on the branches' side of the peak.
		d := s*s - 4*g*l.Value
		if d < 0 {
			u = s / (2 * g)
			return u, s - g*u, false
		}
		u = (s + math.Sqrt(d)) / (2 * g)
		return u, s - g*u, true
	}
	panic(fmt.Sprintf("cellmodel: unknown load kind %d", l.Kind))
}

// powerAtTerminal solves u·(S − G·u) = p(u) for the highest root u in
// [S/(2G), S/G] by bisection (the available power falls from its peak at
// S/(2G) to zero at the open-circuit voltage S/G).
func (m Model) powerAtTerminal(p func(float64) float64, g, s float64) (u, i float64, ok bool) {
	lo, hi := s/(2*g), s/g
	excess := func(u float64) float64 { return u*(s-g*u) - p(u) }
	if p(hi) <= 0 {
		// Charging or no draw: above the open-circuit voltage.
		lo, hi = s/g, s/g
		for excess(hi) > 0 {
			hi = 2*hi + 1
		}
		for range 200 {
			mid := lo + (hi-lo)/2
			if mid <= lo || mid >= hi {
				break
			}
			if excess(mid) > 0 {
				lo = mid
			} else {
				hi = mid
			}
		}
		u = lo
		return u, s - g*u, true
	}
	if excess(lo) < 0 {
		return lo, s - g*lo, false
	}
	for range 200 {
		mid := lo + (hi-lo)/2
		if mid <= lo || mid >= hi {
			break
		}
		if excess(mid) >= 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo, s - g*lo, true
}

// collapseMargin is a measure, in V², of how far the power load is from
// its collapse: (S/2G)² − P/G, zero at the collapse.
func (m Model) collapseMargin(l Load, y []float64) float64 {
	g, s := m.conductances(y)
	if l.PowerAt != nil {
		u, _, ok := m.powerAtTerminal(l.PowerAt, g, s)
		um := s / (2 * g)
		if !ok {
			// Available peak minus demand, in V² (negative past it).
			return (um*(s-g*um) - l.PowerAt(um)) / g
		}
		return (u - um) * (u - um)
	}
	return s*s/(4*g*g) - l.Value/g
}

// quadratures is the number of integrals carried after the branch
// voltages (see system.Derivative).
const quadratures = 4

// system is the ODE of a model under a load.
type system struct {
	m   Model
	l   Load
	bad float64 // a non-positive immediate capacitance seen, at this voltage
}

func (sy *system) Derivative(_ float64, y, dy []float64) {
	u, i, _ := sy.m.Terminal(sy.l, y)
	n := sy.m.Branches()
	dy[n], dy[n+1], dy[n+2] = i, u*i, i*i
	dy[n+3] = 0
	if sy.m.LeakageOhm > 0 {
		dy[n+3] = u * u / sy.m.LeakageOhm
	}
	c0 := sy.m.C0F + sy.m.KvFPerV*y[0]
	if !(c0 > 0) {
		sy.bad = y[0]
		c0 = math.Inf(1)
	}
	dy[0] = -(y[0] - u) / (sy.m.RiOhm * c0)
	for k, br := range sy.m.Slow {
		dy[k+1] = -(y[k+1] - u) / (br.ROhm * br.CF)
	}
}
