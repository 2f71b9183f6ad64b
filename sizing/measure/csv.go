package measure

import (
	"io"

	"capbank/sizing"
)

// MaxRows is the most data rows ParseCSV reads: a day of a hold logged
// once a tenth of a second is under 10^6 rows, and the three columns then
// take 24 MB.
const MaxRows = 1_000_000

// Log is a logged test of one cell: samples of the terminal voltage, and
// optionally the current, against time. ParseCSV reads one from CSV; the
// web may build one from an upload or JSON.
//
// The measurement functions check a log they are given: the slices must be
// of equal length (CurrentA may be nil), every number finite and TimeS
// strictly increasing.
type Log struct {
	// TimeS, in s, is each sample's time; any origin.
	TimeS []float64 `json:"time_s"`
	// VoltageV, in V, is the cell's terminal voltage at each sample.
	VoltageV []float64 `json:"voltage_v"`
	// CurrentA, in A, is the cell current at each sample, positive when the
	// cell discharges (as in a load profile). nil: the log has no current
	// column.
	CurrentA []float64 `json:"current_a,omitempty"`
}

// CSVError is the error ParseCSV returns: the one CSV error type of capbank
// (sizing.CSVError, which the profile parser returns too), with the line,
// the column and what is wrong.
type CSVError = sizing.CSVError

// Header names ParseCSV looks for, besides time_s.
const (
	voltageColumn = "voltage_v"
	currentColumn = "current_a"
)

// ParseCSV reads a measurement log from CSV (RFC 4180).
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
// Accepted around the data, as in sizing.ParseProfileCSV (both read with
// sizing.CSVReader): a UTF-8 byte-order mark, CRLF or LF line ends, spaces
// around header names and values, blank lines, and comment lines starting
// with # in the first character. At most MaxRows data rows are read.
//
// Every problem is returned as a *CSVError naming the line, and the column
// for a bad cell:
//
//	line 7, voltage_v: "abc" is not a number
//
// ParseCSV checks that the file is a log; whether the log suits a test
// method (reaches its voltage points, has a switch-on) is for the method to
// say.
func ParseCSV(r io.Reader) (*Log, error) {
	p := sizing.NewCSVReader(r, MaxRows)
	voltCol, currCol := -1, -1
	timeCol, err := p.Header("time_s and voltage_v", " (and current_a when the current is logged)", func(i int, name string) error {
		switch name {
		case voltageColumn:
			voltCol = i
		case currentColumn:
			currCol = i
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	if voltCol < 0 {
		return nil, p.MissingColumn("no voltage_v column; the header must name the cell's terminal voltage in V as voltage_v")
	}

	log := &Log{}
	if currCol >= 0 {
		log.CurrentA = []float64{}
	}
	for rec, err := range p.Rows() {
		if err != nil {
			return nil, err
		}
		t, _, err := p.Time(rec, timeCol)
		if err != nil {
			return nil, err
		}
		v, _, err := p.Number(rec, voltCol, voltageColumn)
		if err != nil {
			return nil, err
		}
		if currCol >= 0 {
			i, _, err := p.Number(rec, currCol, currentColumn)
			if err != nil {
				return nil, err
			}
			log.CurrentA = append(log.CurrentA, i)
		}
		log.TimeS = append(log.TimeS, t)
		log.VoltageV = append(log.VoltageV, v)
	}
	if err := p.TwoRows("a log needs at least two samples"); err != nil {
		return nil, err
	}
	return log, nil
}
