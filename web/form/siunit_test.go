package form

import (
	"errors"
	"math"
	"strings"
	"testing"
)

func TestParseSI(t *testing.T) {
	t.Parallel()
	// Expected values are the SI prefixes' own definitions (SI Brochure,
	// 9th ed., table 7) applied by hand.
	cases := []struct {
		name string
		in   string
		unit UnitSpec
		want float64
	}{
		{"plain", "400", UnitWatt, 400},
		{"kilo", "3.5k", UnitWatt, 3500},
		{"milli", "2.8m", UnitOhm, 0.0028},
		{"exponent", "1e3", UnitSecond, 1000},
		{"exponent with sign", "2.5E-3", UnitSecond, 0.0025},
		{"micro sign", "10µ", UnitAmp, 10e-6},
		{"greek mu", "10μ", UnitAmp, 10e-6},
		{"u for micro", "10u", UnitAmp, 10e-6},
		{"mega", "2.2M", UnitOhm, 2.2e6},
		{"giga", "1G", UnitOhm, 1e9},
		{"nano", "47n", UnitAmp, 47e-9},
		{"pico", "3p", UnitAmp, 3e-12},
		{"unit after prefix", "3.5kW", UnitWatt, 3500},
		{"space before prefix and unit", "2.8 mΩ", UnitOhm, 0.0028},
		{"ohm sign", "2.8mΩ", UnitOhm, 0.0028},
		{"ohm spelt", "2.8 mohm", UnitOhm, 0.0028},
		{"farad", "400F", UnitFarad, 400},
		{"space before unit", "400 F", UnitFarad, 400},
		{"spaces around", "  42  ", UnitVolt, 42},
		{"space between number and prefix", "3.5 k", UnitWatt, 3500},
		{"negative", "-500", UnitWatt, -500},
		{"minus sign", "−40", UnitCelsius, -40},
		{"celsius", "-40 °C", UnitCelsius, -40},
		{"leading point", ".5", UnitSecond, 0.5},
		{"trailing point", "5.", UnitSecond, 5},
		{"millisecond", "5 ms", UnitSecond, 0.005},
		{"grams in a kg field", "75 g", UnitKilogram, 0.075},
		{"kilograms", "0.075 kg", UnitKilogram, 0.075},
		{"bare number in a kg field", "0.5", UnitKilogram, 0.5},
		{"millilitres", "58 mL", UnitLitre, 0.058},
		{"percent in a fraction field", "94%", UnitFraction, 0.94},
		{"percent with space", "80 %", UnitFraction, 0.8},
		{"fraction", "0.94", UnitFraction, 0.94},
		{"factor with ×", "2×", UnitFactor, 2},
		{"factor as percent", "200%", UnitFactor, 2},
		{"kelvin per watt", "11 K/W", UnitKPerW, 11},
		{"non-breaking space", "3.5\u00a0kW", UnitWatt, 3500},
		{"plus sign", "+3", UnitAmp, 3},
		{"tiny rounds to zero", "1e-400", UnitAmp, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			got, err := ParseSI(c.in, c.unit)
			if err != nil {
				t.Fatalf("ParseSI(%q) error: %v", c.in, err)
			}
			if math.Abs(got-c.want) > 1e-12*math.Abs(c.want) {
				t.Fatalf("ParseSI(%q) = %.17g, want %.17g", c.in, got, c.want)
			}
		})
	}
}

func TestParseSIRejects(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name, in string
		unit     UnitSpec
		want     string // part of the message
	}{
		{"empty", "", UnitVolt, "empty"},
		{"blank", "   ", UnitVolt, "empty"},
		{"decimal comma", "2,5", UnitVolt, "comma"},
		{"thousands separator", "1,000", UnitWatt, "comma"},
		{"word", "abc", UnitVolt, NotANumber},
		{"NaN", "NaN", UnitVolt, NotANumber},
		{"nan lower case", "nan", UnitVolt, NotANumber},
		{"Inf", "Inf", UnitVolt, NotANumber},
		{"infinity", "-infinity", UnitVolt, NotANumber},
		{"hexadecimal", "0x10", UnitVolt, NotANumber},
		{"digit separator", "1_000", UnitWatt, NotANumber},
		{"overflow", "1e999", UnitVolt, "too large"},
		{"overflow by prefix", "1e308k", UnitVolt, "too large"},
		{"unit of another quantity", "3.5kV", UnitWatt, "this field is in W"},
		{"upper-case K for kilo", "3.5K", UnitWatt, "lower-case k"},
		{"two prefixes", "3kk", UnitWatt, NotANumber},
		{"prefix alone", "k", UnitWatt, NotANumber},
		{"unit alone", "W", UnitWatt, NotANumber},
		{"percent where not a fraction", "50%", UnitVolt, NotANumber},
		{"two numbers", "3 4", UnitVolt, NotANumber},
		{"sign alone", "-", UnitVolt, NotANumber},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			v, err := ParseSI(c.in, c.unit)
			if err == nil {
				t.Fatalf("ParseSI(%q) = %g, want an error", c.in, v)
			}
			if !strings.Contains(err.Error(), c.want) {
				t.Fatalf("ParseSI(%q) error %q, want it to contain %q", c.in, err, c.want)
			}
		})
	}
	if _, err := ParseSI("", UnitVolt); !errors.Is(err, ErrEmpty) {
		t.Errorf("ParseSI(\"\") error %v, want ErrEmpty", err)
	}
}

func TestParseCount(t *testing.T) {
	t.Parallel()
	for in, want := range map[string]int{"20": 20, "1k": 1000, "3×": 3, "1e3": 1000} {
		got, err := ParseCount(in, UnitCount)
		if err != nil || got != want {
			t.Errorf("ParseCount(%q) = %d, %v; want %d", in, got, err, want)
		}
	}
	for _, in := range []string{"2.5", "1m", "1e20"} {
		if got, err := ParseCount(in, UnitCount); err == nil || !strings.Contains(err.Error(), "whole number") {
			t.Errorf("ParseCount(%q) = %d, %v; want a whole-number error", in, got, err)
		}
	}
}

// FuzzParseSI checks that no text makes ParseSI return a non-finite number
// or panic.
func FuzzParseSI(f *testing.F) {
	for _, s := range []string{"3.5k", "2.8 mΩ", "1e308k", "NaN", "−0", "10µ", "%", "1e-400"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := ParseSI(s, UnitFactor)
		if err == nil && (math.IsNaN(v) || math.IsInf(v, 0)) {
			t.Fatalf("ParseSI(%q) = %g with no error", s, v)
		}
	})
}
