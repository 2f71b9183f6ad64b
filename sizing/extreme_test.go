package sizing

import (
	"errors"
	"testing"

	"capbank/sizing/internal/approx"
)

// extremeBase is a small invented design (one cell, one step) that each
// case of TestSizeExtremeButValid pushes to the edge of one range.
func extremeBase() *Design {
	c := Cell{ID: "x", RatedV: 2.7, CapacitanceF: 100, ESROhm: 0.01, LeakageA: fp(1e-4),
		MaxCurrentA: fp(50), PeakCurrentA: fp(200), ThermalResistanceKPerW: fp(10), MassKg: fp(0.02),
		RatedLifeH: fp(1000), RatedLifeTempC: fp(65), UnitPrice: fp(3)}
	return &Design{Name: "extreme", Window: Window{MaxV: 27, MinV: 13.5},
		Load:  Load{Steps: []Step{{PowerW: fp(100), DurationS: 10}}},
		Cells: []Cell{c}}
}

// TestSizeExtremeButValid: issue 14, item 4. Every design Validate accepts
// must size to finite figures. Each case sets inputs to the ends of their
// ranges (the floors and ceilings of design.go); the design must either be
// refused by field or size without ErrNotFinite, with every number of the
// report finite.
func TestSizeExtremeButValid(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name  string
		set   func(d *Design, c *Cell)
		check func(t *testing.T, c *Candidate) // nil: only finite
	}{
		{"lowest ESR", func(d *Design, c *Cell) { c.ESROhm = 1e-6 }, nil},
		{"highest ESR", func(d *Design, c *Cell) { c.ESROhm = 1e4 }, nil},
		{"lowest capacitance", func(d *Design, c *Cell) { c.CapacitanceF = 1e-6 }, nil},
		{"highest capacitance", func(d *Design, c *Cell) { c.CapacitanceF = 1e6 }, nil},
		{"lowest rated voltage", func(d *Design, c *Cell) { c.RatedV = 0.1 }, nil},
		{"highest rated voltage", func(d *Design, c *Cell) { c.RatedV = 1000 }, nil},
		{"a 1000 V cell held to 0.1 V, long rated life", func(d *Design, c *Cell) {
			c.RatedV, d.CellMaxV, d.Window.MaxV, d.Window.MinV = 1000, fp(0.1), 1, 0.5
			c.RatedLifeH, c.RatedLifeTempC = fp(1e7), fp(200)
			d.AmbientC = fp(-100)
			d.Life = &LifeModel{TempStepK: fp(1), VoltageStepV: fp(0.01)}
		}, func(t *testing.T, c *Candidate) {
			// 10⁷ h · 2^(300/1) · 2^((1000 − 0.1)/0.01) overflows (own
			// arithmetic): the calendar ceiling, marked "at least", and a
			// flag that says why.
			if c.Life == nil || !c.Life.AtLeast || c.Life.ExpectedYears != DefaultLifeMaxYears || !hasFlag(c.Flags, "life-beyond-rules") {
				t.Errorf("life %+v, flags %v; want at least the 15-year ceiling and the life-beyond-rules flag", c.Life, c.Flags)
			}
		}},
		{"a hot cell of short life", func(d *Design, c *Cell) {
			c.RatedLifeH, c.RatedLifeTempC = fp(1e-300), fp(-100)
			d.AmbientC = fp(200)
			d.Life = &LifeModel{TempStepK: fp(1)}
		}, nil},
		{"lowest window", func(d *Design, c *Cell) { d.Window = Window{MaxV: 0.002, MinV: 0.001} }, nil},
		{"highest window", func(d *Design, c *Cell) { d.Window = Window{MaxV: 1e5, MinV: 1}; c.RatedV = 1000 }, nil},
		{"largest power, longest step", func(d *Design, c *Cell) { d.Load.Steps[0] = Step{PowerW: fp(1e9), DurationS: 1e9} }, nil},
		{"smallest power", func(d *Design, c *Cell) { d.Load.Steps[0].PowerW = fp(MinPowerW) }, nil},
		{"smallest charge", func(d *Design, c *Cell) {
			d.Load.Steps = append(d.Load.Steps, Step{PowerW: fp(-MinPowerW), DurationS: 1})
		}, nil},
		{"largest charge", func(d *Design, c *Cell) {
			d.Load.Steps = append(d.Load.Steps, Step{PowerW: fp(-1e9), DurationS: 1e9}, Step{CurrentA: fp(-1e6), DurationS: 1e9})
		}, nil},
		{"largest current", func(d *Design, c *Cell) { d.Load.Steps[0] = Step{CurrentA: fp(1e6), DurationS: 1} }, nil},
		{"smallest current", func(d *Design, c *Cell) { d.Load.Steps[0] = Step{CurrentA: fp(5e-324), DurationS: 1} }, nil},
		{"smallest resistor", func(d *Design, c *Cell) { d.Load.Steps[0] = Step{ResistanceOhm: fp(5e-324), DurationS: 1} }, nil},
		{"largest resistor", func(d *Design, c *Cell) { d.Load.Steps[0] = Step{ResistanceOhm: fp(1e12), DurationS: 1e9} }, nil},
		{"shortest step", func(d *Design, c *Cell) { d.Load.Steps[0].DurationS = 1e-9 }, nil},
		{"lowest efficiency", func(d *Design, c *Cell) { d.Load.Efficiency = fp(0.01) }, nil},
		{"harshest end of life", func(d *Design, c *Cell) { d.EOL = &EOL{CapacitanceFactor: fp(0.1), ESRFactor: fp(100)} }, nil},
		{"coldest", func(d *Design, c *Cell) {
			d.ColdC = fp(-100)
			c.ColdESRFactor, c.ColdESRTempC = fp(100), fp(24.999)
		}, nil},
		{"smallest leakage", func(d *Design, c *Cell) { c.LeakageA = fp(MinLeakageA) }, nil},
		{"smallest leakage, no balancing", func(d *Design, c *Cell) {
			c.LeakageA = fp(MinLeakageA)
			d.Balancing = &Balancing{Kind: "none"}
			d.StandbyH = fp(1e6)
		}, nil},
		{"largest leakage", func(d *Design, c *Cell) { c.LeakageA = fp(1000); c.CapacitanceF = 1e6 }, nil},
		{"smallest current ratings", func(d *Design, c *Cell) { c.MaxCurrentA, c.PeakCurrentA = fp(5e-324), fp(5e-324) }, nil},
		{"smallest thermal figures", func(d *Design, c *Cell) {
			c.ThermalResistanceKPerW, c.MassKg, c.SpecificHeatJPerKgK = fp(5e-324), fp(5e-324), fp(100)
		}, nil},
		{"largest thermal resistance", func(d *Design, c *Cell) { c.ThermalResistanceKPerW = fp(1e4) }, nil},
		{"smallest leakage spread", func(d *Design, c *Cell) {
			d.Balancing = &Balancing{LeakageSpreadA: fp(MinLeakageA), CurrentMultiple: fp(1)}
		}, nil},
		{"largest leakage spread", func(d *Design, c *Cell) {
			d.Balancing = &Balancing{LeakageSpreadA: fp(1000), CurrentMultiple: fp(1000)}
		}, nil},
		{"smallest quiescent draw", func(d *Design, c *Cell) {
			d.Balancing = &Balancing{Kind: "active", QuiescentA: fp(MinLeakageA)}
			c.LeakageA = nil
			d.StandbyH = fp(1e6)
		}, nil},
		{"largest quiescent draw", func(d *Design, c *Cell) { d.Balancing = &Balancing{Kind: "active", QuiescentA: fp(10)} }, nil},
		{"widest tolerance", func(d *Design, c *Cell) { c.CapacitanceTolerancePct = []float64{-99.999, 200} }, nil},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			d := extremeBase()
			tc.set(d, &d.Cells[0])
			if err := Validate(d); err != nil {
				requireFieldErrors(t, err)
				return
			}
			r, err := Size(d)
			if errors.Is(err, ErrNotFinite) {
				t.Fatalf("a valid design sized to a non-finite figure: %v", err)
			}
			if err != nil {
				t.Fatalf("Size: %v", err)
			}
			approx.AllFinite(t, "report", r)
			if tc.check != nil {
				tc.check(t, &r.Candidates[0])
			}
		})
	}
}

func hasFlag(flags []Flag, code string) bool {
	for _, f := range flags {
		if f.Code == code {
			return true
		}
	}
	return false
}
