package sizing

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// MeasurementCSVMaxRows is the most data rows ParseMeasurementCSV reads: a
// day of a hold logged once a tenth of a second is under 10^6 rows, and the
// three columns then take 24 MB.
const MeasurementCSVMaxRows = 1_000_000

// MeasurementLog is a logged test of one cell: samples of the terminal
// voltage, and optionally the current, against time. ParseMeasurementCSV
// reads one from CSV; the web may build one from an upload or JSON.
//
// The measurement functions check a log they are given: the slices must be
// of equal length (CurrentA may be nil), every number finite and TimeS
// strictly increasing.
type MeasurementLog struct {
	// TimeS, in s, is each sample's time; any origin.
	TimeS []float64 `json:"time_s"`
	// VoltageV, in V, is the cell's terminal voltage at each sample.
	VoltageV []float64 `json:"voltage_v"`
	// CurrentA, in A, is the cell current at each sample, positive when the
	// cell discharges (as in a load profile). nil: the log has no current
	// column.
	CurrentA []float64 `json:"current_a,omitempty"`
}

// MeasurementCSVError is a problem with a measurement log CSV file: the line
// it is on (1-based, as an editor counts them), the column's header name
// when the problem is in one cell, and what is wrong in plain words.
type MeasurementCSVError struct {
	Line    int
	Column  string
	Message string
	err     error // the underlying reader or encoding/csv error, if any
}

// Error reads "line 7, voltage_v: ..." for a cell, "line 1: ..." otherwise.
func (e *MeasurementCSVError) Error() string {
	if e.Column != "" {
		return fmt.Sprintf("line %d, %s: %s", e.Line, e.Column, e.Message)
	}
	return fmt.Sprintf("line %d: %s", e.Line, e.Message)
}

// Unwrap returns the reader's or encoding/csv's own error, if there was one.
func (e *MeasurementCSVError) Unwrap() error { return e.err }

// Header names ParseMeasurementCSV looks for.
const (
	measureTimeColumn    = "time_s"
	measureVoltageColumn = "voltage_v"
	measureCurrentColumn = "current_a"
)

// ParseMeasurementCSV reads a measurement log from CSV (RFC 4180).
//
// The first row is a header. It must name time_s (s) and voltage_v (V, the
// cell's terminal voltage); current_a (A, positive for a discharge) is
// optional. Other columns, named or unnamed, are ignored. Names are matched
// exactly (lower case) after trimming spaces; a name given twice is an
// error. Each following row is one sample; at least two are needed.
//
// time_s must strictly increase. Every time_s, voltage_v and current_a cell
// must be a finite decimal number such as 12, -0.5 or 1.2e3; an empty cell,
// NaN, Inf, a number beyond ±1.8e308, a hexadecimal number or a decimal
// comma is an error, never a guess.
//
// Accepted around the data, as in ParseProfileCSV: a UTF-8 byte-order mark,
// CRLF or LF line ends, spaces around header names and values, blank lines,
// and comment lines starting with # in the first character. At most
// MeasurementCSVMaxRows data rows are read.
//
// Every problem is returned as a *MeasurementCSVError naming the line, and
// the column for a bad cell:
//
//	line 7, voltage_v: "abc" is not a number
//
// ParseMeasurementCSV checks that the file is a log; whether the log suits
// a test method (reaches its voltage points, has a switch-on) is for the
// method to say.
func ParseMeasurementCSV(r io.Reader) (*MeasurementLog, error) {
	br := bufio.NewReader(r)
	if b, err := br.Peek(3); err == nil && string(b) == "\ufeff" {
		br.Discard(3) // cannot fail: the three bytes are buffered
	}
	cr := csv.NewReader(br)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1 // counted here, to say which line and what the header has
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true

	// profileReader skips blank lines and numbers its errors; its
	// *ProfileCSVError is turned into a *MeasurementCSVError here.
	p := profileReader{cr: cr}
	header, err := p.next()
	if err == io.EOF {
		return nil, &MeasurementCSVError{Line: 1, Message: "no header row: the file is empty or holds only comments and blank lines; " +
			"the first row must name time_s and voltage_v (and current_a when the current is logged)"}
	}
	if err != nil {
		return nil, asMeasurementCSVError(err)
	}
	headerLine := p.line
	nCols := len(header)
	timeCol, voltCol, currCol, err := measurementHeader(header, headerLine)
	if err != nil {
		return nil, err
	}

	log := &MeasurementLog{}
	if currCol >= 0 {
		log.CurrentA = []float64{}
	}
	var lastLine int
	var prevText string
	for {
		rec, err := p.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, asMeasurementCSVError(err)
		}
		if len(rec) != nCols {
			return nil, asMeasurementCSVError(p.fieldCountError(rec, nCols, headerLine))
		}
		rows := len(log.TimeS) + 1
		if rows > MeasurementCSVMaxRows {
			return nil, &MeasurementCSVError{Line: p.line, Message: fmt.Sprintf(
				"more than %d data rows, the most capbank reads from one log; resample the log or split it", MeasurementCSVMaxRows)}
		}
		t, tText, err := p.number(rec, timeCol, measureTimeColumn)
		if err != nil {
			return nil, asMeasurementCSVError(err)
		}
		if rows > 1 && !(t > log.TimeS[rows-2]) {
			return nil, &MeasurementCSVError{Line: p.line, Column: measureTimeColumn, Message: fmt.Sprintf(
				"%s is not after %s on line %d; time_s must strictly increase", tText, prevText, lastLine)}
		}
		v, _, err := p.number(rec, voltCol, measureVoltageColumn)
		if err != nil {
			return nil, asMeasurementCSVError(err)
		}
		if currCol >= 0 {
			i, _, err := p.number(rec, currCol, measureCurrentColumn)
			if err != nil {
				return nil, asMeasurementCSVError(err)
			}
			log.CurrentA = append(log.CurrentA, i)
		}
		log.TimeS = append(log.TimeS, t)
		log.VoltageV = append(log.VoltageV, v)
		prevText, lastLine = tText, p.line
	}
	switch len(log.TimeS) {
	case 0:
		return nil, &MeasurementCSVError{Line: headerLine, Message: "no data rows after the header; a log needs at least two samples"}
	case 1:
		return nil, &MeasurementCSVError{Line: lastLine, Message: "only one data row; a log needs at least two samples"}
	}
	return log, nil
}

// asMeasurementCSVError turns the *ProfileCSVError of the shared CSV reader
// into a *MeasurementCSVError with the same line, column and message.
func asMeasurementCSVError(err error) error {
	var pe *ProfileCSVError
	if errors.As(err, &pe) {
		return &MeasurementCSVError{Line: pe.Line, Column: pe.Column, Message: pe.Message, err: pe.err}
	}
	return err
}

// measurementHeader finds the time, voltage and (optional, -1 when absent)
// current columns in the header row.
func measurementHeader(header []string, line int) (timeCol, voltCol, currCol int, err error) {
	timeCol, voltCol, currCol = -1, -1, -1
	seen := make(map[string]int, len(header))
	names := make([]string, len(header))
	for i, f := range header {
		name := strings.TrimSpace(f)
		names[i] = strconv.Quote(name)
		if name == "" {
			continue // an unnamed column, e.g. from a trailing comma, is ignored like any other
		}
		if j, dup := seen[name]; dup {
			return 0, 0, 0, &MeasurementCSVError{Line: line, Message: fmt.Sprintf(
				"column %s appears twice (columns %d and %d); keep one", name, j+1, i+1)}
		}
		seen[name] = i
		switch name {
		case measureTimeColumn:
			timeCol = i
		case measureVoltageColumn:
			voltCol = i
		case measureCurrentColumn:
			currCol = i
		}
	}
	found := strings.Join(names, ", ")
	if timeCol < 0 {
		return 0, 0, 0, &MeasurementCSVError{Line: line, Message: fmt.Sprintf(
			"no time_s column; the first row must be a header naming time_s and voltage_v (found %s)", found)}
	}
	if voltCol < 0 {
		return 0, 0, 0, &MeasurementCSVError{Line: line, Message: fmt.Sprintf(
			"no voltage_v column; the header must name the cell's terminal voltage in V as voltage_v (found %s)", found)}
	}
	return timeCol, voltCol, currCol, nil
}
