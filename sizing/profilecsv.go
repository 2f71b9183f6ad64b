package sizing

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
)

// ProfileCSVMaxRows is the most data rows ParseProfileCSV reads. It matches
// the most steps a Load may hold, so a log with every row different still
// fits one Load.
const ProfileCSVMaxRows = 1_000_000

// ProfileCSV is a load profile read from a logged CSV file by
// ParseProfileCSV.
type ProfileCSV struct {
	// Steps are the piecewise-constant steps, in order. Each has exactly one
	// of PowerW or CurrentA (whichever Column names) or Rest set.
	Steps []Step
	// Column is the value column that was read: "power_w" or "current_a".
	Column string
	// Rows is the number of data rows read (not counting the header,
	// comment lines or blank lines).
	Rows int
	// StartS, in s, is the first row's time_s.
	StartS float64
	// DurationS, in s, is the total of the step durations.
	DurationS float64
}

// Header names ParseProfileCSV looks for.
const (
	profileTimeColumn    = "time_s"
	profilePowerColumn   = "power_w"
	profileCurrentColumn = "current_a"
)

// ParseProfileCSV reads a logged load profile from CSV (RFC 4180) and turns
// it into steps for a Load.
//
// The first row is a header. It must name time_s (s) and exactly one of
// power_w (W, at the converter output) or current_a (A, at the bank
// terminals). Other columns, named or unnamed, are ignored; Column in the
// result says which value column was used. Names are matched exactly (lower
// case) after trimming spaces; a name given twice is an error.
//
// Each following row is a sample at its time_s, held until the next row's
// time (zero-order hold). The last row has no next time, so it is held for
// the interval before it:
//
//	row i (i < n) holds v_i from t_i to t_(i+1)
//	row n         holds v_n from t_n to t_n + (t_n − t_(n−1))
//
// so at least two data rows are needed. Consecutive rows with exactly the
// same value become one step (their durations add up); a zero value becomes
// a rest step; a negative value (charging) stays negative.
//
// time_s must be finite and strictly increasing. Every time_s and value cell
// must be a finite decimal number such as 12, -0.5 or 1.2e3; an empty cell,
// NaN, Inf, a number beyond ±1.8e308, a hexadecimal number or a decimal comma
// is an error, never a guess. A value so small it rounds to zero (1e-400) is
// zero.
//
// Accepted around the data: a UTF-8 byte-order mark, CRLF or LF line ends,
// spaces around header names and values, blank lines, and comment lines
// starting with # in the first character. At most ProfileCSVMaxRows data
// rows are read.
//
// Every problem, including encoding/csv's own (a bad quote), is returned as
// a *CSVError naming the line, and the column for a bad cell:
//
//	line 7, power_w: "abc" is not a number
//
// ParseProfileCSV checks that the file is a profile, not that the profile
// suits a design: the ranges of the step values and durations are checked
// by Validate.
func ParseProfileCSV(r io.Reader) (*ProfileCSV, error) {
	p := NewCSVReader(r, ProfileCSVMaxRows)
	valueCol := -1
	var column string
	timeCol, err := p.Header("time_s and power_w or current_a", "", func(i int, name string) error {
		if name != profilePowerColumn && name != profileCurrentColumn {
			return nil
		}
		if valueCol >= 0 {
			return &CSVError{Line: p.Line(), Message: "has both power_w and current_a; " +
				"a profile is either power at the converter output or current at the bank terminals, so keep one column"}
		}
		valueCol, column = i, name
		return nil
	})
	if err != nil {
		return nil, err
	}
	if valueCol < 0 {
		return nil, p.MissingColumn("no power_w or current_a column; the header must name one of them")
	}

	// runs holds each new value and the time it starts; the steps are built
	// from it once the number of non-rest steps is known, so that all the
	// step values share one backing array.
	type run struct{ value, startS float64 }
	var runs []run
	var rows int
	var prevS, lastIntervalS float64
	var prevText string
	for rec, err := range p.Rows() {
		if err != nil {
			return nil, err
		}
		rows++
		t, tText, err := p.Time(rec, timeCol)
		if err != nil {
			return nil, err
		}
		if rows > 1 {
			lastIntervalS = t - prevS
		}
		v, _, err := p.Number(rec, valueCol, column)
		if err != nil {
			return nil, err
		}
		if len(runs) == 0 || runs[len(runs)-1].value != v {
			if len(runs) == cap(runs) {
				// Double: append grows a long slice by a quarter at a
				// time, which for a 10⁶-row log allocated five times
				// the runs it kept.
				runs = slices.Grow(runs, max(len(runs), 1024))
			}
			runs = append(runs, run{value: v, startS: t})
		}
		prevS, prevText = t, tText
	}
	if err := p.TwoRows("need at least two rows to know the sample interval"); err != nil {
		return nil, err
	}

	nValues := 0
	for _, ru := range runs {
		if ru.value != 0 {
			nValues++
		}
	}
	values := make([]float64, 0, nValues) // never grows, so pointers into it stay valid
	steps := make([]Step, len(runs))
	endS := prevS + lastIntervalS
	total := 0.0
	for i, ru := range runs {
		next := endS
		if i+1 < len(runs) {
			next = runs[i+1].startS
		}
		s := &steps[i]
		s.DurationS = next - ru.startS
		total += s.DurationS
		if ru.value == 0 {
			s.Rest = true
			continue
		}
		values = append(values, ru.value)
		if column == profilePowerColumn {
			s.PowerW = &values[len(values)-1]
		} else {
			s.CurrentA = &values[len(values)-1]
		}
	}
	if math.IsInf(total, 0) {
		return nil, &CSVError{Line: p.Line(), Column: profileTimeColumn, Message: fmt.Sprintf(
			"the log spans from %s to %s, too long a time to add up; check the time_s values",
			strconv.FormatFloat(runs[0].startS, 'g', -1, 64), prevText)}
	}
	return &ProfileCSV{Steps: steps, Column: column, Rows: rows, StartS: runs[0].startS, DurationS: total}, nil
}
