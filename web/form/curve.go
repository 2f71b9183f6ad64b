package form

import (
	"fmt"
	"strconv"
	"strings"
	"unicode"

	"capbank/components/figures"
)

// A converter's efficiency curve is typed into one field as its points,
// each "input voltage: efficiency", separated by commas (or semicolons):
//
//	20 V: 88 %, 36 V: 93 %, 48 V: 95 %      20: 0.88, 36: 0.93, 48: 0.95
//
// The voltage takes SI prefixes (500 mV, 0.5 kV) and the efficiency is a
// share (0.95) or a percentage (95 %), as every other field of the form
// reads them (ParseSI).

// ParseEfficiencyCurve reads the curve field's text into the design
// file's [[input_v, efficiency], …]; nil for an empty field. Every point
// that does not read is named in the error (by its number and its text),
// which reads after the field's label. The points' order and ranges are
// sizing.Validate's to judge.
func ParseEfficiencyCurve(text string) ([][]float64, error) {
	var pts [][]float64
	var bad []string
	n := 0
	entries := strings.FieldsFunc(text, func(r rune) bool { return r == ',' || r == ';' })
	for _, entry := range entries {
		entry = strings.TrimSpace(entry)
		if entry == "" {
			continue // a trailing comma, or the field left empty
		}
		n++
		vText, eText, ok := strings.Cut(entry, ":")
		if !ok {
			bad = append(bad, fmt.Sprintf("point %d, “%s”, has no colon: write each point as input voltage: efficiency, e.g. 48 V: 95 %%, with a comma between points and decimals with a full stop", n, entry))
			continue
		}
		v, err := ParseSI(vText, UnitVolt)
		if err != nil {
			bad = append(bad, fmt.Sprintf("point %d, “%s”: the input voltage %s", n, entry, NumberMessage(err, UnitVolt)))
			continue
		}
		e, err := ParseSI(eText, UnitFraction)
		if err != nil {
			msg := NumberMessage(err, UnitFraction)
			if err == ErrEmpty {
				msg = "is required; enter a share such as 0.95 or a percentage such as 95 %"
			}
			bad = append(bad, fmt.Sprintf("point %d, “%s”: the efficiency %s", n, entry, msg))
			continue
		}
		pts = append(pts, []float64{v, e})
	}
	if len(bad) > 0 {
		return nil, fmt.Errorf("%s", strings.Join(bad, "; "))
	}
	return pts, nil
}

// FormatEfficiencyCurve writes a curve as ParseEfficiencyCurve reads it,
// each number so that it reads back exactly: the voltage through
// figures.Field, the efficiency as a percentage where that reads back to
// the very same number, else as the share itself. A point that is not a
// pair is an error, worded to follow a design file's name: the field
// cannot show it.
func FormatEfficiencyCurve(pts [][]float64) (string, error) {
	parts := make([]string, len(pts))
	for i, p := range pts {
		if len(p) != 2 {
			return "", fmt.Errorf("has an efficiency curve point, converter.efficiency_curve[%d], of %d numbers instead of a pair [input_v, efficiency]; fix the file first", i, len(p))
		}
		parts[i] = withUnit(figures.Field(p[0]), "V") + ": " + efficiencyText(p[1])
	}
	return strings.Join(parts, ", "), nil
}

// withUnit writes a unit after a number from figures.Field: straight after
// an SI prefix (500mV), after a space otherwise (48 V).
func withUnit(number, unit string) string {
	if r := []rune(number); len(r) > 0 && unicode.IsLetter(r[len(r)-1]) {
		return number + unit
	}
	return number + " " + unit
}

// efficiencyText is a share as a percentage (0.95 as "95 %"), found by
// moving the decimal point of its shortest decimal form two places, so no
// multiplication rounds it; the share itself when the percentage would not
// read back exactly.
func efficiencyText(x float64) string {
	mant, e, _ := strings.Cut(strconv.FormatFloat(x, 'e', -1, 64), "e")
	if exp, err := strconv.Atoi(e); err == nil {
		if pct, err := strconv.ParseFloat(mant+"e"+strconv.Itoa(exp+2), 64); err == nil {
			s := withUnit(figures.Field(pct), "%")
			if back, err := ParseSI(s, UnitFraction); err == nil && back == x {
				return s
			}
		}
	}
	return figures.Field(x)
}
