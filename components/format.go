package components

import (
	"math"
	"strconv"
	"strings"
)

// nbsp joins a number to its unit so the two never wrap apart.
const nbsp = "\u00a0"

// prefix is one SI prefix for display.
type prefix struct {
	exp    int
	symbol string
}

// prefixesFor lists, per unit, the prefixes an engineer expects to read.
// Capacitance is read in F even above a thousand (1200 F, not 1.2 kF);
// temperatures, mass, volume and counts take none.
var prefixesFor = map[string][]prefix{
	"V":  {{-3, "m"}, {0, ""}, {3, "k"}},
	"A":  {{-6, "µ"}, {-3, "m"}, {0, ""}, {3, "k"}},
	"W":  {{-3, "m"}, {0, ""}, {3, "k"}, {6, "M"}},
	"Ω":  {{-6, "µ"}, {-3, "m"}, {0, ""}, {3, "k"}, {6, "M"}},
	"F":  {{-6, "µ"}, {-3, "m"}, {0, ""}},
	"J":  {{0, ""}, {3, "k"}, {6, "M"}, {9, "G"}},
	"Wh": {{-3, "m"}, {0, ""}, {3, "k"}},
}

// Quantity formats v with sig significant figures in unit, with the SI
// prefix that keeps the number between 1 and 1000 where the unit takes
// prefixes (2.8 mΩ, 117.6 kJ with 4 figures, 1200 F), trailing zeros
// dropped, a typographic minus, and a non-breaking space before the unit.
// NaN and ±Inf, which a report never holds, read "—" rather than a
// misleading number.
func Quantity(v float64, unit string, sig int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "—"
	}
	ps := prefixesFor[unit]
	if len(ps) == 0 || v == 0 {
		return join(Number(v, sig), unit)
	}
	exp := int(math.Floor(math.Log10(math.Abs(v))/3)) * 3
	p := ps[0]
	for _, c := range ps {
		if c.exp <= exp {
			p = c
		}
	}
	m := v / math.Pow10(p.exp)
	text := Number(m, sig)
	// Rounding can carry into the next power of a thousand (999.97 → 1000).
	if r, err := strconv.ParseFloat(strings.Replace(text, "−", "-", 1), 64); err == nil && math.Abs(r) >= 1000 {
		for _, c := range ps {
			if c.exp == p.exp+3 {
				text, p = Number(v/math.Pow10(c.exp), sig), c
				break
			}
		}
	}
	return join(text, p.symbol+unit)
}

func join(number, unit string) string {
	if unit == "" {
		return number
	}
	return number + nbsp + unit
}

// Number formats v with sig significant figures, without an exponent for
// everyday magnitudes (1e-4 to 1e9), dropping trailing zeros, with a
// typographic minus.
func Number(v float64, sig int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "—"
	}
	if sig < 1 {
		sig = 1
	}
	if v == 0 {
		return "0"
	}
	a := math.Abs(v)
	var s string
	if a >= 1e9 || a < 1e-4 {
		s = strconv.FormatFloat(v, 'e', sig-1, 64)
		mant, exp, _ := strings.Cut(s, "e")
		e, _ := strconv.Atoi(exp)
		s = trimZeros(mant) + "e" + strconv.Itoa(e)
	} else {
		mag := int(math.Floor(math.Log10(a)))
		dec := max(sig-1-mag, 0)
		s = strconv.FormatFloat(v, 'f', dec, 64)
		// Rounding may have added a digit (9.996 → 10.00): drop the extra decimal.
		if r, _ := strconv.ParseFloat(s, 64); math.Abs(r) >= math.Pow10(mag+1) && dec > 0 {
			s = strconv.FormatFloat(v, 'f', dec-1, 64)
		}
		s = trimZeros(s)
	}
	return strings.ReplaceAll(s, "-", "−")
}

func trimZeros(s string) string {
	if !strings.Contains(s, ".") {
		return s
	}
	s = strings.TrimRight(s, "0")
	return strings.TrimSuffix(s, ".")
}

// Duration formats a time in s for reading: ms below a second, s below two
// minutes, min below two hours, h below two days, then days.
func Duration(s float64) string {
	a := math.Abs(s)
	switch {
	case math.IsNaN(s) || math.IsInf(s, 0):
		return "—"
	case a == 0:
		return "0" + nbsp + "s"
	case a < 1:
		return Quantity(s*1000, "", 3) + nbsp + "ms"
	case a < 120:
		return Number(s, 3) + nbsp + "s"
	case a < 7200:
		return Number(s/60, 3) + nbsp + "min"
	case a < 48*3600:
		return Number(s/3600, 3) + nbsp + "h"
	}
	return Number(s/86400, 3) + nbsp + "days"
}

// Hours formats a time given in h, as Duration does.
func Hours(h float64) string { return Duration(h * 3600) }

// Money formats a price in the user's currency with two decimals.
func Money(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "—"
	}
	return strings.Replace(strconv.FormatFloat(v, 'f', 2, 64), "-", "−", 1)
}

// Celsius formats a temperature in °C to 0.1 K.
func Celsius(v float64) string { return join(Fixed(v, 1), "°C") }

// Kelvin formats a temperature difference in K to 0.1 K.
func Kelvin(v float64) string { return join(Fixed(v, 1), "K") }

// Fixed formats v with dec decimals and a typographic minus; −0 reads 0.
func Fixed(v float64, dec int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "—"
	}
	s := strconv.FormatFloat(v, 'f', dec, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return strings.Replace(s, "-", "−", 1)
}

// Opt formats an optional figure with f, or "—" when it is not given.
func Opt(v *float64, f func(float64) string) string {
	if v == nil {
		return "—"
	}
	return f(*v)
}
