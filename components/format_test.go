package components

import "testing"

func TestQuantity(t *testing.T) {
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
		{738.76, "Ω", 3, "739 Ω"},
		{117600, "J", 4, "117.6 kJ"},
		{70560, "J", 3, "70.6 kJ"},
		{1200, "F", 3, "1200 F"},
		{133.33333, "F", 3, "133 F"},
		{0.5, "F", 3, "500 mF"},
		{147.549, "A", 3, "148 A"},
		{4999.999999999999, "A", 3, "5 kA"},
		{999.97, "V", 3, "1 kV"},
		{0.001, "A", 3, "1 mA"},
		{3e-6, "A", 2, "3 µA"},
		{-500, "W", 3, "−500 W"},
		{3500, "W", 3, "3.5 kW"},
		{0, "V", 3, "0 V"},
		{5.625, "kg", 3, "5.62 kg"}, // 5.625 is exact in binary; strconv rounds half to even
		{0.0015, "kg", 2, "0.0015 kg"},
		{0.43555, "Wh", 3, "436 mWh"},
	}
	for _, c := range cases {
		if got := Quantity(c.v, c.unit, c.sig); got != replaceNBSP(c.want) {
			t.Errorf("Quantity(%g, %q, %d) = %q, want %q", c.v, c.unit, c.sig, got, c.want)
		}
	}
}

func TestNumber(t *testing.T) {
	t.Parallel()
	cases := []struct {
		v    float64
		sig  int
		want string
	}{
		{34.33221051524998, 4, "34.33"},
		{9.996, 3, "10"},
		{99.96, 3, "100"},
		{0.1, 3, "0.1"},
		{12345678, 3, "12345678"},
		{2e9, 3, "2e9"},
		{1.5e-5, 2, "1.5e−5"},
		{-2.5, 3, "−2.5"},
	}
	for _, c := range cases {
		if got := Number(c.v, c.sig); got != c.want {
			t.Errorf("Number(%g, %d) = %q, want %q", c.v, c.sig, got, c.want)
		}
	}
}

func TestDuration(t *testing.T) {
	t.Parallel()
	cases := map[float64]string{
		0.5:          "500 ms",
		34.33:        "34.3 s",
		600:          "10 min",
		15.17 * 3600: "15.2 h",
		1e7:          "116 days",
	}
	for s, want := range cases {
		if got := Duration(s); got != replaceNBSP(want) {
			t.Errorf("Duration(%g) = %q, want %q", s, got, want)
		}
	}
}

func TestFixedAndMoney(t *testing.T) {
	t.Parallel()
	if got := Celsius(25.876); got != replaceNBSP("25.9 °C") {
		t.Errorf("Celsius = %q", got)
	}
	if got := Fixed(-0.01, 1); got != "0.0" {
		t.Errorf("Fixed(-0.01, 1) = %q, want 0.0", got)
	}
	if got := Money(480); got != "480.00" {
		t.Errorf("Money = %q", got)
	}
	if got := Opt(nil, Money); got != "—" {
		t.Errorf("Opt(nil) = %q", got)
	}
}

func replaceNBSP(s string) string {
	out := []rune{}
	for _, r := range s {
		if r == ' ' {
			r = '\u00a0'
		}
		out = append(out, r)
	}
	return string(out)
}
