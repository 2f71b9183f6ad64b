package sizing

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
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

// ProfileCSVError is a problem with a profile CSV file: the line it is on
// (1-based, as an editor counts them), the column's header name when the
// problem is in one cell, and what is wrong in plain words.
type ProfileCSVError struct {
	Line    int
	Column  string
	Message string
	err     error // the underlying reader or encoding/csv error, if any
}

// Error reads "line 7, power_w: ..." for a cell, "line 1: ..." otherwise.
func (e *ProfileCSVError) Error() string {
	if e.Column != "" {
		return fmt.Sprintf("line %d, %s: %s", e.Line, e.Column, e.Message)
	}
	return fmt.Sprintf("line %d: %s", e.Line, e.Message)
}

// Unwrap returns the reader's or encoding/csv's own error, if there was one,
// so a caller can tell, for example, an upload that was too large from a
// malformed file.
func (e *ProfileCSVError) Unwrap() error { return e.err }

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
// a *ProfileCSVError naming the line, and the column for a bad cell:
//
//	line 7, power_w: "abc" is not a number
//
// ParseProfileCSV checks that the file is a profile, not that the profile
// suits a design: the ranges of the step values and durations are checked
// by Validate.
func ParseProfileCSV(r io.Reader) (*ProfileCSV, error) {
	br := bufio.NewReader(r)
	if b, err := br.Peek(3); err == nil && string(b) == "\ufeff" {
		br.Discard(3) // cannot fail: the three bytes are buffered
	}
	cr := csv.NewReader(br)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1 // counted here, to say which line and what the header has
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true

	p := profileReader{cr: cr}
	header, err := p.next()
	if err == io.EOF {
		return nil, &ProfileCSVError{Line: 1, Message: "no header row: the file is empty or holds only comments and blank lines; " +
			"the first row must name time_s and power_w or current_a"}
	}
	if err != nil {
		return nil, err
	}
	headerLine := p.line
	nCols := len(header)
	timeCol, valueCol, column, err := profileHeader(header, headerLine)
	if err != nil {
		return nil, err
	}

	// runs holds each new value and the time it starts; the steps are built
	// from it once the number of non-rest steps is known, so that all the
	// step values share one backing array.
	type run struct{ value, startS float64 }
	var runs []run
	var rows, lastLine int
	var prevS, lastIntervalS float64
	var prevText string
	for {
		rec, err := p.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if len(rec) != nCols {
			return nil, p.fieldCountError(rec, nCols, headerLine)
		}
		rows++
		if rows > ProfileCSVMaxRows {
			return nil, &ProfileCSVError{Line: p.line, Message: fmt.Sprintf(
				"more than %d data rows, the most capbank reads from one log; resample the log or split it", ProfileCSVMaxRows)}
		}
		t, tText, err := p.number(rec, timeCol, profileTimeColumn)
		if err != nil {
			return nil, err
		}
		if rows > 1 {
			if !(t > prevS) {
				return nil, &ProfileCSVError{Line: p.line, Column: profileTimeColumn, Message: fmt.Sprintf(
					"%s is not after %s on line %d; time_s must strictly increase", tText, prevText, lastLine)}
			}
			lastIntervalS = t - prevS
		}
		v, _, err := p.number(rec, valueCol, column)
		if err != nil {
			return nil, err
		}
		if len(runs) == 0 || runs[len(runs)-1].value != v {
			runs = append(runs, run{value: v, startS: t})
		}
		prevS, prevText, lastLine = t, tText, p.line
	}
	switch rows {
	case 0:
		return nil, &ProfileCSVError{Line: headerLine, Message: "no data rows after the header; need at least two rows to know the sample interval"}
	case 1:
		return nil, &ProfileCSVError{Line: lastLine, Message: "only one data row; need at least two rows to know the sample interval"}
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
		return nil, &ProfileCSVError{Line: lastLine, Column: profileTimeColumn, Message: fmt.Sprintf(
			"the log spans from %s to %s, too long a time to add up; check the time_s values",
			strconv.FormatFloat(runs[0].startS, 'g', -1, 64), prevText)}
	}
	return &ProfileCSV{Steps: steps, Column: column, Rows: rows, StartS: runs[0].startS, DurationS: total}, nil
}

// profileHeader finds the time and value columns in the header row.
func profileHeader(header []string, line int) (timeCol, valueCol int, column string, err error) {
	timeCol, valueCol = -1, -1
	seen := make(map[string]int, len(header))
	names := make([]string, len(header))
	for i, f := range header {
		name := strings.TrimSpace(f)
		names[i] = strconv.Quote(name)
		if name == "" {
			continue // an unnamed column, e.g. from a trailing comma, is ignored like any other
		}
		if j, dup := seen[name]; dup {
			return 0, 0, "", &ProfileCSVError{Line: line, Message: fmt.Sprintf(
				"column %s appears twice (columns %d and %d); keep one", name, j+1, i+1)}
		}
		seen[name] = i
		switch name {
		case profileTimeColumn:
			timeCol = i
		case profilePowerColumn, profileCurrentColumn:
			if valueCol >= 0 {
				return 0, 0, "", &ProfileCSVError{Line: line, Message: "has both power_w and current_a; " +
					"a profile is either power at the converter output or current at the bank terminals, so keep one column"}
			}
			valueCol, column = i, name
		}
	}
	found := strings.Join(names, ", ")
	if timeCol < 0 {
		return 0, 0, "", &ProfileCSVError{Line: line, Message: fmt.Sprintf(
			"no time_s column; the first row must be a header naming time_s and power_w or current_a (found %s)", found)}
	}
	if valueCol < 0 {
		return 0, 0, "", &ProfileCSVError{Line: line, Message: fmt.Sprintf(
			"no power_w or current_a column; the header must name one of them (found %s)", found)}
	}
	return timeCol, valueCol, column, nil
}

// profileReader wraps the csv.Reader: it skips lines that hold only spaces,
// turns every error into a *ProfileCSVError and remembers the line of the
// record last read.
type profileReader struct {
	cr   *csv.Reader
	line int // line where the record last read starts
}

// next returns the next record, or io.EOF after the last.
func (p *profileReader) next() ([]string, error) {
	for {
		rec, err := p.cr.Read()
		if err == io.EOF {
			return nil, io.EOF
		}
		if err != nil {
			return nil, p.readError(err)
		}
		p.line, _ = p.cr.FieldPos(0)
		// encoding/csv skips empty lines but returns a line of spaces as one
		// empty field. The header needs at least two columns, so a one-field
		// empty record can only be such a blank line.
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		return rec, nil
	}
}

func (p *profileReader) readError(err error) error {
	var pe *csv.ParseError
	if !errors.As(err, &pe) {
		// The reader itself failed; blame the line after the last one read.
		return &ProfileCSVError{Line: p.line + 1, Message: "could not be read: " + err.Error(), err: err}
	}
	var msg string
	switch {
	case errors.Is(pe.Err, csv.ErrBareQuote):
		msg = fmt.Sprintf(`a " inside an unquoted value (byte %d of the line); quote the whole value and double any " in it (RFC 4180 §2)`, pe.Column)
	case errors.Is(pe.Err, csv.ErrQuote):
		msg = fmt.Sprintf(`a quoted value is not closed, or has text after its closing " (byte %d of the line); see RFC 4180 §2`, pe.Column)
	default:
		msg = pe.Err.Error()
	}
	if pe.StartLine != pe.Line {
		msg += fmt.Sprintf("; the row starts on line %d", pe.StartLine)
	}
	return &ProfileCSVError{Line: pe.Line, Message: msg, err: err}
}

func (p *profileReader) fieldCountError(rec []string, want, headerLine int) error {
	msg := fmt.Sprintf("has %d fields but the header on line %d has %d; every row needs one field per header column", len(rec), headerLine, want)
	if strings.HasPrefix(rec[0], "#") {
		msg += "; a # comment must start in the first character of its line"
	}
	return &ProfileCSVError{Line: p.line, Message: msg}
}

// number parses the cell in column i of rec, named name, as a finite
// decimal number. It returns the number and the trimmed text.
func (p *profileReader) number(rec []string, i int, name string) (float64, string, error) {
	text := strings.TrimSpace(rec[i])
	v, problem := profileDecimal(text)
	if problem != "" {
		line, _ := p.cr.FieldPos(i) // the cell's own line, in case a quoted field before it spans lines
		return 0, text, &ProfileCSVError{Line: line, Column: name, Message: problem}
	}
	return v, text, nil
}

// profileDecimal parses text as a finite decimal number, or says why it is
// not one. strconv.ParseFloat alone would also take hexadecimal, digit
// separators ("1_000"), NaN and Inf, none of which a logged sample should be.
func profileDecimal(text string) (float64, string) {
	if text == "" {
		return 0, "is empty; every row needs a number here"
	}
	for i := 0; i < len(text); i++ {
		c := text[i]
		if ('0' <= c && c <= '9') || c == '.' || c == '-' || c == '+' || c == 'e' || c == 'E' {
			continue
		}
		switch {
		case profileNonFinite(text):
			return 0, fmt.Sprintf("%q is not a finite number", text)
		case c == ',':
			return 0, fmt.Sprintf("%q is not a number; use a decimal point, not a comma", text)
		}
		return 0, fmt.Sprintf("%q is not a number", text)
	}
	v, err := strconv.ParseFloat(text, 64)
	if err != nil {
		if errors.Is(err, strconv.ErrRange) {
			return 0, fmt.Sprintf("%q is too large (beyond ±1.8e308)", text)
		}
		return 0, fmt.Sprintf("%q is not a number", text)
	}
	return v, ""
}

func profileNonFinite(text string) bool {
	switch strings.ToLower(strings.TrimLeft(text, "+-")) {
	case "nan", "inf", "infinity":
		return true
	}
	return false
}
