package sizing

import (
	"fmt"
	"math"
	"testing"
)

func f64(v float64) *float64 { return &v }

// TestMerit checks the figures of merit against hand arithmetic.
// E = ½CV² and P = V²/4R (maximum power transfer) are textbook circuit
// formulas (REFERENCES.md 3.1 and 3.12).
func TestMerit(t *testing.T) {
	cases := []struct {
		name                        string
		cell                        Cell
		energyJ, whPerKg, whPerL    float64
		powerW, wPerKg, tauS, perWh float64
		wantKg, wantL, wantPrice    bool
	}{
		// 2.7 V 100 F 10 mΩ 20 g 15 mL, price 3: E = 0.5·100·7.29 = 364.5 J
		// = 0.10125 Wh; 5.0625 Wh/kg; 6.75 Wh/L; P = 7.29/0.04 = 182.25 W;
		// 9112.5 W/kg; τ = 1 s; 3 / 0.10125 = 29.6296 per Wh.
		{"full", Cell{ID: "a", RatedV: 2.7, CapacitanceF: 100, ESROhm: 0.01, MassKg: f64(0.02), VolumeL: f64(0.015), UnitPrice: f64(3)},
			364.5, 5.0625, 6.75, 182.25, 9112.5, 1, 29.62962963, true, true, true},
		// 3.0 V 3000 F 0.2 mΩ, no mass, volume or price: E = 13500 J,
		// P = 9/0.0008 = 11250 W, τ = 0.6 s.
		{"bare", Cell{ID: "b", RatedV: 3, CapacitanceF: 3000, ESROhm: 0.0002},
			13500, 0, 0, 11250, 0, 0.6, 0, false, false, false},
	}
	near := func(t *testing.T, what string, got, want float64) {
		t.Helper()
		if math.Abs(got-want) > 1e-9*math.Abs(want) {
			t.Errorf("%s = %.10g, want %.10g", what, got, want)
		}
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			m := Merit(tc.cell)
			near(t, "stored energy", m.StoredEnergyJ, tc.energyJ)
			near(t, "matched power", m.MatchedPowerW, tc.powerW)
			near(t, "time constant", m.TimeConstantS, tc.tauS)
			check := func(what string, got *float64, want float64, present bool) {
				if (got != nil) != present {
					t.Fatalf("%s present = %v, want %v", what, got != nil, present)
				}
				if got != nil {
					near(t, what, *got, want)
				}
			}
			check("Wh/kg", m.EnergyWhPerKg, tc.whPerKg, tc.wantKg)
			check("W/kg", m.MatchedPowerWPerKg, tc.wPerKg, tc.wantKg)
			check("Wh/L", m.EnergyWhPerL, tc.whPerL, tc.wantL)
			check("price/Wh", m.PricePerWh, tc.perWh, tc.wantPrice)
		})
	}
}

func TestBankFigures(t *testing.T) {
	// A bank of price 600 with 36 kJ usable (10 Wh) costs 60 per usable Wh;
	// at 48 V with 50 mΩ worst ESR its matched power is 48²/0.2 = 11520 W.
	c := &Candidate{TotalPrice: f64(600), UsableEnergyJ: 36000, WorstESROhm: 0.05}
	if got := BankPricePerUsableWh(c); got == nil || math.Abs(*got-60) > 1e-9 {
		t.Errorf("price per usable Wh = %v, want 60", got)
	}
	if got := BankMatchedPowerW(c, 48); math.Abs(got-11520) > 1e-9 {
		t.Errorf("matched power = %v W, want 11520", got)
	}
	if BankPricePerUsableWh(&Candidate{UsableEnergyJ: 1}) != nil {
		t.Error("a bank without a price has no price per Wh")
	}
}

// ExampleMerit compares a cell's own figures.
func ExampleMerit() {
	mass := 0.02
	m := Merit(Cell{ID: "demo", RatedV: 2.7, CapacitanceF: 100, ESROhm: 0.01, MassKg: &mass})
	fmt.Printf("%.4g Wh/kg, %.4g W/kg matched, τ = %.3g s\n", *m.EnergyWhPerKg, *m.MatchedPowerWPerKg, m.TimeConstantS)
	// Output: 5.062 Wh/kg, 9113 W/kg matched, τ = 1 s
}
