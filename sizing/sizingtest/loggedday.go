// Package sizingtest holds the invented test data that the tests of
// sizing, the command line and the web share, so that each edge sizes the
// very same input. It is pure, as sizing is.
package sizingtest

import (
	"math"
	"strconv"
	"strings"
)

// LoggedDayCSV is an invented logged day (demo data, not a measurement):
// one power_w row a second for rows seconds, a slow swing of the base load
// with a 1.8 W burst of 4 s every 10 min and a minute of charging at 3 W
// five minutes after it, rounded to the milliwatt as a logger would write
// it, so nearly every row is a step of its own.
func LoggedDayCSV(rows int) string {
	var b strings.Builder
	b.WriteString("# invented demo data: a logged day\ntime_s,power_w\n")
	for i := range rows {
		p := 0.2 + 0.15*math.Sin(2*math.Pi*float64(i)/86400) + 0.01*math.Sin(float64(i))
		switch t := i % 600; {
		case t < 4:
			p = 1.8
		case t >= 300 && t < 360:
			p = -3 // the charger's minute
		}
		b.WriteString(strconv.Itoa(i))
		b.WriteByte(',')
		b.WriteString(strconv.FormatFloat(p, 'f', 3, 64))
		b.WriteByte('\n')
	}
	return b.String()
}
