package web

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
		unit unitSpec
		want float64
	}{
		{"plain", "400", unitWatt, 400},
		{"kilo", "3.5k", unitWatt, 3500},
		{"milli", "2.8m", unitOhm, 0.0028},
		{"exponent", "1e3", unitSecond, 1000},
		{"exponent with sign", "2.5E-3", unitSecond, 0.0025},
		{"micro sign", "10µ", unitAmp, 10e-6},
		{"greek mu", "10μ", unitAmp, 10e-6},
		{"u for micro", "10u", unitAmp, 10e-6},
		{"mega", "2.2M", unitOhm, 2.2e6},
		{"giga", "1G", unitOhm, 1e9},
		{"nano", "47n", unitAmp, 47e-9},
		{"pico", "3p", unitAmp, 3e-12},
		{"unit after prefix", "3.5kW", unitWatt, 3500},
		{"space before prefix and unit", "2.8 mΩ", unitOhm, 0.0028},
		{"ohm sign", "2.8mΩ", unitOhm, 0.0028},
		{"ohm spelt", "2.8 mohm", unitOhm, 0.0028},
		{"farad", "400F", unitFarad, 400},
		{"space before unit", "400 F", unitFarad, 400},
		{"spaces around", "  42  ", unitVolt, 42},
		{"space between number and prefix", "3.5 k", unitWatt, 3500},
		{"negative", "-500", unitWatt, -500},
		{"minus sign", "−40", unitCelsius, -40},
		{"celsius", "-40 °C", unitCelsius, -40},
		{"leading point", ".5", unitSecond, 0.5},
		{"trailing point", "5.", unitSecond, 5},
		{"millisecond", "5 ms", unitSecond, 0.005},
		{"grams in a kg field", "75 g", unitKilogram, 0.075},
		{"kilograms", "0.075 kg", unitKilogram, 0.075},
		{"bare number in a kg field", "0.5", unitKilogram, 0.5},
		{"millilitres", "58 mL", unitLitre, 0.058},
		{"percent in a fraction field", "94%", unitFraction, 0.94},
		{"percent with space", "80 %", unitFraction, 0.8},
		{"fraction", "0.94", unitFraction, 0.94},
		{"factor with ×", "2×", unitFactor, 2},
		{"factor as percent", "200%", unitFactor, 2},
		{"kelvin per watt", "11 K/W", unitKPerW, 11},
		{"non-breaking space", "3.5\u00a0kW", unitWatt, 3500},
		{"plus sign", "+3", unitAmp, 3},
		{"tiny rounds to zero", "1e-400", unitAmp, 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			got, err := parseSI(c.in, c.unit)
			if err != nil {
				t.Fatalf("parseSI(%q) error: %v", c.in, err)
			}
			if math.Abs(got-c.want) > 1e-12*math.Abs(c.want) {
				t.Fatalf("parseSI(%q) = %.17g, want %.17g", c.in, got, c.want)
			}
		})
	}
}

func TestParseSIRejects(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name, in string
		unit     unitSpec
		want     string // part of the message
	}{
		{"empty", "", unitVolt, "empty"},
		{"blank", "   ", unitVolt, "empty"},
		{"decimal comma", "2,5", unitVolt, "comma"},
		{"thousands separator", "1,000", unitWatt, "comma"},
		{"word", "abc", unitVolt, notANumber},
		{"NaN", "NaN", unitVolt, notANumber},
		{"nan lower case", "nan", unitVolt, notANumber},
		{"Inf", "Inf", unitVolt, notANumber},
		{"infinity", "-infinity", unitVolt, notANumber},
		{"hexadecimal", "0x10", unitVolt, notANumber},
		{"digit separator", "1_000", unitWatt, notANumber},
		{"overflow", "1e999", unitVolt, "too large"},
		{"overflow by prefix", "1e308k", unitVolt, "too large"},
		{"unit of another quantity", "3.5kV", unitWatt, "this field is in W"},
		{"upper-case K for kilo", "3.5K", unitWatt, "lower-case k"},
		{"two prefixes", "3kk", unitWatt, notANumber},
		{"prefix alone", "k", unitWatt, notANumber},
		{"unit alone", "W", unitWatt, notANumber},
		{"percent where not a fraction", "50%", unitVolt, notANumber},
		{"two numbers", "3 4", unitVolt, notANumber},
		{"sign alone", "-", unitVolt, notANumber},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			v, err := parseSI(c.in, c.unit)
			if err == nil {
				t.Fatalf("parseSI(%q) = %g, want an error", c.in, v)
			}
			if !strings.Contains(err.Error(), c.want) {
				t.Fatalf("parseSI(%q) error %q, want it to contain %q", c.in, err, c.want)
			}
		})
	}
	if _, err := parseSI("", unitVolt); !errors.Is(err, errSIEmpty) {
		t.Errorf("parseSI(\"\") error %v, want errSIEmpty", err)
	}
}

func TestParseCount(t *testing.T) {
	t.Parallel()
	for in, want := range map[string]int{"20": 20, "1k": 1000, "3×": 3, "1e3": 1000} {
		got, err := parseCount(in, unitCount)
		if err != nil || got != want {
			t.Errorf("parseCount(%q) = %d, %v; want %d", in, got, err, want)
		}
	}
	for _, in := range []string{"2.5", "1m", "1e20"} {
		if got, err := parseCount(in, unitCount); err == nil || !strings.Contains(err.Error(), "whole number") {
			t.Errorf("parseCount(%q) = %d, %v; want a whole-number error", in, got, err)
		}
	}
}

// FuzzParseSI checks that no text makes parseSI return a non-finite number
// or panic.
func FuzzParseSI(f *testing.F) {
	for _, s := range []string{"3.5k", "2.8 mΩ", "1e308k", "NaN", "−0", "10µ", "%", "1e-400"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := parseSI(s, unitFactor)
		if err == nil && (math.IsNaN(v) || math.IsInf(v, 0)) {
			t.Fatalf("parseSI(%q) = %g with no error", s, v)
		}
	})
}
