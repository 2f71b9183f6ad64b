package form

import (
	"fmt"
	"strconv"
	"strings"
	"unicode"

	"capbank/components/figures"
)

// A PointTable is a design file's table of points, [[x, y], …], typed into
// one field as its points, each "x: y", separated by commas (or
// semicolons):
//
//	20 V: 88 %, 36 V: 93 %, 48 V: 95 %      25 °C: 2.7 V, 65 °C: 2.5 V
//	20: 0.88, 36: 0.93, 48: 0.95            25: 2.7, 65: 2.5
//
// Each number is read as every other field of the form reads it (ParseSI):
// with an optional SI prefix and the unit of its column, which may be left
// out. The two tables of the design are EfficiencyCurve and
// VoltageDerating; Parse and Format are the one reader and writer of both.
type PointTable struct {
	// Key is the table's design-file key, as a problem with a file names
	// it: "converter.efficiency_curve", "voltage_derating".
	Key string
	// What names the table in a sentence: "an efficiency curve".
	What string
	// X and Y are the two columns: their names in a message, the units
	// they are typed in, and the design file's names of the pair.
	XName, YName string
	X, Y         UnitSpec
	Pair         string
	// Example is one point as typed, for the messages.
	Example string
	// YRequired is the message for a point whose second number is empty.
	YRequired string
	// YText writes a point's second number so that it reads back exactly;
	// nil: figures.Field with Y's unit.
	YText func(float64) string
}

// EfficiencyCurve is the converter's efficiency curve: input voltage in V,
// efficiency as a share (0.95) or a percentage (95 %).
var EfficiencyCurve = PointTable{
	Key: "converter.efficiency_curve", What: "an efficiency curve",
	XName: "input voltage", YName: "efficiency", X: UnitVolt, Y: UnitFraction,
	Pair: "[input_v, efficiency]", Example: "48 V: 95 %",
	YRequired: "is required; enter a share such as 0.95 or a percentage such as 95 %",
	YText:     efficiencyText,
}

// VoltageDerating is a cell's voltage derating: cell temperature in °C,
// highest cell voltage in V.
var VoltageDerating = PointTable{
	Key: "voltage_derating", What: "a voltage derating",
	XName: "temperature", YName: "cell voltage", X: UnitCelsius, Y: UnitVolt,
	Pair: "[temp_c, max_cell_v]", Example: "65 °C: 2.5 V",
	YRequired: "is required; enter the highest cell voltage at that temperature in V",
}

// Parse reads the field's text into the design file's [[x, y], …]; nil
// for an empty field. Every point that does not read is named in the error
// (by its number and its text), which reads after the field's label. The
// points' order and ranges are sizing.Validate's to judge, the one rule
// for a file and for the form.
func (t PointTable) Parse(text string) ([][]float64, error) {
	var pts [][]float64
	var bad []string
	n := 0
	entries := strings.FieldsFunc(text, func(r rune) bool { return r == ',' || r == ';' })
	how := fmt.Sprintf("write each point as %s: %s, e.g. %s, with a comma between points and decimals with a full stop", t.XName, t.YName, t.Example)
	for _, entry := range entries {
		entry = strings.TrimSpace(entry)
		if entry == "" {
			continue // a trailing comma, or the field left empty
		}
		n++
		parts := strings.Split(entry, ":")
		switch {
		case len(parts) == 1:
			bad = append(bad, fmt.Sprintf("point %d, “%s”, has no colon: %s", n, entry, how))
			continue
		case len(parts) > 2:
			bad = append(bad, fmt.Sprintf("point %d, “%s”, has %d numbers: %s", n, entry, len(parts), how))
			continue
		}
		x, err := ParseSI(parts[0], t.X)
		if err != nil {
			bad = append(bad, fmt.Sprintf("point %d, “%s”: the %s %s", n, entry, t.XName, NumberMessage(err, t.X)))
			continue
		}
		y, err := ParseSI(parts[1], t.Y)
		if err != nil {
			msg := NumberMessage(err, t.Y)
			if err == ErrEmpty && t.YRequired != "" {
				msg = t.YRequired
			}
			bad = append(bad, fmt.Sprintf("point %d, “%s”: the %s %s", n, entry, t.YName, msg))
			continue
		}
		pts = append(pts, []float64{x, y})
	}
	if len(bad) > 0 {
		return nil, fmt.Errorf("%s", strings.Join(bad, "; "))
	}
	return pts, nil
}

// Format writes a table as Parse reads it, each number so that it reads
// back exactly: the first through figures.Field with its unit, the second
// by YText. A point that is not a pair is an error, worded to follow a
// design file's name (or a cell's): the field cannot show it.
func (t PointTable) Format(pts [][]float64) (string, error) {
	parts := make([]string, len(pts))
	for i, p := range pts {
		if len(p) != 2 {
			return "", fmt.Errorf("has %s point, %s[%d], of %d numbers instead of a pair %s; fix the file first", t.What, t.Key, i, len(p), t.Pair)
		}
		y := withUnit(figures.Field(p[1]), t.Y.Unit)
		if t.YText != nil {
			y = t.YText(p[1])
		}
		parts[i] = withUnit(figures.Field(p[0]), t.X.Unit) + ": " + y
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
