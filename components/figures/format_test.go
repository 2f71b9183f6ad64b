package figures

import (
	"math"
	"strings"
	"testing"
)

// page turns the plain spaces of an expected string into the no-break
// space SI writes between number and unit.
func page(s string) string { return strings.ReplaceAll(s, " ", nbsp) }

func TestSI(t *testing.T) {
	t.Parallel()
	// Expected strings follow the SI prefixes (SI Brochure, 9th ed., table 7)
	// and rounding to the stated significant figures, worked by hand.
	cases := []struct {
		v    float64
		unit string
		sig  int
		want string
	}{
		{42, "V", 3, "42 V"},
		{2.8, "V", 3, "2.8 V"},
		{0.0028, "Ω", 3, "2.8 mΩ"},
		{0.008400000000000001, "Ω", 3, "8.4 mΩ"},
		{0.03273795520421886, "Ω", 3, "32.7 mΩ"},
		{0.0004, "Ω", 4, "400 µΩ"}, // µ (U+00B5), not u
		{0.0009994, "Ω", 4, "999.4 µΩ"},
		{0.00099999, "Ω", 4, "1 mΩ"}, // rounds to 1000 µΩ, so into the next prefix
		{738.76, "Ω", 3, "739 Ω"},
		{117600, "J", 4, "117.6 kJ"},
		{70560, "J", 3, "70.6 kJ"},
		{0.5, "J", 3, "500 mJ"},
		{-2500000, "J", 4, "−2.5 MJ"}, // the sign is kept, as U+2212
		{2e18, "J", 4, "2000 PJ"},     // above the largest prefix: stays at P
		{1e-20, "A", 4, "1e−5 fA"},    // below the smallest: stays at f
		{1200, "F", 3, "1200 F"},      // capacitance stays in F from 1 F up
		{1e7, "F", 4, "10000000 F"},
		{133.33333, "F", 3, "133 F"},
		{138.888889, "F", 4, "138.9 F"},
		{0.5, "F", 3, "500 mF"},
		{0.47, "F", 4, "470 mF"},
		{147.549, "A", 3, "148 A"},
		{4999.999999999999, "A", 3, "5 kA"},
		{1000, "A", 4, "1 kA"}, // an exact power of 1000
		{100.04, "A", 4, "100 A"},
		{999.97, "V", 3, "1 kV"},
		{999.96, "V", 4, "1 kV"},
		{0.001, "A", 3, "1 mA"},
		{3e-6, "A", 2, "3 µA"},
		{-500, "W", 3, "−500 W"},
		{3500, "W", 3, "3.5 kW"},
		{4556.25, "W", 4, "4.556 kW"},
		{123456789, "W", 4, "123.5 MW"},
		{0, "V", 3, "0 V"}, // zero takes no prefix
		{0, "A", 4, "0 A"},
		{-147.5, "A", 4, "−147.5 A"},
		{1000, "F", 4, "1000 F"},
		{0.43555, "Wh", 3, "436 mWh"},
		{0.0025, "s", 3, "2.5 ms"},
		{2000, "s", 3, "2000 s"},    // longer times are Duration's
		{5.625, "kg", 3, "5.62 kg"}, // 5.625 is exact in binary; strconv rounds half to even
		{0.0015, "kg", 2, "1.5 g"},  // a mass below 1 kg reads in g
		{0.99996, "kg", 4, "1 kg"},
		{25.87, "°C", 3, "25.9 °C"}, // no prefix for a temperature
		{2.4, "L", 3, "2.4 L"},
		{math.NaN(), "V", 3, "—"},
		{math.Inf(1), "W", 4, "—"},
	}
	for _, c := range cases {
		if got := SI(c.v, c.unit, c.sig); got != page(c.want) {
			t.Errorf("SI(%g, %q, %d) = %q, want %q", c.v, c.unit, c.sig, got, c.want)
		}
	}
}

func TestNumber(t *testing.T) {
	t.Parallel()
	// Decimal rounding to n significant figures by hand, half away from zero
	// as strconv rounds exact decimal ties (common practice, no source).
	cases := []struct {
		v    float64
		sig  int
		want string
	}{
		{34.33221051524998, 4, "34.33"},
		{23.30685282, 4, "23.31"},
		{120000, 4, "120000"},
		{1234567, 4, "1234567"},
		{12345678, 3, "12345678"}, // digits before the point stay
		{0.0012345678, 4, "0.001235"},
		{999.96, 4, "1000"},
		{9.996, 3, "10"},
		{99.96, 3, "100"},
		{0.1, 3, "0.1"},
		{48, 3, "48"},
		{2e9, 3, "2e9"},
		{1.5e-5, 2, "1.5e−5"},
		{-2.5, 3, "−2.5"},
		{-0.72, 4, "−0.72"},
		{0, 4, "0"},
		{math.Copysign(0, -1), 4, "0"},
		{math.NaN(), 4, "—"},
		{math.Inf(-1), 4, "—"},
	}
	for _, c := range cases {
		if got := Number(c.v, c.sig); got != c.want {
			t.Errorf("Number(%g, %d) = %q, want %q", c.v, c.sig, got, c.want)
		}
	}
}

func TestColumn(t *testing.T) {
	t.Parallel()
	// One prefix for the whole column, chosen by its largest magnitude.
	cases := []struct {
		xs        []float64
		unit      string
		scale     float64
		prefixed  string
		formatted []string
	}{
		{[]float64{120000, 45000, 1200000}, "J", 1e6, "MJ", []string{"0.12", "0.045", "1.2"}},
		{[]float64{208.333, 52.1}, "A", 1, "A", []string{"208.3", "52.1"}},
		{[]float64{0.004, 0.0125}, "A", 1e-3, "mA", []string{"4", "12.5"}},
		{[]float64{-3000, 10}, "W", 1e3, "kW", []string{"−3", "0.01"}},
		{nil, "J", 1, "J", nil},
		{[]float64{math.NaN(), 5000}, "J", 1e3, "kJ", []string{"—", "5"}},
	}
	for _, c := range cases {
		scale, prefixed := Column(c.xs, c.unit, 4)
		if scale != c.scale || prefixed != c.prefixed {
			t.Errorf("Column(%v, %q) = %g, %q; want %g, %q", c.xs, c.unit, scale, prefixed, c.scale, c.prefixed)
		}
		for i, x := range c.xs {
			if got := Number(x/scale, 4); got != c.formatted[i] {
				t.Errorf("%v in %s: %q, want %q", x, prefixed, got, c.formatted[i])
			}
		}
	}
}

func TestDuration(t *testing.T) {
	t.Parallel()
	// Unit changes at 1 s, 2 min, 2 h and 2 days; figures by hand.
	cases := []struct {
		s    float64
		sig  int
		want string
	}{
		{0, 3, "0 s"},
		{0.5, 3, "500 ms"},
		{34.33, 3, "34.3 s"},
		{34.33, 4, "34.33 s"},
		{600, 3, "10 min"},
		{7308, 4, "2.03 h"},
		{15.17 * 3600, 3, "15.2 h"},
		{1e7, 3, "116 days"},
		{math.NaN(), 3, "—"},
	}
	for _, c := range cases {
		if got := Duration(c.s, c.sig); got != page(c.want) {
			t.Errorf("Duration(%g, %d) = %q, want %q", c.s, c.sig, got, c.want)
		}
	}
	if got := Hours(15.17, 3); got != page("15.2 h") {
		t.Errorf("Hours(15.17, 3) = %q", got)
	}
}

func TestMoneyAndFixed(t *testing.T) {
	t.Parallel()
	// Prices by hand: two decimals, up to four, thousands grouped.
	cases := []struct{ got, want string }{
		{Money(480), "480.00"},
		{Money(683.5), "683.50"},
		{Money(0.04), "0.04"},
		{Money(0.0125), "0.0125"},
		{Money(1234567.125), "1,234,567.12"}, // 1234567.125 is exact: half to even
		{Money(444.4444), "444.44"},
		{Money(0.1875), "0.1875"},
		{Money(-1234.5), "−1,234.50"},
		{Money(-0.00001), "0.00"},
		{Money(math.NaN()), "—"},
		{Fixed(-0.01, 1), "0.0"},
		{Fixed(-1.25, 1), "−1.2"}, // −1.25 is exact; strconv rounds half to even
		{Celsius(25.876), page("25.9 °C")},
		{Kelvin(0.876), page("0.9 K")},
		{Opt(nil, Money), "—"},
		{Estimated("34.3 s", true), "≈34.3 s"},
		{Estimated("34.3 s", false), "34.3 s"},
		{Estimated(None, true), "—"},
		{ASCII(SI(-2500000, "J", 4)), "-2.5 MJ"},
	}
	for _, c := range cases {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
	}
}

func TestField(t *testing.T) {
	t.Parallel()
	// A form field's text must read back as exactly the same number; the
	// expected strings move the decimal point of strconv's shortest form.
	cases := []struct {
		x    float64
		want string
	}{
		{48, "48"},
		{0.001, "0.001"},
		{9999, "9999"},
		{12000, "12k"},
		{0.0004, "400µ"},
		{4.7e-6, "4.7µ"},
		{-2.2e6, "-2.2M"},
		{1e-12, "1p"},
		{1.5e-13, "1.5e-13"}, // below p the form reads no prefix: plain
		{3.3e12, "3.3e+12"},  // above G likewise
		{0, "0"},
	}
	for _, c := range cases {
		if got := Field(c.x); got != c.want {
			t.Errorf("Field(%g) = %q, want %q", c.x, got, c.want)
		}
	}
}
