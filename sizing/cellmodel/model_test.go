package cellmodel

import (
	"math"
	"testing"
)

// idealRC is the ideal RC as a model: one branch, no voltage coefficient,
// no slow branch, no leakage.
func idealRC(rOhm, cF float64) Model { return Model{RiOhm: rOhm, C0F: cF} }

func relDiff(a, b float64) float64 { return math.Abs(a-b) / math.Abs(b) }

func mustRun(t *testing.T, s *Sim, l Load, durS float64, lim Limits, samples ...float64) StepResult {
	t.Helper()
	r, err := s.Run(l, durS, lim, samples)
	if err != nil {
		t.Fatalf("Run: %v", err)
	}
	return r
}

// constantPowerTime is the time a series RC (R, C) takes under constant
// power P at its terminals for its capacitor voltage to fall from v0 to v1
// (PHYSICS-NOTES "each step kind", REFERENCES.md 3.9):
//
//	t = C/(4P)·[v0² − v1² + v0·s0 − v1·s1 − 4PR·ln((v0+s0)/(v1+s1))],  s = √(v² − 4PR).
func constantPowerTime(rOhm, cF, pW, v0, v1 float64) float64 {
	s0, s1 := math.Sqrt(v0*v0-4*pW*rOhm), math.Sqrt(v1*v1-4*pW*rOhm)
	return cF / (4 * pW) * (v0*v0 - v1*v1 + v0*s0 - v1*s1 - 4*pW*rOhm*math.Log((v0+s0)/(v1+s1)))
}

// TestIdealRCAgainstClosedForms runs the one-branch model (the ideal RC)
// through each load kind and compares with the exact solutions, to 1e-9.
func TestIdealRCAgainstClosedForms(t *testing.T) {
	t.Parallel()
	const tol = 1e-9
	// REFERENCES.md 10.1–10.4: the 18-cell string of 2500 F, 0.4 mΩ cells.
	const cF, rOhm = 2500.0 / 18, 18 * 0.4e-3

	t.Run("constant current discharge", func(t *testing.T) {
		s := NewSim(idealRC(rOhm, cF), 48, Tolerances{})
		r := mustRun(t, s, Load{Kind: Current, Value: 100}, 100, Limits{MinV: 24}, 10)
		// REFERENCES.md 10.3: t = C·(48 − 0.72 − 24)/100 = 32.333 333 s.
		want := cF * (48 - 100*rOhm - 24) / 100
		if r.Stop != WindowBottom || relDiff(r.DurationS, want) > tol || relDiff(want, 32.333333333) > 1e-9 {
			t.Errorf("stop %v after %.12g s, want window bottom after %.12g s", r.Stop, r.DurationS, want)
		}
		// v(10 s) = 48 − 100·10/C; terminal v − I·R.
		if u := 48 - 1000/cF - 100*rOhm; relDiff(r.SampleTerminalV[0], u) > tol {
			t.Errorf("u(10 s) = %.12g V, want %.12g V", r.SampleTerminalV[0], u)
		}
		if r.MinTerminalV != 24 || relDiff(r.StartTerminalV, 48-0.72) > tol {
			t.Errorf("min %.12g V, start %.12g V; want 24 V and 47.28 V", r.MinTerminalV, r.StartTerminalV)
		}
	})

	t.Run("constant current charge to a ceiling", func(t *testing.T) {
		s := NewSim(idealRC(rOhm, cF), 20, Tolerances{})
		r := mustRun(t, s, Load{Kind: Current, Value: -50}, 1000, Limits{MaxV: 48})
		// v rises at I/C; the terminal sits I·R above v: t = C·(48 − I·R − 20)/I.
		want := cF * (48 - 50*rOhm - 20) / 50
		if r.Stop != Ceiling || relDiff(r.DurationS, want) > tol {
			t.Errorf("stop %v after %.12g s, want ceiling after %.12g s", r.Stop, r.DurationS, want)
		}
		// Charge in: I·t.
		if relDiff(-r.ChargeOutC, 50*want) > tol {
			t.Errorf("charge in %.12g C, want %.12g C", -r.ChargeOutC, 50*want)
		}
	})

	t.Run("resistor", func(t *testing.T) {
		const rl = 1.0
		s := NewSim(idealRC(rOhm, cF), 48, Tolerances{})
		r := mustRun(t, s, Load{Kind: Resistor, Value: rl}, 1000, Limits{MinV: 24 * rl / (rl + rOhm)}, 60)
		// REFERENCES.md 10.4: τ = 139.888 889 s, internal 48 → 24 V in
		// τ·ln 2 = 96.963 589 s, v(60 s) = 31.258 432 V.
		tau := (rl + rOhm) * cF
		if r.Stop != WindowBottom || relDiff(r.DurationS, tau*math.Ln2) > tol || math.Abs(r.DurationS-96.963589) > 1e-6 {
			t.Errorf("stop %v after %.12g s, want window bottom after τ·ln 2 = %.12g s", r.Stop, r.DurationS, tau*math.Ln2)
		}
		u60 := 48 * math.Exp(-60/tau) * rl / (rl + rOhm)
		if relDiff(r.SampleTerminalV[0], u60) > tol || math.Abs(r.SampleTerminalV[0]*(rl+rOhm)/rl-31.258432) > 1e-6 {
			t.Errorf("u(60 s) = %.12g V, want %.12g V", r.SampleTerminalV[0], u60)
		}
	})

	t.Run("constant power", func(t *testing.T) {
		for _, c := range []struct {
			pW, want float64 // want: REFERENCES.md 10.2 (b) and (d)
		}{{5000, 22.31479068}, {40000, 1.379413566}} {
			s := NewSim(idealRC(rOhm, cF), 48, Tolerances{})
			r := mustRun(t, s, Load{Kind: Power, Value: c.pW}, 100, Limits{MinV: 24})
			// Capacitor voltage at a 24 V terminal: 24 + P·R/24.
			exact := constantPowerTime(rOhm, cF, c.pW, 48, 24+c.pW*rOhm/24)
			if r.Stop != WindowBottom || relDiff(r.DurationS, exact) > tol || math.Abs(exact-c.want) > 1e-8 {
				t.Errorf("%g W: stop %v after %.12g s, want window bottom after %.12g s (sheet %.10g s)", c.pW, r.Stop, r.DurationS, exact, c.want)
			}
			if relDiff(r.EnergyOutJ, c.pW*exact) > tol {
				t.Errorf("%g W: energy out %.12g J, want P·t = %.12g J", c.pW, r.EnergyOutJ, c.pW*exact)
			}
		}
	})

	t.Run("constant power collapse", func(t *testing.T) {
		// min_v² = 0.25 V² < P·R = 0.5 V²: the load collapses first, at
		// capacitor voltage 2√(PR) and terminal √(PR) (PHYSICS-NOTES).
		const r, c, p = 0.05, 3.0, 10.0
		s := NewSim(idealRC(r, c), 2.7, Tolerances{})
		res := mustRun(t, s, Load{Kind: Power, Value: p}, 100, Limits{MinV: 0.5})
		vc := 2 * math.Sqrt(p*r)
		exact := constantPowerTime(r, c, p, 2.7, vc)
		if res.Stop != Collapse || relDiff(res.DurationS, exact) > tol {
			t.Errorf("stop %v after %.12g s, want collapse after %.12g s", res.Stop, res.DurationS, exact)
		}
		if relDiff(res.EndTerminalV, math.Sqrt(p*r)) > 1e-6 {
			t.Errorf("terminal at collapse %.12g V, want √(PR) = %.12g V", res.EndTerminalV, math.Sqrt(p*r))
		}
	})
}

// TestRagoneConstantPower checks the energy a 3 F, 50 mΩ series RC
// delivers at constant power from 2.7 V (at rest) to a 1.2 V terminal:
// REFERENCES.md 10.12, the published closed form
// E = C/2·(−R·P·ln(U0²/Uf²) + U0² − Uf²), U0 = Ui/2 + √(Ui²/4 − R·P),
// and the figures computed from it, quoted to 5 digits (1e-4 relative).
func TestRagoneConstantPower(t *testing.T) {
	t.Parallel()
	const r, c, ui, uf = 0.05, 3.0, 2.7, 1.2
	for _, tc := range []struct{ pW, wantJ float64 }{{0.1, 8.7478}, {1, 8.5039}, {10, 6.1141}} {
		s := NewSim(idealRC(r, c), ui, Tolerances{})
		res := mustRun(t, s, Load{Kind: Power, Value: tc.pW}, 1e6, Limits{MinV: uf})
		u0 := ui/2 + math.Sqrt(ui*ui/4-r*tc.pW)
		closed := c / 2 * (-r*tc.pW*math.Log(u0*u0/(uf*uf)) + u0*u0 - uf*uf)
		if res.Stop != WindowBottom || relDiff(res.EnergyOutJ, closed) > 1e-9 {
			t.Errorf("%g W: %v, %.12g J, want %.12g J (closed form, 1e-9)", tc.pW, res.Stop, res.EnergyOutJ, closed)
		}
		if relDiff(res.EnergyOutJ, tc.wantJ) > 1e-4 {
			t.Errorf("%g W: %.6g J, want %.5g J (published, 1e-4)", tc.pW, res.EnergyOutJ, tc.wantJ)
		}
	}
}

// TestVoltageDependentCapacitance discharges a single branch with
// C(v) = C0 + Kv·v at constant current: its charge q = C0·v + Kv·v²/2
// falls as I·t, so the time to a terminal voltage u is
// (q(v0) − q(u + I·R))/I, and the energy to the load is the stored energy
// C0·v²/2 + Kv·v³/3 released minus I²·R·t (REFERENCES.md 9.1, 10.11).
func TestVoltageDependentCapacitance(t *testing.T) {
	t.Parallel()
	const c0, kv, r, i = 2000.0, 200.0, 1e-3, 100.0
	m := Model{RiOhm: r, C0F: c0, KvFPerV: kv}
	// REFERENCES.md 10.11: 8602.2 J stored at 2.7 V, 6615.675 J usable
	// from 2.7 V to 1.35 V.
	if e := m.Energy([]float64{2.7}); math.Abs(e-8602.2) > 1e-9*8602.2 {
		t.Errorf("stored energy at 2.7 V %.10g J, want 8602.2 J", e)
	}
	if e := m.Energy([]float64{2.7}) - m.Energy([]float64{1.35}); math.Abs(e-6615.675) > 1e-9*6615.675 {
		t.Errorf("usable energy 2.7 → 1.35 V %.10g J, want 6615.675 J", e)
	}
	s := NewSim(m, 2.7, Tolerances{})
	res := mustRun(t, s, Load{Kind: Current, Value: i}, 1e5, Limits{MinV: 1.35})
	v1 := 1.35 + i*r
	want := (m.Charge([]float64{2.7}) - m.Charge([]float64{v1})) / i
	if res.Stop != WindowBottom || relDiff(res.DurationS, want) > 1e-9 {
		t.Errorf("stop %v after %.12g s, want window bottom after %.12g s", res.Stop, res.DurationS, want)
	}
	wantE := m.Energy([]float64{2.7}) - m.Energy([]float64{v1}) - i*i*r*want
	if relDiff(res.EnergyOutJ, wantE) > 1e-9 {
		t.Errorf("energy out %.12g J, want %.12g J", res.EnergyOutJ, wantE)
	}
}

// TestChargeRedistribution rests a linear two-branch model whose branches
// start apart: charge is conserved and the difference decays with
// τ = (R0 + R2)·C0·C2/(C0 + C2) (two capacitors through a resistor,
// circuit theory).
func TestChargeRedistribution(t *testing.T) {
	t.Parallel()
	const r0, c0, r2, c2 = 0.01, 90.0, 17.5, 13.7
	m := Model{RiOhm: r0, C0F: c0, Slow: []Branch{{ROhm: r2, CF: c2}}}
	s := NewSim(m, 0, Tolerances{})
	s.SetState([]float64{2.0, 2.5})
	tau := (r0 + r2) * c0 * c2 / (c0 + c2)
	vInf := (c0*2 + c2*2.5) / (c0 + c2)
	res := mustRun(t, s, Load{Kind: Rest}, 3*tau, Limits{}, tau)
	y := s.State()
	wantV0 := vInf + (2-vInf)*math.Exp(-3)
	if relDiff(y[0], wantV0) > 1e-9 {
		t.Errorf("v0(3τ) = %.12g V, want %.12g V", y[0], wantV0)
	}
	if relDiff(m.Charge(y), c0*2+c2*2.5) > 1e-12 {
		t.Errorf("charge %.15g C, want %.15g C (conserved)", m.Charge(y), c0*2+c2*2.5)
	}
	// The terminal at rest is the conductance-weighted mean of the
	// branches; it rises monotonically here, so its maximum is at the end.
	g0, g2 := 1/r0, 1/r2
	wantU := (g0*y[0] + g2*y[1]) / (g0 + g2)
	if relDiff(res.EndTerminalV, wantU) > 1e-12 || relDiff(res.MaxTerminalV, wantU) > 1e-12 {
		t.Errorf("terminal %.12g V (max %.12g V), want %.12g V", res.EndTerminalV, res.MaxTerminalV, wantU)
	}
}

// TestBankScaling checks that a bank of s × p cells at p times the current
// shows s times the cell's terminal voltage (series and parallel laws).
func TestBankScaling(t *testing.T) {
	t.Parallel()
	cell := Model{RiOhm: 2.5e-3, C0F: 1500, KvFPerV: 150, Slow: []Branch{{0.9, 100}, {5.2, 200}}, LeakageOhm: 2000}
	const ns, np = 18, 3
	bank := cell.Bank(ns, np)
	for _, l := range []Load{{Kind: Current, Value: 80}, {Kind: Power, Value: 150}, {Kind: Resistor, Value: 0.05}} {
		lb := l
		switch l.Kind {
		case Current:
			lb.Value = l.Value * np
		case Power:
			lb.Value = l.Value * ns * np
		case Resistor:
			lb.Value = l.Value * ns / np
		}
		rc := mustRun(t, NewSim(cell, 2.7, Tolerances{}), l, 30, Limits{}, 1, 7, 30)
		rb := mustRun(t, NewSim(bank, 2.7*ns, Tolerances{}), lb, 30, Limits{}, 1, 7, 30)
		for k := range rc.SampleTerminalV {
			if relDiff(rb.SampleTerminalV[k], ns*rc.SampleTerminalV[k]) > 1e-9 {
				t.Errorf("load %d: bank %.12g V, want %d × cell %.12g V", l.Kind, rb.SampleTerminalV[k], ns, rc.SampleTerminalV[k])
			}
		}
	}
}

// TestChargeBalanceThreeBranch runs a three-branch model with a voltage
// coefficient under constant power and checks that the charge out of the
// terminals equals the charge the branches lost (no leakage; Kirchhoff's
// current law).
func TestChargeBalanceThreeBranch(t *testing.T) {
	t.Parallel()
	m := Model{RiOhm: 2.5e-3, C0F: 1500, KvFPerV: 150, Slow: []Branch{{0.9, 100}, {5.2, 200}}}
	s := NewSim(m, 2.7, Tolerances{})
	q0 := m.Charge(s.State())
	r1 := mustRun(t, s, Load{Kind: Power, Value: 300}, 20, Limits{MinV: 0.5})
	r2 := mustRun(t, s, Load{Kind: Rest}, 600, Limits{})
	q1 := m.Charge(s.State())
	if relDiff(r1.ChargeOutC+r2.ChargeOutC, q0-q1) > 1e-9 || r2.ChargeOutC != 0 {
		t.Errorf("charge out %.12g C (+ %g C at rest), branches lost %.12g C", r1.ChargeOutC, r2.ChargeOutC, q0-q1)
	}
	// After the pulse the terminal recovers as the slow branches refill
	// the immediate one (the recovery the issue describes).
	if !(r2.EndTerminalV > r2.StartTerminalV+1e-3) {
		t.Errorf("terminal after 600 s rest %.6g V, not above %.6g V at the start of the rest", r2.EndTerminalV, r2.StartTerminalV)
	}
}

// TestEnergyBalanceWithLeakage checks, for a three-branch model with a
// leakage and a voltage coefficient under constant power, that the
// stored energy lost equals the energy out plus the leakage loss plus the
// branch resistances' loss ≥ 0, and that with one branch (the ideal RC)
// the resistive loss is exactly R·∫i²dt (energy conservation, circuit
// theory).
func TestEnergyBalanceWithLeakage(t *testing.T) {
	t.Parallel()
	m := Model{RiOhm: 2e-3, C0F: 500}
	s := NewSim(m, 2.7, Tolerances{})
	e0 := m.Energy(s.State())
	r := mustRun(t, s, Load{Kind: Power, Value: 200}, 3, Limits{})
	loss := e0 - m.Energy(s.State()) - r.EnergyOutJ
	if relDiff(loss, m.RiOhm*r.I2dtA2s) > 1e-8 || r.LeakageJ != 0 {
		t.Errorf("loss %.12g J, want R·∫i²dt = %.12g J (leakage %g J)", loss, m.RiOhm*r.I2dtA2s, r.LeakageJ)
	}
	// Peak current at the end: P/u_min.
	if relDiff(r.PeakCurrentA, 200/r.MinTerminalV) > 1e-12 {
		t.Errorf("peak %.12g A, want P/u_min = %.12g A", r.PeakCurrentA, 200/r.MinTerminalV)
	}
	ml := Model{RiOhm: 2.5e-3, C0F: 1500, KvFPerV: 150, Slow: []Branch{{0.9, 100}, {5.2, 200}}, LeakageOhm: 20}
	sl := NewSim(ml, 2.7, Tolerances{})
	r1 := mustRun(t, sl, Load{Kind: Rest}, 100, Limits{})
	// Rest: nearly all the loss is the leakage; the rest is its current
	// through the branch resistances (positive, ~1e-4 of it here).
	fell := ml.Energy(ml.RestState(2.7)) - ml.Energy(sl.State())
	if d := fell - r1.LeakageJ; !(d > 0 && d < 1e-3*fell) {
		t.Errorf("leakage loss %.12g J, stored energy fell %.12g J", r1.LeakageJ, ml.Energy(ml.RestState(2.7))-ml.Energy(sl.State()))
	}
}

// TestBranchCeilingAndHold charges an ideal RC at constant current until
// its capacitor reaches 2.5 V (t = C·(2.5 − 2)/I), then holds the
// terminals at 2.5 V: with no leakage and the capacitor at 2.5 V nothing
// more flows (circuit theory).
func TestBranchCeilingAndHold(t *testing.T) {
	t.Parallel()
	m := idealRC(0.01, 100)
	s := NewSim(m, 2, Tolerances{})
	r := mustRun(t, s, Load{Kind: Current, Value: -10}, 60, Limits{MaxBranchV: 2.5})
	if want := 100 * 0.5 / 10.0; r.Stop != Ceiling || relDiff(r.DurationS, want) > 1e-9 || relDiff(r.EndTerminalV, 2.6) > 1e-9 {
		t.Errorf("stop %v after %.12g s at %.12g V, want ceiling after %.12g s at 2.6 V", r.Stop, r.DurationS, r.EndTerminalV, want)
	}
	h := mustRun(t, s, Load{Kind: Voltage, Value: 2.5}, 55, Limits{})
	if math.Abs(h.ChargeOutC) > 1e-9 || relDiff(s.State()[0], 2.5) > 1e-12 {
		t.Errorf("hold: charge %.3g C, capacitor %.12g V; want 0 C, 2.5 V", h.ChargeOutC, s.State()[0])
	}
}
