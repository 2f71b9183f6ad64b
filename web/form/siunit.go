package form

import (
	"errors"
	"math"
	"strconv"
	"strings"
)

// UnitSpec says how a number field may be typed: the unit spellings it
// accepts after the number (each with its scale to the field's unit) and
// whether a trailing % means hundredths (a fraction field).
type UnitSpec struct {
	// Unit is the field's unit as shown beside the input, "" for none.
	Unit    string
	Symbols []unitSymbol
	Percent bool
}

// unitSymbol is one accepted spelling of a unit and what one of it is in
// the field's unit (a mass field in kg takes "g" at 1e-3, so "75 g" and
// "0.075 kg" both give 0.075).
type unitSymbol struct {
	Text  string
	Scale float64
}

// Units of the form's fields.
var (
	UnitVolt       = UnitSpec{Unit: "V", Symbols: []unitSymbol{{"V", 1}}}
	UnitAmp        = UnitSpec{Unit: "A", Symbols: []unitSymbol{{"A", 1}}}
	UnitWatt       = UnitSpec{Unit: "W", Symbols: []unitSymbol{{"W", 1}}}
	UnitOhm        = UnitSpec{Unit: "Ω", Symbols: []unitSymbol{{"Ω", 1}, {"Ω", 1}, {"ohms", 1}, {"ohm", 1}, {"Ohm", 1}}}
	UnitFarad      = UnitSpec{Unit: "F", Symbols: []unitSymbol{{"F", 1}}}
	UnitSecond     = UnitSpec{Unit: "s", Symbols: []unitSymbol{{"s", 1}}}
	UnitHour       = UnitSpec{Unit: "h", Symbols: []unitSymbol{{"h", 1}}}
	UnitYear       = UnitSpec{Unit: "years", Symbols: []unitSymbol{{"years", 1}, {"year", 1}, {"yr", 1}, {"y", 1}}}
	UnitCelsius    = UnitSpec{Unit: "°C", Symbols: []unitSymbol{{"°C", 1}, {"℃", 1}, {"C", 1}}}
	UnitKelvin     = UnitSpec{Unit: "K", Symbols: []unitSymbol{{"K", 1}}}
	UnitKPerW      = UnitSpec{Unit: "K/W", Symbols: []unitSymbol{{"K/W", 1}}}
	UnitKilogram   = UnitSpec{Unit: "kg", Symbols: []unitSymbol{{"g", 1e-3}}}
	UnitLitre      = UnitSpec{Unit: "L", Symbols: []unitSymbol{{"L", 1}, {"l", 1}}}
	UnitJPerKgK    = UnitSpec{Unit: "J/(kg·K)", Symbols: []unitSymbol{{"J/(kg·K)", 1}, {"J/kgK", 1}, {"J/(kgK)", 1}}}
	UnitPercent    = UnitSpec{Unit: "%", Symbols: []unitSymbol{{"%", 1}}}
	UnitFraction   = UnitSpec{Unit: "0–1", Percent: true}
	UnitFactor     = UnitSpec{Unit: "×", Symbols: []unitSymbol{{"×", 1}, {"x", 1}}, Percent: true}
	UnitCount      = UnitSpec{Unit: "×", Symbols: []unitSymbol{{"×", 1}, {"x", 1}}}
	UnitNone       = UnitSpec{}
	UnitCurrencyEa = UnitSpec{Unit: "each"}
)

// siPrefixes are the prefixes an engineer types after a number. Upper-case
// K is not one (SI writes kilo as k; K is the kelvin).
var siPrefixes = map[byte]float64{
	'p': 1e-12, 'n': 1e-9, 'u': 1e-6, 'm': 1e-3, 'k': 1e3, 'M': 1e6, 'G': 1e9,
}

const NotANumber = "is not a number; use digits with an optional SI prefix such as 3.5k or 2.8m"

// ErrEmpty is returned by ParseSI for a field left empty.
var ErrEmpty = errors.New("is empty")

// ParseSI reads a number as an engineer types it: digits with an optional
// decimal point and exponent, an optional SI prefix and an optional unit
// symbol matching the field, with spaces anywhere between them:
//
//	400   3.5k   2.8m   1e3   10µ   10u   2.2M   3.5kW   2.8 mΩ   400F   −40
//
// A decimal comma, a unit of another quantity, NaN, Inf and a number beyond
// the range of float64 are errors, never guesses. The error's text is a
// message that reads after the field's name.
func ParseSI(text string, u UnitSpec) (float64, error) {
	s := normalizeNumber(text)
	if s == "" {
		return 0, ErrEmpty
	}
	if strings.ContainsRune(s, ',') {
		return 0, errors.New("has a comma; write the decimal point as a full stop (2.5, not 2,5) and no thousands separator")
	}
	// The prefix, unit and percent scales are powers of ten: they shift the
	// decimal exponent, so "2.8m" reads as the decimal 0.0028 exactly, as
	// strconv would read "0.0028", not as 2.8 × 0.001.
	shift := 0
	if u.Percent {
		if rest, ok := strings.CutSuffix(s, "%"); ok {
			s, shift = strings.TrimSpace(rest), -2
		}
	}
	for _, sym := range u.Symbols {
		if rest, ok := strings.CutSuffix(s, sym.Text); ok && strings.TrimSpace(rest) != "" {
			s, shift = strings.TrimSpace(rest), shift+decimalExponent(sym.Scale)
			break
		}
	}
	if n := len(s); n > 1 {
		if p, ok := siPrefixes[s[n-1]]; ok {
			s, shift = strings.TrimSpace(s[:n-1]), shift+decimalExponent(p)
		}
	}
	if !plainDecimal(s) {
		return 0, errors.New(notANumberFor(s, u))
	}
	if shift != 0 {
		mant, exp := s, 0
		if i := strings.IndexAny(s, "eE"); i >= 0 {
			e, err := strconv.Atoi(s[i+1:])
			if err != nil {
				if errors.Is(err, strconv.ErrRange) {
					return 0, errors.New("is too large a number (beyond ±1.8e308)")
				}
				return 0, errors.New(notANumberFor(s, u))
			}
			mant, exp = s[:i], e
		}
		s = mant + "e" + strconv.Itoa(exp+shift)
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		if errors.Is(err, strconv.ErrRange) {
			return 0, errors.New("is too large a number (beyond ±1.8e308)")
		}
		return 0, errors.New(notANumberFor(s, u))
	}
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, errors.New("is too large a number (beyond ±1.8e308)")
	}
	return v, nil
}

// decimalExponent is n for a scale of exactly 10ⁿ (every prefix and unit
// scale is one).
func decimalExponent(scale float64) int { return int(math.Round(math.Log10(scale))) }

// ParseCount is ParseSI for a whole number such as a repeat or a count.
func ParseCount(text string, u UnitSpec) (int, error) {
	v, err := ParseSI(text, u)
	if err != nil {
		return 0, err
	}
	if v != math.Trunc(v) || math.Abs(v) > 1e15 {
		return 0, errors.New("must be a whole number, such as 1, 20 or 1k")
	}
	return int(v), nil
}

// normalizeNumber trims the text and writes the look-alike characters people
// paste from documents in their plain form: the minus sign, the micro sign
// and Greek mu, and non-breaking or thin spaces.
func normalizeNumber(text string) string {
	return strings.TrimSpace(numberLookalikes.Replace(text))
}

// numberLookalikes is built once, for every number read.
var numberLookalikes = strings.NewReplacer("\u2212", "-", "µ", "u", "μ", "u", "\u00a0", " ", "\u2009", " ", "\u202f", " ")

// plainDecimal reports whether s is a decimal number strconv may read
// without taking hexadecimal, digit separators, NaN or Inf.
func plainDecimal(s string) bool {
	digits := false
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case '0' <= c && c <= '9':
			digits = true
		case c == '.' || c == '+' || c == '-' || c == 'e' || c == 'E':
		default:
			return false
		}
	}
	return digits
}

// notANumberFor is the message for a value that is not a number, with a
// hint when the text ends in something that looks like a unit or a prefix.
func notANumberFor(s string, u UnitSpec) string {
	msg := NotANumber
	switch {
	case strings.HasSuffix(s, "K") && u.Unit != "K/W":
		msg += "; write kilo as a lower-case k"
	case u.Unit != "" && u.Unit != "×" && u.Unit != "0–1" && u.Unit != "each" && strings.ContainsAny(s, "abcdfghijlnoqrstvwxyzABCDEFHIJLNOPQRSTUVWXYZΩ°%/"):
		msg += " (this field is in " + u.Unit + ")"
	}
	return msg
}
