package sizing

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"iter"
	"strconv"
	"strings"
)

// CSVError is a problem with a logged CSV file capbank reads (a load
// profile by ParseProfileCSV, a measurement log by measure.ParseCSV): the
// line it is on (1-based, as an editor counts them), the column's header
// name when the problem is in one cell, and what is wrong in plain words.
type CSVError struct {
	Line    int
	Column  string
	Message string
	err     error // the underlying reader or encoding/csv error, if any
}

// Error reads "line 7, power_w: ..." for a cell, "line 1: ..." otherwise.
func (e *CSVError) Error() string {
	if e.Column != "" {
		return fmt.Sprintf("line %d, %s: %s", e.Line, e.Column, e.Message)
	}
	return fmt.Sprintf("line %d: %s", e.Line, e.Message)
}

// Unwrap returns the reader's or encoding/csv's own error, if there was one,
// so a caller can tell, for example, an upload that was too large from a
// malformed file.
func (e *CSVError) Unwrap() error { return e.err }

// CSVReader reads a logged CSV file (RFC 4180) row by row, the one way every
// capbank log is read: a header row of column names, then one row a sample,
// with time_s strictly increasing.
//
// Accepted around the data: a UTF-8 byte-order mark, CRLF or LF line ends,
// spaces around header names and values, blank lines, and comment lines
// starting with # in the first character. Every problem, including
// encoding/csv's own (a bad quote), is a *CSVError naming the line, and the
// column for a bad cell.
type CSVReader struct {
	cr         *csv.Reader
	line       int // line where the record last read starts, a blank one too
	headerLine int
	rowLine    int    // line of the last data row
	fields     int    // the header's field count
	found      string // the header's names, quoted, for a message
	rows       int    // data rows read
	maxRows    int
	prevTime   float64 // the last row's time_s, its text and its line
	prevText   string
	prevLine   int
}

// NewCSVReader reads from r, at most maxRows data rows.
func NewCSVReader(r io.Reader, maxRows int) *CSVReader {
	br := bufio.NewReader(r)
	if b, err := br.Peek(3); err == nil && string(b) == "\ufeff" {
		br.Discard(3) // cannot fail: the three bytes are buffered
	}
	cr := csv.NewReader(br)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1 // counted here, to say which line and what the header has
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	return &CSVReader{cr: cr, maxRows: maxRows}
}

// Line is the line of the header until a data row is read, then of the
// last data row read.
func (r *CSVReader) Line() int {
	if r.rows == 0 {
		return r.headerLine
	}
	return r.rowLine
}

// Header reads the header row and returns the index of time_s, the column
// every log has. It calls each with every other column's name, trimmed of
// spaces, and its index; an unnamed column is skipped and a name given
// twice is an error, and so is an error from each, which stops the
// reading. need says what the header must name, time_s first ("time_s and
// voltage_v"), for the messages when there is no header (with more added)
// or no time_s.
func (r *CSVReader) Header(need, more string, each func(i int, name string) error) (int, error) {
	header, err := r.next()
	if err == io.EOF {
		return 0, &CSVError{Line: 1, Message: "no header row: the file is empty or holds only comments and blank lines; " +
			"the first row must name " + need + more}
	}
	if err != nil {
		return 0, err
	}
	r.headerLine, r.fields = r.line, len(header)
	seen := make(map[string]int, len(header))
	names := make([]string, len(header))
	timeCol := -1
	for i, f := range header {
		name := strings.TrimSpace(f)
		names[i] = strconv.Quote(name)
		if name == "" {
			continue // an unnamed column, e.g. from a trailing comma, is ignored like any other
		}
		if j, dup := seen[name]; dup {
			return 0, &CSVError{Line: r.line, Message: fmt.Sprintf(
				"column %s appears twice (columns %d and %d); keep one", name, j+1, i+1)}
		}
		seen[name] = i
		if name == "time_s" {
			timeCol = i
			continue
		}
		if err := each(i, name); err != nil {
			return 0, err
		}
	}
	r.found = strings.Join(names, ", ")
	if timeCol < 0 {
		return 0, r.MissingColumn("no time_s column; the first row must be a header naming " + need)
	}
	return timeCol, nil
}

// MissingColumn is the error for a column the header lacks: msg, and the
// names the header has.
func (r *CSVReader) MissingColumn(msg string) error {
	return &CSVError{Line: r.headerLine, Message: fmt.Sprintf("%s (found %s)", msg, r.found)}
}

// Rows are the data rows after the header, each with one field per header
// column; a problem ends them, as the one error given. A row is reused for
// the next, so keep what it holds, not the row.
func (r *CSVReader) Rows() iter.Seq2[[]string, error] {
	return func(yield func([]string, error) bool) {
		for {
			rec, err := r.row()
			if err == io.EOF {
				return
			}
			if !yield(rec, err) || err != nil {
				return
			}
		}
	}
}

// row returns the next data row, or io.EOF after the last.
func (r *CSVReader) row() ([]string, error) {
	rec, err := r.next()
	if err != nil {
		return nil, err
	}
	if len(rec) != r.fields {
		msg := fmt.Sprintf("has %d fields but the header on line %d has %d; every row needs one field per header column", len(rec), r.headerLine, r.fields)
		if strings.HasPrefix(rec[0], "#") {
			msg += "; a # comment must start in the first character of its line"
		}
		return nil, &CSVError{Line: r.line, Message: msg}
	}
	r.rows++
	if r.rows > r.maxRows {
		return nil, &CSVError{Line: r.line, Message: fmt.Sprintf(
			"more than %d data rows, the most capbank reads from one log; resample the log or split it", r.maxRows)}
	}
	r.rowLine = r.line
	return rec, nil
}

// Number parses the cell in column i of rec, named name, as a finite
// decimal number such as 12, -0.5 or 1.2e3; an empty cell, NaN, Inf, a
// number beyond ±1.8e308, a hexadecimal number or a decimal comma is an
// error, never a guess. It returns the number and the trimmed text.
func (r *CSVReader) Number(rec []string, i int, name string) (float64, string, error) {
	text := strings.TrimSpace(rec[i])
	v, problem := csvDecimal(text)
	if problem != "" {
		line, _ := r.cr.FieldPos(i) // the cell's own line, in case a quoted field before it spans lines
		return 0, text, &CSVError{Line: line, Column: name, Message: problem}
	}
	return v, text, nil
}

// Time parses the time_s cell in column i of rec, as Number, and checks
// that it is after the time of the row before.
func (r *CSVReader) Time(rec []string, i int) (float64, string, error) {
	t, text, err := r.Number(rec, i, "time_s")
	if err != nil {
		return 0, text, err
	}
	if r.rows > 1 && !(t > r.prevTime) {
		return 0, text, &CSVError{Line: r.line, Column: "time_s", Message: fmt.Sprintf(
			"%s is not after %s on line %d; time_s must strictly increase", text, r.prevText, r.prevLine)}
	}
	r.prevTime, r.prevText, r.prevLine = t, text, r.line
	return t, text, nil
}

// TwoRows returns a *CSVError unless at least two data rows were read;
// why says what the second row is for.
func (r *CSVReader) TwoRows(why string) error {
	switch r.rows {
	case 0:
		return &CSVError{Line: r.Line(), Message: "no data rows after the header; " + why}
	case 1:
		return &CSVError{Line: r.Line(), Message: "only one data row; " + why}
	}
	return nil
}

// next returns the next record, or io.EOF after the last. It skips lines
// that hold only spaces.
func (r *CSVReader) next() ([]string, error) {
	for {
		rec, err := r.cr.Read()
		if err == io.EOF {
			return nil, io.EOF
		}
		if err != nil {
			return nil, r.readError(err)
		}
		r.line, _ = r.cr.FieldPos(0)
		// encoding/csv skips empty lines but returns a line of spaces as one
		// empty field. The header needs at least two columns, so a one-field
		// empty record can only be such a blank line.
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		return rec, nil
	}
}

func (r *CSVReader) readError(err error) error {
	var pe *csv.ParseError
	if !errors.As(err, &pe) {
		// The reader itself failed; blame the line after the last one read.
		return &CSVError{Line: r.line + 1, Message: "could not be read: " + err.Error(), err: err}
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
	return &CSVError{Line: pe.Line, Message: msg, err: err}
}

// csvDecimal parses text as a finite decimal number, or says why it is not
// one. strconv.ParseFloat alone would also take hexadecimal, digit
// separators ("1_000"), NaN and Inf, none of which a logged sample should
// be.
func csvDecimal(text string) (float64, string) {
	if text == "" {
		return 0, "is empty; every row needs a number here"
	}
	for i := 0; i < len(text); i++ {
		c := text[i]
		if ('0' <= c && c <= '9') || c == '.' || c == '-' || c == '+' || c == 'e' || c == 'E' {
			continue
		}
		switch {
		case csvNonFinite(text):
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

func csvNonFinite(text string) bool {
	switch strings.ToLower(strings.TrimLeft(text, "+-")) {
	case "nan", "inf", "infinity":
		return true
	}
	return false
}
