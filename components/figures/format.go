package figures

import (
	"math"
	"strconv"
	"strings"
)

// None stands for a figure the report does not have (a nil runtime, price
// or mass), and for NaN and ±Inf, which a report never holds, rather than
// a misleading number.
const None = "—"

// nbsp joins a number to its unit so the two never wrap apart.
const nbsp = "\u00a0"

// prefixes are the SI prefixes (SI Brochure, 9th ed., table 7) from femto
// to peta, by their power of ten.
var prefixes = map[int]string{
	-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T", 15: "P",
}

// largestPower lists the units that take a prefix, each with the largest
// power of ten it takes. Capacitance reads in F from 1 F up (1200 F, not
// 1.2 kF, as datasheets print it) and a time in s up to s (longer ones are
// Duration's: min, h, days). Every other unit (°C, K, %, L, h, years) takes
// none; kg is a mass (see Prefix).
var largestPower = map[string]int{"V": 15, "A": 15, "W": 15, "Ω": 15, "J": 15, "Wh": 15, "F": 0, "s": 0}

// Prefix chooses the SI prefix for v in unit shown to sig significant
// figures: the power of 1000 that puts the rounded number in [1, 1000)
// (999.96 V to 4 figures is 1 kV), from femto to peta. It returns the
// divisor and the prefixed unit. A mass in kg reads in g below 1 kg
// (8.5 g, 5.62 kg). A unit that takes no prefix, 0, NaN and ±Inf return
// 1 and the unit as given.
func Prefix(v float64, unit string, sig int) (scale float64, prefixed string) {
	top, ok := largestPower[unit]
	if !(ok || unit == "kg") || v == 0 || !finite(v) {
		return 1, unit
	}
	_, exp := round(v, sig)
	if unit == "kg" {
		if exp < 0 {
			return 1e-3, "g"
		}
		return 1, "kg"
	}
	e3 := exp - ((exp%3)+3)%3 // down to a multiple of 3, also below 1
	e3 = min(max(e3, -15), top)
	return math.Pow10(e3), prefixes[e3] + unit
}

// SI is the one SI formatter: v in unit with sig significant figures and
// the prefix Prefix chooses, trailing zeros dropped, the minus sign U+2212
// and a no-break space before the unit: 117.6 kJ, 2.8 mΩ, 1200 F, 436 mWh.
// A unit without prefixes is written as given (5.62 kg is 5.62 kg, 25 °C).
// NaN and ±Inf read None.
func SI(v float64, unit string, sig int) string {
	number, u := siParts(v, unit, sig)
	return join(number, u)
}

// siParts is SI's number and prefixed unit apart, as a Row holds them.
func siParts(v float64, unit string, sig int) (number, prefixed string) {
	if !finite(v) {
		return None, ""
	}
	scale, u := Prefix(v, unit, sig)
	return Number(v/scale, sig), u
}

// Column chooses one prefix for a column of figures in unit, from the
// largest magnitude among them, so that the column reads in one unit
// named in its header ("usable (kJ)"). It returns the divisor and the
// prefixed unit, as Prefix does.
func Column(xs []float64, unit string, sig int) (scale float64, prefixed string) {
	largest := 0.0
	for _, x := range xs {
		if finite(x) {
			largest = max(largest, math.Abs(x))
		}
	}
	return Prefix(largest, unit, sig)
}

// Number writes v with sig significant figures in plain decimals
// (0.0012345 to 4 figures is 0.001235, 34.332 is 34.33), never rounding
// away a digit before the decimal point (22585 to 3 figures stays 22585),
// with an exponent only outside 1e-4 to 1e9 (2e9, 1.5e−5), trailing zeros
// dropped and the minus sign U+2212. NaN and ±Inf read None.
func Number(v float64, sig int) string {
	if !finite(v) {
		return None
	}
	sig = max(sig, 1)
	if v == 0 {
		return "0"
	}
	r, exp := round(v, sig)
	var s string
	if a := math.Abs(v); a >= 1e9 || a < 1e-4 {
		mant, _, _ := strings.Cut(strconv.FormatFloat(r, 'e', sig-1, 64), "e")
		s = trimZeros(mant) + "e" + strconv.Itoa(exp)
	} else if dec := sig - 1 - exp; dec > 0 {
		s = trimZeros(strconv.FormatFloat(r, 'f', dec, 64))
	} else {
		s = strconv.FormatFloat(v, 'f', 0, 64)
	}
	if s == "-0" {
		s = "0"
	}
	return strings.ReplaceAll(s, "-", "−")
}

// round rounds v to sig significant figures and returns it with its
// decimal exponent after rounding (999.96 to 4 figures is 1000, exponent 3).
func round(v float64, sig int) (float64, int) {
	e := strconv.FormatFloat(v, 'e', sig-1, 64)
	r, _ := strconv.ParseFloat(e, 64)
	_, exp, _ := strings.Cut(e, "e")
	p, _ := strconv.Atoi(exp)
	return r, p
}

func trimZeros(s string) string {
	if !strings.Contains(s, ".") {
		return s
	}
	return strings.TrimSuffix(strings.TrimRight(s, "0"), ".")
}

// Duration writes a time given in s for reading, with sig significant
// figures: in ms (an SI prefix) below a second, s below two minutes, min
// below two hours, h below two days, then days.
func Duration(s float64, sig int) string {
	number, unit := durationParts(s, sig)
	return join(number, unit)
}

func durationParts(s float64, sig int) (number, unit string) {
	a := math.Abs(s)
	switch {
	case !finite(s):
		return None, ""
	case a == 0:
		return "0", "s"
	case a < 1:
		return siParts(s, "s", sig)
	case a < 120:
		return Number(s, sig), "s"
	case a < 7200:
		return Number(s/60, sig), "min"
	case a < 48*3600:
		return Number(s/3600, sig), "h"
	}
	return Number(s/86400, sig), "days"
}

// Hours writes a time given in h, as Duration does.
func Hours(h float64, sig int) string { return Duration(h*3600, sig) }

// Money writes an amount for reading: to the cent, thousands grouped
// with commas (1,234,567.13) and the minus sign U+2212. An amount below 1
// keeps up to four decimals (0.0125), so a cheap part's price never reads
// 0.01. The currency, a label the design gives, goes beside it. NaN and
// ±Inf read None.
func Money(v float64) string {
	if !finite(v) {
		return None
	}
	dec := 2
	if math.Abs(v) < 1 {
		dec = 4
	}
	intPart, frac, _ := strings.Cut(strconv.FormatFloat(v, 'f', dec, 64), ".")
	frac = strings.TrimRight(frac, "0")
	frac += strings.Repeat("0", max(0, 2-len(frac)))
	neg := strings.HasPrefix(intPart, "-")
	intPart = strings.TrimPrefix(intPart, "-")
	sign := ""
	if neg && strings.Trim(intPart+frac, "0") != "" {
		sign = "−"
	}
	return sign + grouped(intPart) + "." + frac
}

// grouped writes digits with their thousands grouped by commas.
func grouped(digits string) string {
	var b strings.Builder
	for i, r := range digits {
		if i > 0 && (len(digits)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	return b.String()
}

// Count writes a whole number of things with its thousands grouped by
// commas, as Money does: 10,000.
func Count(n int) string {
	if n < 0 {
		return "−" + grouped(strconv.Itoa(-n))
	}
	return grouped(strconv.Itoa(n))
}

// Fixed writes v with dec decimals and the minus sign U+2212; −0 reads 0.
// NaN and ±Inf read None.
func Fixed(v float64, dec int) string {
	if !finite(v) {
		return None
	}
	s := strconv.FormatFloat(v, 'f', dec, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return strings.Replace(s, "-", "−", 1)
}

// Celsius writes a temperature in °C to 0.1 K.
func Celsius(v float64) string { return join(Fixed(v, 1), "°C") }

// Kelvin writes a temperature difference in K to 0.1 K.
func Kelvin(v float64) string { return join(Fixed(v, 1), "K") }

// Opt writes an optional figure with f, or None when it is not given.
func Opt(v *float64, f func(float64) string) string {
	if v == nil {
		return None
	}
	return f(*v)
}

// Approx is the one mark of an estimated figure, before its value.
const Approx = "≈"

// EstimatedNote says how an estimated runtime was found: by averaging the
// drain per period of the repeated steps over many periods
// (Candidate.RuntimeEstimated).
const EstimatedNote = "estimated from the drain per period"

// Estimated marks text as an estimate when estimated is set: "≈34.3 s".
// Every output marks an estimated figure so, and only so.
func Estimated(text string, estimated bool) string {
	if estimated && text != None {
		return Approx + text
	}
	return text
}

// ascii maps the page's typesetting to plain text.
var ascii = strings.NewReplacer("−", "-", nbsp, " ")

// ASCII turns figures typeset for a page into plain text for a terminal,
// a CSV or a spreadsheet note: the minus sign U+2212 becomes '-' and the
// no-break space a space. Units keep their symbols (Ω, µ, °C).
func ASCII(s string) string { return ascii.Replace(s) }

// Field writes x as an engineer types it into a form field, so that the
// form reads it back as exactly x: plain between 0.001 and 9999, else with
// the SI prefix (p to G, the ones the form reads) that puts the figure
// between 1 and 1000 (4µ, not 4e-06). Its digits are those of the
// shortest exact form with the decimal point moved. A figure no prefix
// writes exactly is written plain.
func Field(x float64) string {
	plain := strconv.FormatFloat(x, 'g', -1, 64)
	if a := math.Abs(x); x == 0 || (a >= 1e-3 && a < 1e4) || !finite(x) {
		return plain
	}
	mant, e, _ := strings.Cut(strconv.FormatFloat(x, 'e', -1, 64), "e") // -d.ddd, ±XX
	exp, err := strconv.Atoi(e)
	if err != nil {
		return plain
	}
	pe := int(math.Floor(float64(exp)/3)) * 3
	sym, ok := prefixes[pe]
	if !ok || pe < -12 || pe > 9 {
		return plain
	}
	sign := ""
	if strings.HasPrefix(mant, "-") {
		sign, mant = "-", mant[1:]
	}
	digits := strings.Replace(mant, ".", "", 1)
	point := 1 + exp - pe // digits before the decimal point: 1 to 3
	for len(digits) < point {
		digits += "0"
	}
	number := sign + digits[:point]
	if rest := digits[point:]; rest != "" {
		number += "." + rest
	}
	// The form reads "4.7µ" as the decimal 4.7e-6, exactly as strconv does.
	if back, err := strconv.ParseFloat(number+"e"+strconv.Itoa(pe), 64); err != nil || back != x {
		return plain
	}
	return number + sym
}

func join(number, unit string) string {
	if unit == "" {
		return number
	}
	return number + nbsp + unit
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
