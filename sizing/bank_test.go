package sizing

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestSeriesCount(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name      string
		maxV, cel float64
		want      int
	}{
		// 42.0 / 2.8 = 15 exactly in decimal; in binary it is 15.000000000000002
		// (floating point must not add a cell: 42.0 V / 2.8 V is 15 cells, common practice).
		{"decimal quotient 42/2.8", 42.0, 2.8, 15},
		// REFERENCES.md 10.1: Ns = ceil(48/2.7) = ceil(17.777…) = 18.
		{"worked example 48/2.7", 48, 2.7, 18},
		// Hand computed: 0.3/0.1 is 2.9999999999999996 in binary, 3 in decimal.
		{"decimal quotient 0.3/0.1", 0.3, 0.1, 3},
		// Hand computed: 16.2/2.7 = 6 exactly in decimal (6.000000000000001 in binary).
		{"decimal quotient 16.2/2.7", 16.2, 2.7, 6},
		// Hand computed: 42.1 / 2.8 = 15.036 → 16.
		{"just over", 42.1, 2.8, 16},
		// Hand computed: a window under one cell's ceiling needs one cell.
		{"below one cell", 2.0, 2.7, 1},
		{"invalid ceiling", 42, 0, 0},
		{"NaN window", math.NaN(), 2.7, 0},
		// Issue 14, item 3: a ceiling of 1e-20 V gave −9223372036854775808
		// (4.2e21 does not fit an int) and 1e-15 V gave 4.2e16 cells; more
		// than MaxSeries is no count at all (0), which Validate refuses.
		{"count beyond an int", 42, 1e-20, 0},
		{"denormal ceiling", 42, 5e-324, 0},
		{"count beyond MaxSeries", 42, 1e-15, 0},
		// Hand computed: 27 000 V / 2.7 V = 10 000 cells, the most allowed;
		// 27 000.27 V needs 10 001.
		{"exactly MaxSeries", 27000, 2.7, 10000},
		{"one past MaxSeries", 27000.27, 2.7, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			if got := SeriesCount(c.maxV, c.cel); got != c.want {
				t.Errorf("SeriesCount(%v, %v) = %d, want %d", c.maxV, c.cel, got, c.want)
			}
		})
	}
}

func TestSeriesCountDecimalGrid(t *testing.T) {
	t.Parallel()
	// Every whole-number multiple n of a decimal ceiling in 0.01 V steps must
	// give exactly n cells: the decimal-intent rule (issue text), checked over
	// 2.00–3.00 V ceilings and 1–400 cells.
	for cmV := 200; cmV <= 300; cmV++ {
		ceiling := float64(cmV) / 100
		for n := 1; n <= 400; n++ {
			maxV := float64(n*cmV) / 100 // the decimal product, rounded once
			if got := SeriesCount(maxV, ceiling); got != n {
				t.Fatalf("SeriesCount(%v, %v) = %d, want %d", maxV, ceiling, got, n)
			}
		}
	}
}

func TestBankArithmetic(t *testing.T) {
	t.Parallel()
	// REFERENCES.md 10.1 (bank of 2500 F / 0.40 mΩ cells, 18 in series):
	// C = 138.888 889 F, R = 7.2 mΩ, τ = 1.000 s; E(48 V) = 160 000 J;
	// usable 48 → 24 V = 120 000 J, fraction 0.75; with 3 strings
	// C = 416.667 F and R = 2.4 mΩ.
	cases := []struct {
		name string
		got  float64
		want float64
	}{
		{"string capacitance", BankCapacitance(2500, 18, 1), 2500.0 / 18},
		{"string ESR", BankESR(0.0004, 18, 1), 0.0072},
		{"time constant", BankCapacitance(2500, 18, 1) * BankESR(0.0004, 18, 1), 1.0},
		{"stored energy at 48 V", StoredEnergy(BankCapacitance(2500, 18, 1), 48), 160000},
		{"usable 48→24 V", UsableEnergy(BankCapacitance(2500, 18, 1), 48, 24), 120000},
		{"usable fraction", UsableEnergy(1, 48, 24) / StoredEnergy(1, 48), 0.75},
		{"3 strings capacitance", BankCapacitance(2500, 18, 3), 416.6666666666667},
		{"3 strings ESR", BankESR(0.0004, 18, 3), 0.0024},
		// REFERENCES.md 3.1: 1 Wh = 3600 J; E = ½CV² of one 2500 F cell at 2.7 V = 2.531 25 Wh (10.10).
		{"cell energy in Wh", StoredEnergy(2500, 2.7) / 3600, 2.53125},
	}
	for _, c := range cases {
		if !scalar.EqualWithinRel(c.got, c.want, 1e-12) {
			t.Errorf("%s = %.15g, want %.15g", c.name, c.got, c.want)
		}
	}
	// REFERENCES.md 3.2: the usable fraction is 1 − (Vmin/Vmax)² for any window.
	for _, w := range [][2]float64{{48, 24}, {42, 21}, {5, 3}, {2.7, 1.35}, {100, 99}} {
		got := UsableEnergy(3, w[0], w[1]) / StoredEnergy(3, w[0])
		want := 1 - (w[1]/w[0])*(w[1]/w[0])
		if !scalar.EqualWithinRel(got, want, 1e-12) {
			t.Errorf("usable fraction %v: %v, want %v", w, got, want)
		}
	}
}

func TestColdESRFactor(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name        string
		cold, pt, f float64
		want        float64
		wantBeyond  bool
	}{
		// At or above 25 °C the datasheet ESR applies (its reference point).
		{"room", 25, -40, 2, 1, false},
		{"warm", 60, -40, 2, 1, false},
		// At the datasheet's cold point the datasheet factor applies.
		{"at point", -40, -40, 2, 2, false},
		// Log-linear midway: 2^(32.5/65) = √2 (hand computed).
		{"midway", -7.5, -40, 2, math.Sqrt2, false},
		// Colder than the datasheet: its factor, and say so.
		{"beyond", -50, -40, 2, 2, true},
	}
	for _, c := range cases {
		got, beyond := ColdESRFactor(c.cold, c.pt, c.f)
		if !scalar.EqualWithinRel(got, c.want, 1e-12) || beyond != c.wantBeyond {
			t.Errorf("%s: ColdESRFactor = %v, %v; want %v, %v", c.name, got, beyond, c.want, c.wantBeyond)
		}
	}
}
