package cellmodel

import (
	"fmt"
	"io"
	"strconv"
	"strings"
)

// WriteSubckt writes m as a SPICE subcircuit named name with the
// terminals p (plus) and n (minus), every branch charged to v0 volts at
// the start (element IC values, taken by `.tran … uic`). ngspice reads it.
//
// The immediate branch's capacitance C0 + Kv·v is written in its charge
// form: a 1 F capacitor on an internal node holds the charge
// q = C0·v + Kv·v²/2 as its voltage (starting at q(v0)), a behavioural
// current source fills it with the branch current, and a behavioural
// voltage source gives the branch voltage back from the charge,
//
//	v = (√(C0² + 2·Kv·q) − C0)/Kv   (v = q/C0 when Kv = 0).
//
// This is the same equation as a behavioural source I = ddt(C0·V + Kv·V²/2);
// ngspice 39 cannot start that form from a charged state (its ddt history
// starts at zero charge, REFERENCES.md 12.10), while the charge node starts where it should.
func (m Model) WriteSubckt(w io.Writer, name string, v0 float64) error {
	var b strings.Builder
	line := func(format string, a ...any) { fmt.Fprintf(&b, format+"\n", a...) }
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	line("* capbank cell model: immediate branch %s Ω with C(v) = %s F + %s F/V·v", num(m.RiOhm), num(m.C0F), num(m.KvFPerV))
	for k, br := range m.Slow {
		line("* slow branch %d: %s Ω, %s F", k+1, num(br.ROhm), num(br.CF))
	}
	if m.LeakageOhm > 0 {
		line("* leakage across the terminals: %s Ω", num(m.LeakageOhm))
	}
	line("* every branch starts at %s V: use .tran ... uic", num(v0))
	line(".subckt %s p n", name)
	line("RI p vi %s", num(m.RiOhm))
	q0 := m.C0F*v0 + m.KvFPerV*v0*v0/2
	line("CQ qi n 1 IC=%s", num(q0))
	line("BQ n qi I = V(p,vi)/%s", num(m.RiOhm))
	if m.KvFPerV == 0 {
		line("BV vi n V = V(qi,n)/%s", num(m.C0F))
	} else {
		// The floor under the root only keeps the Newton iterations of a
		// start from leaving the domain: C0² + 2·Kv·q = C(v)² > 0 on the
		// solution.
		line("BV vi n V = (sqrt(max(%s + %s*V(qi,n), 0)) - %s)/%s", num(m.C0F*m.C0F), num(2*m.KvFPerV), num(m.C0F), num(m.KvFPerV))
	}
	for k, br := range m.Slow {
		line("R%d p v%d %s", k+1, k+1, num(br.ROhm))
		line("C%d v%d n %s IC=%s", k+1, k+1, num(br.CF), num(v0))
	}
	if m.LeakageOhm > 0 {
		line("RLEAK p n %s", num(m.LeakageOhm))
	}
	line(".ends %s", name)
	_, err := io.WriteString(w, b.String())
	return err
}
